"""Partition coefficient of the monomer from paired oil and water equilibrium concentrations.

Below the CMC the monomer distributes at a constant ratio ``P = c_oil / c_water``.  Above it the
water's total concentration keeps rising (micelles) while the oil, in equilibrium with the
monomer only, stays near ``P cmc``: the apparent ratio falls as ``P cmc / c_water``.  So::

    ln c_oil = ln P + min(ln c_water, ln cmc)

``P`` is the geometric mean of the ratios of the points below the CMC with a Student-t
interval on ``ln(c_oil/c_water)``.  The CMC is given (``cmc``) or fitted as the breakpoint of the
model above (``scipy.optimize.least_squares``), kept only if it beats a constant ratio by more
than 2 AICc units.  Points above the CMC are flagged and not used for ``P``.  Oil
concentrations of zero (an ionic surfactant against an alkane) switch to a least-squares line
through the origin.

References
----------
1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
   surfactant added past the CMC stays in the water.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares
from scipy.special import stdtrit  # Student t quantile, stdtrit(dof, q) = scipy.stats.t.ppf(q, dof)

from ..errors import InputError
from ..labcsv import read_lab_csv

CONFIDENCE = 0.95
MIN_BELOW = 2
AICC_MARGIN = 2.0


@dataclass(frozen=True)
class PartitionFit:
    """Hold the fitted partition coefficient, its interval, the CMC used and per-row flags.

    Attributes
    ----------
    path : str
        The file read.
    partition_coefficient : float
        P = c_oil/c_water of the monomer [-].
    interval : (float, float)
        95 % interval of P [-].
    cmc : float or None
        CMC used in the water [mol/m**3], None without one.
    cmc_source : str
        ``"given"``, ``"fitted"`` or ``"none"``.
    rows : list of dict
        One per CSV row: concentrations [mol/m**3], ``ratio`` [-], ``above_cmc``, ``flag``.
    method : str
        How P was estimated.
    notes : tuple of str

    Examples
    --------
    >>> PartitionFit("p.csv", 35.0, (30.0, 40.0), None, "none", [], "m", ()).partition_coefficient
    35.0

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partition of ethoxylated nonionics between alkanes and water).
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002) (AICc) [from memory].
    """

    path: str
    partition_coefficient: float
    interval: tuple
    cmc: float | None
    cmc_source: str  # "given", "fitted", "none"
    rows: list
    method: str
    notes: tuple


def log_ratio_estimate(c_water, c_oil):
    """Return ``(P, (low, high))``: the geometric-mean ratio and its 95 % Student-t interval.

    Parameters
    ----------
    c_water, c_oil : array_like
        Paired concentrations below the CMC, > 0 [mol/m**3].

    Returns
    -------
    (float, (float, float))
        P [-] and its interval [-] (nan with one point).

    Raises
    ------
    None.

    Notes
    -----
    ``ln P = mean(ln(c_oil/c_water))``, interval ``exp(mean +- t s / sqrt(n))`` with Student's t
    on n - 1 degrees of freedom: the ratio is constant below the CMC [1].

    Examples
    --------
    >>> p, (lo, hi) = log_ratio_estimate([1.0, 2.0, 4.0], [2.0, 4.4, 7.6])
    >>> round(p, 12), round(lo, 12), round(hi, 12)
    (2.029560923261, 1.687102039285, 2.441534326504)

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partition of ethoxylated nonionics between alkanes and water).
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002) (AICc) [from memory].
    """
    y = np.log(np.asarray(c_oil, dtype=float) / np.asarray(c_water, dtype=float))
    m = float(np.mean(y))
    if len(y) < 2:
        return math.exp(m), (math.nan, math.nan)
    half = float(stdtrit(len(y) - 1, 0.5 + CONFIDENCE / 2)) * float(np.std(y, ddof=1)) / math.sqrt(len(y))
    return math.exp(m), (math.exp(m - half), math.exp(m + half))


def origin_line_estimate(c_water, c_oil):
    """Return ``(P, (low, high))`` from the least-squares line ``c_oil = P c_water``.

    Parameters
    ----------
    c_water, c_oil : array_like
        Paired concentrations [mol/m**3]; oil values may be zero.

    Returns
    -------
    (float, (float, float))
        P [-] and its 95 % interval [-], the low end clipped at 0 (nan with one point).

    Raises
    ------
    None.

    Notes
    -----
    ``P = sum(x y) / sum(x**2)``, ``se = sqrt(RSS/(n - 1) / sum(x**2))``, Student's t on n - 1
    degrees of freedom; used when some oil concentrations are zero (an ionic against an
    alkane) [1].

    Examples
    --------
    >>> p, (lo, hi) = origin_line_estimate([1.0, 2.0, 3.0], [0.1, 0.2, 0.31])
    >>> round(p, 12), round(lo, 12), round(hi, 12)
    (0.102142857143, 0.097283506212, 0.107002208074)

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partition of ethoxylated nonionics between alkanes and water).
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002) (AICc) [from memory].
    """
    x, y = np.asarray(c_water, dtype=float), np.asarray(c_oil, dtype=float)
    p = float(x @ y / (x @ x))
    dof = len(x) - 1
    if dof < 1:
        return p, (math.nan, math.nan)
    r = y - p * x
    se = math.sqrt(float(r @ r) / dof / float(x @ x))
    half = float(stdtrit(dof, 0.5 + CONFIDENCE / 2)) * se
    return p, (max(p - half, 0.0), p + half)


def fit_breakpoint(c_water, c_oil):
    """Fit ``ln c_oil = ln P + min(ln c_water, ln cmc)``; return (P, cmc, aicc_break, aicc_const).

    Parameters
    ----------
    c_water, c_oil : array_like
        Paired concentrations, > 0 [mol/m**3].

    Returns
    -------
    (float or None, float or None, float, float)
        P [-], cmc [mol/m**3], the AICc of the broken line and of a constant ratio [-]
        (None, None, inf, AICc of the constant when there is no gap to start from).

    Raises
    ------
    None.

    Notes
    -----
    The breakpoint is started in every gap leaving two points below and one above
    (``scipy.optimize.least_squares``); the constant ratio (one parameter) is the comparison
    by AICc [3].  Above the CMC the oil holds ``P cmc`` while the water's total keeps rising [1].

    Examples
    --------
    >>> p, cmc, a_break, a_const = fit_breakpoint([0.01, 0.02, 0.04, 0.08, 0.16, 0.32],
    ...                                           [0.35, 0.7, 1.4, 2.8, 2.8, 2.8])
    >>> round(p, 9), round(cmc, 9), a_break < a_const
    (35.0, 0.08, True)

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partition of ethoxylated nonionics between alkanes and water).
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002) (AICc) [from memory].
    """
    x = np.log(np.asarray(c_water, dtype=float))
    y = np.log(np.asarray(c_oil, dtype=float))
    n = len(x)
    u = np.unique(x)
    const = y - x
    rss0 = float(np.sum((const - const.mean()) ** 2))

    def aicc(rss, k):
        m = k + 1
        a = n * math.log(max(rss, 1e-300) / n) + 2 * m
        return a + (2 * m * (m + 1) / (n - m - 1) if n - m - 1 > 0 else math.inf)

    best = None
    for xb in 0.5 * (u[MIN_BELOW - 1:-1] + u[MIN_BELOW:]):
        below = x < xb
        a0 = float(np.mean(y[below] - x[below]))

        def fun(p):
            return p[0] + np.minimum(x, p[1]) - y

        res = least_squares(fun, [a0, xb], bounds=([-50, u[0]], [50, u[-1]]))
        if best is None or res.cost < best.cost:
            best = res
    if best is None:
        return None, None, math.inf, aicc(rss0, 1)
    return (math.exp(best.x[0]), math.exp(best.x[1]), aicc(2 * best.cost, 2), aicc(rss0, 1))


def fit_partition(path, *, cmc=None) -> PartitionFit:
    """Fit the partition coefficient from a CSV of ``water_concentration``, ``oil_concentration``.

    Parameters
    ----------
    path : str or Path
        CSV with ``water_concentration [unit]`` and ``oil_concentration [unit]`` (optional:
        ``sample``, ``notes``).
    cmc : float, optional
        [mol/m**3] of the water phase; points above it are flagged.  Fitted when None.

    Returns
    -------
    PartitionFit

    Raises
    ------
    InputError
        A missing column or unit, an empty or non-numeric cell, a water concentration <= 0 or a
        negative oil concentration, a CMC <= 0, fewer than two points below the CMC.

    Notes
    -----
    Below the CMC ``P = c_oil / c_water`` is constant [1]: :func:`log_ratio_estimate` (all
    oil values > 0) or :func:`origin_line_estimate`; the CMC is given or the breakpoint of
    :func:`fit_breakpoint`, kept only if it beats a constant ratio by more than 2 AICc units.
    Valid for the monomer of one surfactant at equilibrium; P of order 1 to 1000 for low-EO
    nonionics against alkanes, near 0 for ionics [2].

    Examples
    --------
    >>> import pathlib, tempfile
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "p.csv"
    >>> rows = ["0.001,0.035", "0.002,0.07", "0.004,0.14"]
    >>> _ = p.write_text(chr(10).join(["water_concentration [mM],oil_concentration [mM]"] + rows))
    >>> round(fit_partition(p, cmc=0.065).partition_coefficient, 9)
    35.0

    References
    ----------
    1. Laven, J., Open Colloid Sci. J. 4 (2011) 37: a constant oil/water ratio below the CMC;
       surfactant added past the CMC stays in the water.
    2. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 18 (2002) 4367
       (partition of ethoxylated nonionics between alkanes and water).
    3. Burnham, K. P. and Anderson, D. R., Model Selection and Multimodel Inference, 2nd ed.,
       Springer (2002) (AICc) [from memory].
    """
    t = read_lab_csv(path, {"water_concentration": "concentration", "oil_concentration": "concentration"},
                     required=("water_concentration", "oil_concentration"))
    p = t.path
    lab = {k: f"{k} [{t.units[k]}]" for k in ("water_concentration", "oil_concentration")}
    cw = np.asarray(t.columns["water_concentration"], dtype=float)
    co = np.asarray(t.columns["oil_concentration"], dtype=float)
    problems = []
    for k, arr in (("water_concentration", cw), ("oil_concentration", co)):
        for i in np.flatnonzero(~np.isfinite(arr)):
            problems.append(f"{p}: row {i + 2}, column {lab[k]!r}: the cell is empty; expected a number")
    for i in np.flatnonzero(np.isfinite(cw) & (cw <= 0)):
        problems.append(f"{p}: row {i + 2}, column {lab['water_concentration']!r}: {cw[i]:g} mol/m**3 "
                        "is not positive; expected a concentration > 0")
    for i in np.flatnonzero(np.isfinite(co) & (co < 0)):
        problems.append(f"{p}: row {i + 2}, column {lab['oil_concentration']!r}: {co[i]:g} mol/m**3 "
                        "is negative; expected a concentration >= 0")
    if cmc is not None and not (np.isfinite(cmc) and cmc > 0):
        problems.append(f"--cmc: expected a concentration > 0, got {cmc!r}")
    if problems:
        raise InputError(problems=problems)
    notes = []
    positive = bool(np.all(co > 0))
    source = "given" if cmc is not None else "none"
    if cmc is None and positive and len(np.unique(cw)) >= MIN_BELOW + 2:
        pb, cb, a_break, a_const = fit_breakpoint(cw, co)
        if cb is not None and a_break < a_const - AICC_MARGIN:
            cmc, source = cb, "fitted"
            notes.append(f"CMC fitted as the breakpoint of ln c_oil against ln c_water: "
                         f"{cb:.4g} mol/m**3 (AICc {a_break - a_const:+.2f} against a constant ratio)")
        else:
            notes.append("no breakpoint found: the ratio is constant over the data (all points used)")
    elif cmc is None:
        notes.append("no CMC given and none fitted: all points used")
    above = cw > cmc if cmc is not None else np.zeros(len(cw), dtype=bool)
    below = ~above
    if int(np.sum(below)) < MIN_BELOW:
        raise InputError(f"{p}: {int(np.sum(below))} point(s) below the CMC ({cmc:.4g} mol/m**3); "
                         f"expected at least {MIN_BELOW} to estimate the partition coefficient")
    if positive:
        pc, iv = log_ratio_estimate(cw[below], co[below])
        method = "geometric mean of c_oil/c_water below the CMC, Student-t interval on the log ratio"
    else:
        pc, iv = origin_line_estimate(cw[below], co[below])
        method = "least-squares line through the origin (some oil concentrations are zero)"
    if int(np.sum(below)) < 3:
        notes.append("only two points below the CMC: the interval is wide; measure more")
    rows = []
    for i in range(len(cw)):
        ratio = co[i] / cw[i]
        flag = None
        if above[i]:
            flag = ("above the CMC: the apparent ratio falls because surfactant added past the CMC "
                    "forms micelles in the water; not used for the coefficient")
        rows.append({"row": i + 2, "water_concentration_mol_m3": float(cw[i]),
                     "oil_concentration_mol_m3": float(co[i]), "ratio": float(ratio),
                     "above_cmc": bool(above[i]), "flag": flag})
    if np.any(above) and np.isfinite(iv[0]):
        rising = [r["row"] for r in rows
                  if r["water_concentration_mol_m3"] > 2 * cmc and r["ratio"] >= iv[0]]
        if rising:
            notes.append(f"row(s) {', '.join(map(str, rising))} above the CMC do not show the fall "
                         "of the ratio expected there; check the CMC")
    return PartitionFit(p, float(pc), (float(iv[0]), float(iv[1])), None if cmc is None else float(cmc),
                        source, rows, method, tuple(notes))
