"""Fit the regular-solution interaction beta of a two-component mixed micelle from mixed CMCs.

Data: a lab CSV ``fraction [-],cmc [mM]`` (the mole fraction alpha_1 of the first component in
the surfactant mixture, and the CMC measured at it).  Rows at ``fraction = 1`` and ``0`` give the
pure CMCs C_1 and C_2; beta is fitted by least squares on ``ln CMC`` over every row, the Rubingh
(1979) mixed CMC being the model (:func:`sizing.physics.blend.mixed_cmc`); beta = 0 is Clint's
ideal mixing.

The 95 % interval of beta is a profile-likelihood interval, which keeps its coverage where the
curvature of the model makes a linearised interval too narrow; a coverage test over many seeds is
in ``tests/test_fit_micelles.py``.

References
----------
1. Rubingh, D. N., in Solution Chemistry of Surfactants, vol. 3 (K. L. Mittal, ed.), Plenum (1979)
   p. 337; Holland, P. M. and Rubingh, D. N., ACS Symp. Ser. 501 (1992) ch. 1.
2. Clint, J. H., J. Chem. Soc. Faraday Trans. 1, 71 (1975) 1327.
3. Bates, D. M. and Watts, D. G., Nonlinear Regression Analysis and Its Applications, Wiley (1988)
   ch. 6 (profile-likelihood intervals) [from memory].
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import CalculationError, InputError
from ..labcsv import read_lab_csv
from ..physics.blend import mixed_cmc

BETA_BOUNDS = (-40.0, 2.0)  # typical anionic + cationic pairs reach about -25 (Holland and Rubingh 1992, from memory)


@dataclass(frozen=True)
class InteractionFit:
    """A fitted mixed-micelle interaction.

    Attributes
    ----------
    path : the CSV; rows : number of rows used
    interaction : beta [-]; interaction_interval : its 95 % profile-likelihood interval [-]
    cmc_1, cmc_2 : fitted pure CMCs of the first and the second component [mol/m**3]
    rms_ln : root-mean-square residual of ln CMC [-]
    synergism : True when the fitted mixed CMC falls below both pure CMCs somewhere (beta < 0 and
        |beta| > |ln(C_1/C_2)|, Rosen and Hua 1982)
    notes : what the user should know
    """

    path: str
    rows: int
    interaction: float
    interaction_interval: tuple
    cmc_1: float
    cmc_2: float
    rms_ln: float
    synergism: bool
    notes: tuple


def _ln_cmc(alpha, ln1, ln2, beta):
    """ln C_12 for mole fractions ``alpha``; ``ln1``, ``ln2`` (ln of the pure CMCs) and beta broadcast."""
    a, l1, l2, b = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (alpha, ln1, ln2, beta)))
    out = np.where(a >= 1.0, l1, l2).astype(float)
    mid = (a > 0.0) & (a < 1.0)
    if np.any(mid):
        am = a[mid]
        cm = np.exp(np.stack([l1[mid], l2[mid]], axis=-1))
        out[mid] = np.log(mixed_cmc(np.stack([am, 1.0 - am], axis=-1), cm, "regular", b[mid])[0])
    return out


def _profile(alpha, y, betas, ln1, ln2, steps=6):
    """Profile RSS over ``betas``: for each beta the pure CMCs refitted (Gauss-Newton, all betas at once).

    Returns ``(rss, ln1, ln2)`` arrays over ``betas``.
    """
    b = np.asarray(betas, dtype=float)[:, None]
    l1 = np.full(b.shape, float(ln1))
    l2 = np.full(b.shape, float(ln2))
    h = 1e-6
    al = alpha[None, :]
    for _ in range(steps):
        f0 = _ln_cmc(al, l1, l2, b)
        j1 = (_ln_cmc(al, l1 + h, l2, b) - f0) / h
        j2 = (_ln_cmc(al, l1, l2 + h, b) - f0) / h
        r = f0 - y[None, :]
        a11, a12, a22 = np.sum(j1 * j1, 1), np.sum(j1 * j2, 1), np.sum(j2 * j2, 1)
        g1, g2 = np.sum(j1 * r, 1), np.sum(j2 * r, 1)
        det = a11 * a22 - a12 * a12
        with np.errstate(divide="ignore", invalid="ignore"):
            d1 = np.where(det > 0, (a22 * g1 - a12 * g2) / det, 0.0)
            d2 = np.where(det > 0, (a11 * g2 - a12 * g1) / det, 0.0)
        l1 = l1 - np.clip(d1, -1.0, 1.0)[:, None]
        l2 = l2 - np.clip(d2, -1.0, 1.0)[:, None]
    r = _ln_cmc(al, l1, l2, b) - y[None, :]
    return np.sum(r * r, axis=1), l1[:, 0], l2[:, 0]


def fit_interaction_arrays(fraction, cmc, path: str = "data") -> InteractionFit:
    """Fit beta to mole fractions ``fraction`` [-] (of the first component) and CMCs ``cmc`` [mol/m**3].

    Least squares on ``ln CMC`` over every row in beta and the two pure CMCs (started at the
    geometric means of the rows at ``fraction = 1``, C_1, and ``0``, C_2).  The profile of beta (pure
    CMCs refitted at each beta, Gauss-Newton over a whole grid at once) is searched on nested grids;
    the 95 % interval is ``RSS(beta) <= RSS_min (1 + F(0.95; 1, n - 3) / (n - 3))``.

    Raises
    ------
    InputError
        Fewer than four rows, fractions outside 0..1, non-positive CMCs, fewer than two distinct
        mixed compositions, no row at either pure component.
    """
    a = np.asarray(fraction, dtype=float)
    c = np.asarray(cmc, dtype=float)
    ok = np.isfinite(a) & np.isfinite(c)
    a, c = a[ok], c[ok]
    if a.size < 4:
        raise InputError(f"{path}: {a.size} complete row(s); expected at least 4 (both pure components and "
                         "two or more mixtures) to fit beta")
    if np.any((a < 0) | (a > 1)):
        raise InputError(f"{path}: fraction: expected mole fractions of the first component from 0 to 1, got "
                         f"{float(a[(a < 0) | (a > 1)][0])!r}")
    if np.any(c <= 0):
        raise InputError(f"{path}: cmc: expected CMCs > 0, got {float(c[c <= 0][0])!r} mol/m**3")
    mixes = np.unique(a[(a > 0) & (a < 1)])
    if mixes.size < 2:
        raise InputError(f"{path}: {mixes.size} distinct mixed composition(s); expected at least 2 between 0 and 1 "
                         "so that the data determine beta")
    if not (np.any(a == 1.0) and np.any(a == 0.0)):
        raise InputError(f"{path}: fraction: expected rows at 0 and at 1 (the pure components), so that their "
                         "CMCs are measured, not guessed")
    y = np.log(c)
    ln1, ln2 = float(np.mean(y[a == 1.0])), float(np.mean(y[a == 0.0]))
    grid = np.linspace(*BETA_BOUNDS, 211)
    prof, g1, g2 = _profile(a, y, grid, ln1, ln2)
    k = int(np.nanargmin(prof))
    beta, step, w1, w2 = float(grid[k]), float(grid[1] - grid[0]), float(g1[k]), float(g2[k])
    for _ in range(6):  # nested grids around the best point, each 20 times finer (warm starts)
        fine = np.clip(beta + step * np.linspace(-1.0, 1.0, 41), *BETA_BOUNDS)
        pr, f1, f2 = _profile(a, y, fine, w1, w2, steps=3)
        j = int(np.nanargmin(pr))
        beta, w1, w2 = float(fine[j]), float(f1[j]), float(f2[j])
        step /= 20.0
    rss_min, q1, q2 = (float(v[0]) for v in _profile(a, y, [beta], w1, w2, steps=6))
    c1, c2 = math.exp(q1), math.exp(q2)
    if not math.isfinite(rss_min):
        raise CalculationError(f"{path}: the fit of beta did not converge")
    from scipy.special import fdtri  # F quantile without importing scipy.stats (slow)

    n = a.size
    dof = n - 3
    notes = []
    if dof > 0:
        limit = rss_min * (1.0 + fdtri(1, dof, 0.95) / dof)
        inside = grid[prof <= limit]
        lo_i = float(min(inside.min(), beta)) if inside.size else beta
        hi_i = float(max(inside.max(), beta)) if inside.size else beta
        # refine each end on nested grids (the profile crosses the limit once near each end)
        step = float(grid[1] - grid[0])
        ends = []
        for end, sign in ((lo_i, -1.0), (hi_i, 1.0)):
            e, st_ = end, step
            j0 = int(np.argmin(np.abs(grid - end)))
            w1, w2 = float(g1[j0]), float(g2[j0])
            for _ in range(4):
                pts = np.clip(e + sign * st_ * np.linspace(0.0, 1.0, 21), *BETA_BOUNDS)
                pr, f1, f2 = _profile(a, y, pts, w1, w2, steps=3)
                ok_ = np.flatnonzero(pr <= limit)
                if ok_.size:  # the last point still inside
                    e, w1, w2 = float(pts[ok_[-1]]), float(f1[ok_[-1]]), float(f2[ok_[-1]])
                st_ /= 20.0
            ends.append(e)
        interval = (float(ends[0]), float(ends[1]))
    else:
        interval = (-math.inf, math.inf)
        notes.append("four rows fit three quantities (two pure CMCs and beta) with nothing left for an interval; "
                     "measure more mixtures")
    if interval[0] <= BETA_BOUNDS[0] + 1e-9 or interval[1] >= BETA_BOUNDS[1] - 1e-9:
        notes.append(f"the interval reaches the search range {BETA_BOUNDS}: the data barely constrain beta")
    if rss_min / max(dof, 1) > 0.05:
        notes.append(f"residuals of ln CMC are large (rms {math.sqrt(rss_min / n):.3g}): check the data or the "
                     "regular-solution model (it assumes one beta at every composition)")
    syn = beta < 0 and abs(beta) > abs(math.log(c1 / c2))
    return InteractionFit(path=path, rows=int(n), interaction=float(beta), interaction_interval=interval,
                          cmc_1=c1, cmc_2=c2, rms_ln=math.sqrt(rss_min / n), synergism=bool(syn), notes=tuple(notes))


def fit_interaction(path) -> InteractionFit:
    """Read ``fraction [-],cmc [mM]`` from a lab CSV and fit beta (:func:`fit_interaction_arrays`)."""
    table = read_lab_csv(path, {"fraction": "dimensionless", "cmc": "concentration"},
                         required=("fraction", "cmc"))
    return fit_interaction_arrays(table.columns["fraction"], table.columns["cmc"], str(path))
