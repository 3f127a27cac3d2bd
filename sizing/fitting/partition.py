"""Partition coefficient of the monomer from paired oil and water equilibrium concentrations.

Below the CMC the monomer distributes at a constant ratio ``P = c_oil / c_water``.  Above it the
water's total concentration keeps rising (micelles) while the oil, in equilibrium with the
monomer only, stays near ``P cmc``: the apparent ratio falls as ``P cmc / c_water``.  So::

    ln c_oil = ln P + min(ln c_water, ln cmc)

``P`` is the geometric mean of the ratios of the points below the CMC with a Student-t
interval on ``ln(c_oil/c_water)``.  The CMC is given (``cmc``) or fitted as the breakpoint of the
model above (exact least squares over every gap), kept only if it beats a constant ratio by more
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
from scipy.special import stdtrit  # Student t quantile, stdtrit(dof, q) = scipy.stats.t.ppf(q, dof)

from ..errors import InputError
from ..labcsv import read_lab_csv
from ..plausible import check, check_array

CONFIDENCE = 0.95
MIN_BELOW = 2
AICC_MARGIN = 2.0
_LISTED = 3  # bad rows listed one by one before a count


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
    With ``x = ln c_water``, ``y = ln c_oil`` and the breakpoint ``b = ln cmc`` in the gap
    between two neighbouring distinct ``x`` (at least three distinct values in all), the
    residual sum of squares profiled over ``ln P`` is a convex quadratic in ``b``: its minimum
    is ``b = mean(y, above) - mean(y - x, below)``, clipped to the gap.  Every gap is solved at
    once from cumulative sums of the sorted data (exact least squares, O(n log n) time, a few
    arrays of memory; it agrees with ``scipy.optimize.least_squares`` started in each gap).  The constant ratio (one parameter) is the comparison by
    AICc [3].  Above the CMC the oil holds ``P cmc`` while the water's total keeps rising [1].

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
    const = y - x
    rss0 = float(np.sum((const - const.mean()) ** 2))

    def aicc(rss, k):
        m = k + 1
        # floor: residuals of 1e-10 in ln c are rounding, not data (exact series tie, not win)
        a = n * math.log(max(rss, n * 1e-20) / n) + 2 * m
        return a + (2 * m * (m + 1) / (n - m - 1) if n - m - 1 > 0 else math.inf)

    order = np.argsort(x, kind="stable")
    x0, y0 = float(np.mean(x)), float(np.mean(y))  # centred sums keep the quadratic accurate
    xs, ys = x[order] - x0, y[order] - y0
    u, first = np.unique(xs, return_index=True)
    if len(u) < MIN_BELOW + 1:
        return None, None, math.inf, aicc(rss0, 1)
    z = ys - xs

    def cum(v):
        return np.concatenate(([0.0], np.cumsum(v)))

    cz, czz, cy, cyy = cum(z), cum(z * z), cum(ys), cum(ys * ys)
    k = np.arange(len(u) - 1)  # gap between u[k] and u[k + 1] (any gap, as the bounds allow)
    m = first[k + 1]  # points at or below u[k]
    na = n - m
    sb1, sb2 = cz[m], czz[m]
    sa1, sa2 = cy[n] - cy[m], cyy[n] - cyy[m]
    b = np.clip(sa1 / na - sb1 / m, u[k], u[k + 1])
    s1 = sb1 + sa1 - na * b
    rss = np.maximum(sb2 + sa2 - 2 * b * sa1 + na * b * b - s1 * s1 / n, 0.0)
    j = int(np.argmin(rss))
    ln_p = float(s1[j] / n) + y0 - x0
    return (math.exp(ln_p), math.exp(float(b[j]) + x0), aicc(float(rss[j]), 2), aicc(rss0, 1))


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
    labels = {k: f"{k} [{t.units[k]}]" for k in ("water_concentration", "oil_concentration")}
    return fit_partition_arrays(t.columns["water_concentration"], t.columns["oil_concentration"],
                                cmc=cmc, path=t.path, labels=labels)


def _listed(problems, rows, text, limit=_LISTED):
    """Add one problem per row (``text(i)``) for the first ``limit`` rows, then a count."""
    for i in rows[:limit]:
        problems.append(text(int(i)))
    if len(rows) > limit:
        problems.append(f"... and {len(rows) - limit} more row(s) like this")


def fit_partition_arrays(c_water, c_oil, *, cmc=None, path="data", labels=None,
                         with_rows=True) -> PartitionFit:
    """Fit the partition coefficient to paired concentrations (the arrays behind :func:`fit_partition`).

    Parameters
    ----------
    c_water, c_oil : array_like
        Paired concentrations in the water and the oil [mol/m**3]; row ``i`` is reported as
        row ``i + 2`` (a CSV's row with its header as row 1).
    cmc : float, optional
        [mol/m**3] of the water phase; fitted when None.
    path : str
        Named in messages and kept in the result.
    labels : dict, optional
        ``water_concentration`` / ``oil_concentration`` -> the column names shown in messages.
    with_rows : bool
        Build the per-row table (``rows``); False keeps only the estimate (large arrays).

    Returns
    -------
    PartitionFit

    Raises
    ------
    InputError
        An empty or non-finite value, a water concentration <= 0 or a negative oil
        concentration, a CMC <= 0, fewer than two rows, fewer than two distinct water
        concentrations below the CMC (one row, or one row repeated), or oil concentrations that
        do not rise with the water's (no correlation: the data cannot support a coefficient).

    Notes
    -----
    Vectorised: the breakpoint search is one pass over cumulative sums
    (:func:`fit_breakpoint`), so 10**6 pairs take about a second.  The correlation check: the
    least-squares slope of ``ln c_oil`` on ``ln c_water`` below the CMC (of ``c_oil`` on
    ``c_water`` when some oil values are zero) must be above zero at 95 % (Student t), else
    the ratio is noise, not a partition [1]; a slope whose interval excludes 1 is noted.

    Examples
    --------
    >>> round(fit_partition_arrays([0.001, 0.002, 0.004], [0.035, 0.07, 0.14], cmc=0.065)
    ...       .partition_coefficient, 9)
    35.0
    """
    p = str(path)
    lab = {"water_concentration": "water_concentration", "oil_concentration": "oil_concentration",
           **(labels or {})}
    cw = np.asarray(c_water, dtype=float).ravel()
    co = np.asarray(c_oil, dtype=float).ravel()
    problems = []
    if cw.shape != co.shape:
        raise InputError(f"{p}: {cw.size} water and {co.size} oil concentrations; expected pairs")
    for k, arr in (("water_concentration", cw), ("oil_concentration", co)):
        _listed(problems, np.flatnonzero(~np.isfinite(arr)),
                lambda i, k=k: f"{p}: row {i + 2}, column {lab[k]!r}: the cell is empty; expected a number")
    _listed(problems, np.flatnonzero(np.isfinite(cw) & (cw <= 0)),
            lambda i: f"{p}: row {i + 2}, column {lab['water_concentration']!r}: {cw[i]:g} mol/m**3 "
                      "is not positive; expected a concentration > 0")
    _listed(problems, np.flatnonzero(np.isfinite(co) & (co < 0)),
            lambda i: f"{p}: row {i + 2}, column {lab['oil_concentration']!r}: {co[i]:g} mol/m**3 "
                      "is negative; expected a concentration >= 0")
    odd = []
    if cmc is not None and not (np.isfinite(cmc) and cmc > 0):
        problems.append(f"--cmc: expected a concentration > 0, got {cmc!r}")
    elif cmc is not None:
        try:
            odd += [w for w in [check("--cmc", cmc, "concentration")] if w]
        except InputError as exc:
            problems += exc.problems
    if problems:
        raise InputError(problems=problems)
    for k, arr in (("water_concentration", cw), ("oil_concentration", co)):
        bad, warn = check_array(f"{p}: column {lab[k]!r}", arr, "concentration")
        problems += bad
        odd += warn
    if problems:
        raise InputError(problems=problems)
    if cw.size < MIN_BELOW:
        raise InputError(f"{p}: {cw.size} data row(s); expected at least {MIN_BELOW} pairs at "
                         "different water concentrations to estimate the partition coefficient")
    notes = list(odd)
    positive = bool(np.all(co > 0))
    source = "given" if cmc is not None else "none"
    distinct = len(np.unique(cw))
    if cmc is None and positive and distinct >= MIN_BELOW + 2:
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
    n_below = int(np.sum(below))
    where = f" below the CMC ({cmc:.4g} mol/m**3)" if cmc is not None else ""
    if n_below < MIN_BELOW:
        raise InputError(f"{p}: {n_below} point(s){where}; "
                         f"expected at least {MIN_BELOW} to estimate the partition coefficient")
    distinct_below = len(np.unique(cw[below]))
    if distinct_below < MIN_BELOW:
        raise InputError(f"{p}: all {n_below} rows{where} are at one water concentration "
                         f"({float(cw[below][0]):.4g} mol/m**3); expected pairs at at least {MIN_BELOW} "
                         "different water concentrations (repeated rows cannot show a constant ratio)")
    if positive:
        pc, iv = log_ratio_estimate(cw[below], co[below])
        method = "geometric mean of c_oil/c_water below the CMC, Student-t interval on the log ratio"
        xs, ys = np.log(cw[below]), np.log(co[below])
    else:
        pc, iv = origin_line_estimate(cw[below], co[below])
        method = "least-squares line through the origin (some oil concentrations are zero)"
        xs, ys = cw[below], co[below]
    if distinct_below >= 3 and np.any(ys != ys[0]):
        slope, (s_lo, s_hi) = _slope(xs, ys)
        if not s_lo > 0:
            raise InputError(
                f"{p}: the oil concentrations{where} do not rise with the water concentrations "
                f"(slope of {'ln c_oil on ln c_water' if positive else 'c_oil on c_water'} "
                f"{slope:.3g}, 95 % interval {s_lo:.3g} to {s_hi:.3g}; expected about "
                f"{'1' if positive else 'P > 0'}): no correlation, so the data cannot support a "
                "partition coefficient; check the pairing of the samples and the assays")
        if positive and not s_lo <= 1.0 <= s_hi:
            notes.append(f"the log-log slope below the CMC is {slope:.3g} (95 % interval {s_lo:.3g} "
                         f"to {s_hi:.3g}), not 1: the ratio is not constant; check the CMC and the assays")
    if distinct_below < 3:
        notes.append("only two water concentrations below the CMC: the interval is wide; measure more")
    ratio = co / cw
    rows = []
    if with_rows:
        flag_text = ("above the CMC: the apparent ratio falls because surfactant added past the CMC "
                     "forms micelles in the water; not used for the coefficient")
        rows = [{"row": i + 2, "water_concentration_mol_m3": a, "oil_concentration_mol_m3": b,
                 "ratio": r, "above_cmc": h, "flag": flag_text if h else None}
                for i, (a, b, r, h) in enumerate(zip(cw.tolist(), co.tolist(), ratio.tolist(),
                                                     above.tolist()))]
    if np.any(above) and np.isfinite(iv[0]):
        rising = np.flatnonzero(above & (cw > 2 * cmc) & (ratio >= iv[0])) + 2
        if rising.size:
            shown = ", ".join(map(str, rising[:10].tolist())) + (" ..." if rising.size > 10 else "")
            notes.append(f"row(s) {shown} above the CMC do not show the fall "
                         "of the ratio expected there; check the CMC")
    return PartitionFit(p, float(pc), (float(iv[0]), float(iv[1])), None if cmc is None else float(cmc),
                        source, rows, method, tuple(notes))


def _slope(x, y):
    """Return the least-squares slope of ``y`` on ``x`` and its 95 % Student-t interval."""
    xc = x - x.mean()
    sxx = float(xc @ xc)
    slope = float(xc @ (y - y.mean())) / sxx
    r = y - y.mean() - slope * xc
    dof = len(x) - 2
    half = float(stdtrit(dof, 0.5 + CONFIDENCE / 2)) * math.sqrt(float(r @ r) / dof / sxx)
    return slope, (slope - half, slope + half)
