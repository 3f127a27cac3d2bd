"""What-if tables: the dose over a grid of one or two case inputs, in one vectorised solve.

A variation is written ``NAME=LOW..HIGH:N``: ``d32=1um..5um:9``, ``drops.d32=1 um..5 um:9``,
``temperature=20..60 degC:5`` (a unit on one end applies to both), ``coverage=0.6..0.9:4``.
NAME is a TOML path of any numeric case field (``surfactant.cmc``) or a short alias
(:data:`ALIASES`).  The grid is the outer product of the variations; every grid point is one
element of the arrays passed to :func:`sizing.model.solve`, so the sweep is a single call.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

import numpy as np

from .. import model
from ..errors import InputError
from ..units import DIMENSIONS, parse
from .plan import auto_increment, charge_for_dose

ALIASES = {
    "d32": "drops.d32",
    "dispersed_fraction": "batch.dispersed_fraction", "phi": "batch.dispersed_fraction",
    "volume": "batch.volume", "mass": "batch.mass",
    "coverage": "target.coverage", "tension": "target.tension",
    "free_concentration": "target.free_concentration",
    "temperature": "batch.temperature", "margin": "target.margin",
    "cmc": "surfactant.cmc", "partition_coefficient": "surfactant.partition_coefficient",
}

# dimensions of fields a case may leave out but a sweep may set
EXTRA_DIMENSIONS = {"drops.d32": "length", "target.coverage": "dimensionless",
                    "target.tension": "tension", "target.free_concentration": "concentration"}

_SPEC = re.compile(r"^\s*([A-Za-z_][\w.\[\]]*)\s*=\s*(.+?)\s*\.\.\s*(.+?)\s*:\s*(\d+)\s*(?::\s*(log|lin))?\s*$")
_NUM = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")
MAX_POINTS = 1_000_000


@dataclass(frozen=True)
class Variation:
    """One swept input: ``path``, values in SI and in the display ``unit``."""

    path: str
    name: str
    si: np.ndarray
    shown: np.ndarray
    unit: str

    @property
    def header(self) -> str:
        if self.path.startswith("blend.component["):  # which component: blend.component[0].fraction
            return f"{self.path[len('blend.'):]} [{self.unit or '-'}]"
        return f"{self.path.split('.')[-1]} [{self.unit or '-'}]"


def _dimension(case, path: str) -> str:
    q = case.quantities()
    if path in q:
        return q[path].dimension
    if path in EXTRA_DIMENSIONS:
        return EXTRA_DIMENSIONS[path]
    known = sorted(set(q) | set(EXTRA_DIMENSIONS))
    twins = {"batch.volume": "batch.mass", "batch.mass": "batch.volume"}
    if path in twins and twins[path] in q:
        other = twins[path]
        raise InputError(f"--vary {path}: this case gives the batch size as {other.split('.')[1]} "
                         f"({other}); vary {other.split('.')[1]} instead, or give the case a {path.split('.')[1]}")

    close = difflib.get_close_matches(path, known + list(ALIASES), n=1, cutoff=0.6)
    if close:
        raise InputError(f"--vary {path}: not a numeric field of this case; did you mean {close[0]!r}?")
    raise InputError(f"--vary {path}: not a numeric field of this case; expected one of "
                     f"{', '.join(sorted(ALIASES))} or a path such as {', '.join(known[:6])}, ...")


def parse_path(spec: str) -> str:
    """Return the case path a ``NAME=LOW..HIGH:N`` text varies (its alias resolved), or '' if malformed.

    >>> parse_path("d32=1um..5um:9"), parse_path("surfactant.cmc=1..2 mM:3")
    ('drops.d32', 'surfactant.cmc')
    """
    m = _SPEC.match(spec)
    return ALIASES.get(m.group(1), m.group(1)) if m else ""


def parse_vary(spec: str, case) -> Variation:
    """Parse ``NAME=LOW..HIGH:N[:log]`` into a :class:`Variation` (units read from LOW/HIGH text).

    ``:log`` spaces the N points evenly in the logarithm (sizes and concentrations that span
    decades); the default is even linear spacing.

    Raises
    ------
    InputError
        A malformed spec, an unknown field, a unit of the wrong kind, or N < 2.
    """
    m = _SPEC.match(spec)
    if not m:
        raise InputError(f"--vary: expected NAME=LOW..HIGH:N[:log] such as 'd32=1um..5um:9' or "
                         f"'d32=0.5um..20um:9:log', got {spec!r}")
    name, lo_text, hi_text, n_text, spacing = m.groups()
    path = ALIASES.get(name, name)
    if "." not in path:
        raise InputError(f"--vary {name}: unknown name; expected one of {', '.join(sorted(ALIASES))} "
                         "or a TOML path such as surfactant.cmc")
    n = int(n_text)
    if n < 2 or n > 10_000:
        raise InputError(f"--vary {name}: expected N from 2 to 10000 grid points, got {n}")
    dim = _dimension(case, path)
    mlo, mhi = _NUM.match(lo_text), _NUM.match(hi_text)
    if not mlo or not mhi:
        raise InputError(f"--vary {name}: expected numbers with a unit such as '1 um..5 um', got {spec!r}")
    ulo, uhi = mlo.group(2), mhi.group(2)
    unit = uhi or ulo
    if ulo and uhi and ulo != uhi:
        lo_si = parse(lo_text, f"--vary {name}", dim)
        hi_si = parse(hi_text, f"--vary {name}", dim)
        shown_unit = DIMENSIONS[dim][1] if dim != "temperature" else "K"
        lo_show, hi_show = lo_si, hi_si
    else:
        lo_si = parse(f"{mlo.group(1)} {unit}".strip(), f"--vary {name}", dim)
        hi_si = parse(f"{mhi.group(1)} {unit}".strip(), f"--vary {name}", dim)
        shown_unit = unit if unit else DIMENSIONS[dim][1]
        lo_show, hi_show = float(mlo.group(1)), float(mhi.group(1))
        if unit == "%" and dim == "dimensionless":
            shown_unit = "%"
    if not lo_si < hi_si:
        raise InputError(f"--vary {name}: expected LOW < HIGH, got {lo_text!r}..{hi_text!r}")
    if spacing == "log":
        if not (lo_si > 0 and lo_show > 0):
            raise InputError(f"--vary {name}: a log grid needs LOW > 0, got {lo_text!r}")
        return Variation(path=path, name=name, si=np.geomspace(lo_si, hi_si, n),
                         shown=np.geomspace(lo_show, hi_show, n), unit=shown_unit)
    return Variation(path=path, name=name, si=np.linspace(lo_si, hi_si, n),
                     shown=np.linspace(lo_show, hi_show, n), unit=shown_unit)


def sweep(case, specs: list[str]):
    """Return a pandas DataFrame: one row a grid point, units in the column headers.

    Parameters
    ----------
    case : a validated case
    specs : one or two ``NAME=LOW..HIGH:N`` texts

    Notes
    -----
    The columns of :func:`sweep_columns`, each kept as its own array (no copy of the table).
    """
    import pandas as pd  # deferred: pandas is heavy and only the table needs it

    # copy=False: the columns stay separate arrays (pandas would otherwise stack a 1e6-row grid
    # into one block, a copy of the whole table)
    return pd.DataFrame(sweep_columns(case, specs), copy=False)


def sweep_columns(case, specs: list[str]) -> dict[str, np.ndarray]:
    """Return the sweep table as columns: header (units in brackets) -> one array over the grid.

    Parameters
    ----------
    case : a validated case
    specs : one or two ``NAME=LOW..HIGH:N`` texts

    Notes
    -----
    The grid is the ravelled outer product of the variations (the last varies fastest).  The
    columns after the inputs are the dose for the target (nan where the target is not
    reachable), the charge (dose x (1 + margin), rounded up to the case's increment or the
    automatic step), the equilibrium state for the target, the area and the CMC ceiling.
    Without pandas, so a large grid streams to CSV without that import.
    """
    if not 1 <= len(specs) <= 2:
        raise InputError(f"--vary: expected one or two variations, got {len(specs)}")
    vs = [parse_vary(s, case) for s in specs]
    if len(vs) == 2 and vs[0].path == vs[1].path:
        raise InputError(f"--vary: {vs[0].path} is given twice")
    if np.prod([v.si.size for v in vs]) > MAX_POINTS:
        raise InputError(f"--vary: at most {MAX_POINTS} grid points")
    grids = np.meshgrid(*[v.si for v in vs], indexing="ij")
    shown = np.meshgrid(*[v.shown for v in vs], indexing="ij")
    flat = {v.path: g.ravel() for v, g in zip(vs, grids)}
    targets = {p: a for p, a in flat.items() if p.startswith("target.") and p != "target.margin"}
    others = {p: a for p, a in flat.items() if p not in targets}
    inputs = model.case_inputs(case, others)
    if len(targets) > 1:
        raise InputError("--vary: vary one target at a time (coverage, tension or free_concentration)")
    for p, a in targets.items():
        inputs = inputs.with_values(target_kind=p.split(".", 1)[1], target_value=a)
    sol = model.solve(inputs)
    size = grids[0].size
    margin = np.broadcast_to(np.asarray(inputs.margin, dtype=float), (size,))
    inc = case.recommendation.increment
    dose_kg = np.broadcast_to(np.asarray(sol.kg_product, dtype=float), (size,))
    increment = inc.si if inc is not None else auto_increment(dose_kg * (1 + margin))
    data = {v.header: s.ravel() for v, s in zip(vs, shown)}

    def col(x):
        a = np.asarray(x, dtype=float)
        return a if a.shape == (size,) else np.broadcast_to(a, (size,)).copy()

    data.update({
        "feasible": np.broadcast_to(sol.feasible, (size,)).copy(),
        "dose active [kg]": col(sol.kg_active),
        "dose product [kg]": col(sol.kg_product),
        "charge product [kg]": col(charge_for_dose(dose_kg, margin, increment)),
        "dose [mol]": col(sol.dose_mol),
        "product [wt% of batch]": col(sol.wt_percent),
        "free monomer [mM]": col(sol.state.free_concentration),
        "equilibrium coverage [-]": col(sol.state.coverage),
        "equilibrium tension [mN/m]": col(sol.tension) * 1e3,
        "max coverage [-]": col(sol.max_coverage),
        "interfacial area [m**2]": col(sol.area),
    })
    if "drops.d32" not in flat:
        data["d32 [um]"] = col(sol.d32) * 1e6
    elif getattr(case, "scaleup", None) is not None:  # the lab d32 swept; the dose uses the plant's
        data["plant d32 [um]"] = col(sol.d32) * 1e6
    data["reason"] = infeasible_reasons(np.broadcast_to(sol.feasible, (size,)), inputs.target_kind,
                                        np.broadcast_to(np.asarray(inputs.cmc, dtype=float), (size,)))
    return data


#: why a sweep row's target is not reachable, by target kind (no commas: the CSV cells are unquoted)
REASONS = {
    "coverage": "coverage target above the largest coverage below the CMC (see max coverage)",
    "tension": "tension target below the tension at the CMC",
    "free_concentration": "free monomer target above the CMC",
}
NO_CMC_REASON = "target reachable only at full coverage (no CMC: the equation of state never gets there)"


def infeasible_reasons(feasible: np.ndarray, target_kind: str, cmc: np.ndarray) -> np.ndarray:
    """Return the ``reason`` column: empty where the target is met, else why it is not.

    An object array whose cells share a handful of strings (8 bytes a row, whatever the grid).

    >>> list(infeasible_reasons(np.array([True, False, False]), "coverage", np.array([1.0, 1.0, np.inf])))
    ['', 'coverage target above the largest coverage below the CMC (see max coverage)', 'target reachable only at full coverage (no CMC: the equation of state never gets there)']
    """
    out = np.full(feasible.shape, "", dtype=object)
    bad = ~np.asarray(feasible, dtype=bool)
    if bad.any():
        finite = np.isfinite(cmc)
        out[bad & finite] = REASONS.get(target_kind, "target not reachable below the CMC")
        out[bad & ~finite] = NO_CMC_REASON
    return out


def scaleup_note(case, paths: list[str]) -> str | None:
    """Return the note for a sweep over the lab d32 of a case whose ``[scaleup]`` sets the plant d32.

    A power law gives the plant d32 from the plant's process variable alone, so the dose is flat
    along drops.d32; a stirred-tank rule scales the lab d32, so the dose follows the plant d32.
    """
    s = getattr(case, "scaleup", None)
    if s is None or "drops.d32" not in paths:
        return None
    if s.method == "power_law":
        variable = (s.variable or "process variable").replace("_", " ")
        return (f"note: the dose does not change with d32 [um] in this case: its [scaleup] sets the plant "
                f"d32 the dose uses from the plant's {variable} (a power law through the lab points), "
                "not from drops.d32; vary scaleup.plant to see the dose move with the drop size")
    return ("note: d32 [um] is the lab d32 here; this case's [scaleup] (stirred tank, rule "
            f"{s.rule}) turns it into the plant d32 the dose uses (column 'plant d32 [um]')")
