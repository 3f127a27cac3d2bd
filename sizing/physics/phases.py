"""Phase volumes, partitioning of the monomer and the micelle ceiling (pseudo-phase model).

The free monomer concentration ``c`` [mol/m**3] is that of the continuous phase, where the
surfactant is dosed.  The partition coefficient ``P = c_oil / c_water`` [-] of the monomer holds
whatever the continuous phase is, so the dispersed phase holds ``u c`` with the uptake factor

- O/W emulsion: ``u = P`` (oil drops in water),
- W/O emulsion: ``u = 1/P`` (water drops in oil),
- foam: ``u = 0`` (gas holds no surfactant).

Above the CMC the monomer concentration stays at the CMC and the rest forms micelles in the
continuous phase; the oil term is capped with it (the oil sees only monomer).  Without a CMC
(a protein, a polymer) there is no ceiling: pass ``cmc = inf``.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

SYSTEMS = ("emulsion", "foam")
CONTINUOUS = ("water", "oil")


def phase_volumes(volume, dispersed_fraction):
    """Return ``(V_c, V_d)`` [m**3]: continuous and dispersed volumes of the batch.

    >>> phase_volumes(2.0, 0.3)
    (1.4, 0.6)
    """
    v = np.asarray(volume, dtype=float)
    phi = np.asarray(dispersed_fraction, dtype=float)
    vc, vd = v * (1.0 - phi), v * phi
    return (float(vc), float(vd)) if vc.ndim == 0 else (vc, vd)


def dispersed_uptake(system: str, continuous: str, partition_coefficient):
    """Return ``u``, the dispersed phase's monomer concentration over the continuous one [-].

    Raises
    ------
    InputError
        For a W/O emulsion whose surfactant does not dissolve in oil (P = 0): it cannot be
        dosed in the continuous oil.
    """
    p = np.asarray(partition_coefficient, dtype=float)
    if np.any(p < 0):
        raise InputError(
            f"surfactant.partition_coefficient: expected a number >= 0 (c_oil/c_water), got {float(np.min(p))!r}"
        )
    if system == "foam":
        return np.zeros_like(p) if p.ndim else 0.0
    if continuous == "water":
        return p if p.ndim else float(p)
    if np.any(p == 0):
        raise InputError(
            "surfactant.partition_coefficient: 0 means the surfactant does not dissolve in oil, so it "
            "cannot be dosed into the continuous oil of a W/O emulsion; expected a value > 0 "
            "(oil-soluble emulsifiers for W/O typically have P >> 1)"
        )
    return 1.0 / p if p.ndim else 1.0 / float(p)


def phase_names(system: str, continuous: str) -> tuple[str, str]:
    """Return the names of (continuous, dispersed) phases: 'water', 'oil' or 'gas'."""
    if system == "foam":
        return "water", "gas"
    return ("water", "oil") if continuous == "water" else ("oil", "water")
