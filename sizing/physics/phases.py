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

    Parameters
    ----------
    volume : float or ndarray
        V, batch volume of the dispersion [m**3].
    dispersed_fraction : float or ndarray
        phi, volume fraction of drops or bubbles [-].

    Returns
    -------
    (V_c, V_d) : tuple of float, or of ndarray for array input
        ``V (1 - phi)`` and ``V phi`` [m**3].

    Raises
    ------
    None.

    Notes
    -----
    ``V_c = (1 - phi) V``, ``V_d = phi V``; valid for 0 <= phi < 1.

    Examples
    --------
    >>> phase_volumes(2.0, 0.3)
    (1.4, 0.6)

    References
    ----------
    1. Walstra, P., Physical Chemistry of Foods, Marcel Dekker (2003) (volume fraction and
       phase volumes of emulsions) [from memory].
    """
    v = np.asarray(volume, dtype=float)
    phi = np.asarray(dispersed_fraction, dtype=float)
    vc, vd = v * (1.0 - phi), v * phi
    return (float(vc), float(vd)) if vc.ndim == 0 else (vc, vd)


def dispersed_uptake(system: str, continuous: str, partition_coefficient):
    """Return ``u``, the dispersed phase's monomer concentration over the continuous one [-].

    Parameters
    ----------
    system : str
        ``"emulsion"`` or ``"foam"``.
    continuous : str
        ``"water"`` (O/W) or ``"oil"`` (W/O).
    partition_coefficient : float or ndarray
        P = c_oil / c_water of the monomer, >= 0 [-].

    Returns
    -------
    float or ndarray
        u [-]: P for O/W, 1/P for W/O, 0 for a foam.

    Raises
    ------
    InputError
        For a negative P, or P = 0 in a W/O emulsion (the surfactant could not be dosed into
        the continuous oil).

    Notes
    -----
    P is defined oil over water whatever the continuous phase, so the drops hold ``u c``;
    constant below the CMC [1, 2].

    Examples
    --------
    >>> dispersed_uptake("emulsion", "water", 35.0), dispersed_uptake("foam", "water", 35.0)
    (35.0, 0.0)
    >>> round(dispersed_uptake("emulsion", "oil", 35.0), 12)
    0.028571428571

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partitioning of ethoxylated nonionics between alkanes and water).
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
    """Return the names of (continuous, dispersed) phases: 'water', 'oil' or 'gas'.

    Parameters
    ----------
    system : str
        ``"emulsion"`` or ``"foam"``.
    continuous : str
        ``"water"`` or ``"oil"`` (ignored for a foam, whose liquid is water).

    Returns
    -------
    (str, str)

    Raises
    ------
    None.

    Notes
    -----
    A foam is gas in water; an emulsion is O/W or W/O (common practice).

    Examples
    --------
    >>> phase_names("emulsion", "oil"), phase_names("foam", "water")
    (('oil', 'water'), ('water', 'gas'))

    References
    ----------
    1. Walstra, P., Physical Chemistry of Foods, Marcel Dekker (2003) [from memory].
    """
    if system == "foam":
        return "water", "gas"
    return ("water", "oil") if continuous == "water" else ("oil", "water")
