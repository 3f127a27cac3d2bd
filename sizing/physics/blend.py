"""Blends of surfactants in one batch: competitive Langmuir adsorption, mixed micelles, per-component
partitioning, in one mass balance per component, vectorised over arrays.

Components ``i = 1..m`` sit on the **last axis** of every per-component array; everything else
broadcasts (a sweep, a Monte Carlo sample).  For a dose ``N`` [mol] charged at mole fractions
``alpha_i`` (sum 1) the balance of component ``i`` is::

    alpha_i N = c_i V_c + u_i c_i V_d + Gamma_inf_i theta_i A + x_i N_mic

with the competitive (extended) Langmuir interface ``theta_i = K_i c_i / D``,
``D = 1 + sum_j K_j c_j`` (so the total coverage is ``theta = 1 - 1/D``), and the pseudo-phase
micelles: where they exist, ``c_i = x_i f_i C_i`` with ``sum_i x_i = 1`` (ideal, ``f_i = 1``,
Clint 1975; regular solution for two components, ``f_1 = exp(beta x_2**2)``,
``f_2 = exp(beta x_1**2)``, Rubingh 1979).

How it is solved (each step is one vectorised bracketed Newton, :mod:`sizing.physics.roots`):

- below the onset of micelles the state follows from ``w = D - 1`` alone:
  ``c_i = alpha_i N / Q_i(w)`` with ``Q_i = V_c + u_i V_d + Gamma_inf_i A K_i / (1 + w)``, and
  ``w = N sum_i K_i alpha_i / Q_i(w)``; its residual is convex in ``w``, so the root is unique and
  Newton from above converges;
- the dose at the onset (``N_on``): for ideal mixing ``sum_i c_i/C_i = 1`` along that path (one
  root in ``ln w``); for two components the onset and the micellar states are one root in
  ``logit(x_1)``, where ``c_i`` and so ``D`` are explicit;
- above the onset, for two components: ``N_mic = alpha_1 N / x_1 - f_1 C_1 Q_1 =
  alpha_2 N / x_2 - f_2 C_2 Q_2`` (one root in ``logit(x_1)``); for more components (ideal only) the
  micellar amount ``N_mic`` is the root of ``sum_i x_i = 1`` with ``c_i = alpha_i N / (Q_i +
  N_mic / C_i)`` (decreasing in ``N_mic``) and ``w`` solved inside.

Above the mixed CMC the monomer composition keeps moving with the dose (the more surface-active
monomer can even fall), so coverage need not rise with the dose: the dose for a target is the
smallest dose that reaches it (:func:`dose_for_target`).

References
----------
1. Clint, J. H., J. Chem. Soc. Faraday Trans. 1, 71 (1975) 1327 (ideal mixed micelles).
2. Rubingh, D. N., in Solution Chemistry of Surfactants, vol. 3 (K. L. Mittal, ed.), Plenum (1979)
   p. 337; equations as in Holland, P. M. and Rubingh, D. N., ACS Symp. Ser. 501 (1992) ch. 1
   (regular-solution mixed micelles).
3. Competitive Langmuir adsorption; with equal Gamma_inf its surface pressure
   ``Pi = n R T Gamma_inf ln(1 + sum K_j c_j)`` equals the ideal adsorbed solution result
   (Myers, A. L. and Prausnitz, J. M., AIChE J. 11 (1965) 121) [from memory].
4. Ben Ghoulam, M., Moatadid, N., Graciaa, A. and Lachaise, J., Langmuir 20 (2004) 2584
   (pseudo-phase model of technical ethoxylates with per-homologue oil/water partitioning).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from ..constants import GAS_CONSTANT as R
from .roots import bracketed_newton
from .special import expit


def _quiet(fn):
    """Run ``fn`` with numpy's floating-point warnings off: trial steps far out in a bracket may
    overflow and are then bisected away; the results returned are finite where they are used."""
    @functools.wraps(fn)
    def run(*args, **kwargs):
        with np.errstate(over="ignore", divide="ignore", invalid="ignore", under="ignore"):
            return fn(*args, **kwargs)
    return run
_TINY = 1e-300
_ALPHA_MIN = 1e-250  # smaller mole fractions count as this (their share is nil)


@dataclass(frozen=True)
class Blend:
    """The components of a blend; per-component arrays have the components on the last axis.

    Attributes
    ----------
    fractions : ndarray
        alpha_i, mole fractions of the charged active blend (sum 1 on the last axis) [-].
    cmc : ndarray
        C_i, pure-component CMC in the continuous phase (inf: forms no micelles) [mol/m**3].
    max_surface_excess : ndarray
        Gamma_inf_i [mol/m**2].
    adsorption_constant : ndarray
        K_i [m**3/mol].
    uptake : ndarray
        u_i, dispersed over continuous monomer concentration [-]
        (:func:`sizing.physics.phases.dispersed_uptake`).
    micelles : str
        'ideal' (Clint) or 'regular' (Rubingh, two components).
    interaction : ndarray
        beta of the mixed micelle (regular only; 0 reproduces ideal) [-]; broadcasts without
        the component axis.
    """

    fractions: np.ndarray
    cmc: np.ndarray
    max_surface_excess: np.ndarray
    adsorption_constant: np.ndarray
    uptake: np.ndarray
    micelles: str = "ideal"
    interaction: object = 0.0

    @property
    def size(self) -> int:
        return int(np.shape(self.fractions)[-1])


@dataclass(frozen=True)
class BlendState:
    """An equilibrium state, per component (last axis) [mol, mol/m**3, -].

    Attributes
    ----------
    free_concentration : c_i in the continuous phase [mol/m**3]
    coverage : theta_i, the share of the interface each component holds [-]
    continuous_mol, dispersed_mol, interface_mol, micelle_mol : where each component is [mol]
    micelle_fraction : x_i, composition of the micelles (nan where there are none) [-]
    """

    free_concentration: np.ndarray
    coverage: np.ndarray
    continuous_mol: np.ndarray
    dispersed_mol: np.ndarray
    interface_mol: np.ndarray
    micelle_mol: np.ndarray
    micelle_fraction: np.ndarray

    @property
    def total_mol(self):
        """Each component's dose [mol]."""
        return self.continuous_mol + self.dispersed_mol + self.interface_mol + self.micelle_mol


@dataclass(frozen=True)
class _Batch:
    """Flat per-case arrays: ``veff``, ``s`` = Gamma_inf A, ``k`` ... (rows, m); beta (rows,)."""

    alpha: np.ndarray
    cmc: np.ndarray
    k: np.ndarray
    s: np.ndarray
    veff: np.ndarray
    vc: np.ndarray
    vd: np.ndarray
    uptake: np.ndarray
    gamma: np.ndarray
    beta: np.ndarray
    regular: bool
    shape: tuple


def _batch(blend: Blend, continuous_volume, dispersed_volume, area, extra_shape=()) -> _Batch:
    """Broadcast everything and flatten: per-component arrays (rows, m), the rest (rows,)."""
    vc = np.asarray(continuous_volume, dtype=float)[..., None]
    vd = np.asarray(dispersed_volume, dtype=float)[..., None]
    a = np.asarray(area, dtype=float)[..., None]
    beta = np.asarray(blend.interaction, dtype=float)[..., None]
    arrays = [np.asarray(x, dtype=float) for x in (blend.fractions, blend.cmc, blend.adsorption_constant,
                                                    blend.max_surface_excess, blend.uptake)]
    shape = np.broadcast_shapes(*(x.shape for x in arrays), vc.shape, vd.shape, a.shape, beta.shape,
                                tuple(extra_shape) + (1,))
    m = shape[-1]
    alpha, cmc, k, g, u = (np.broadcast_to(x, shape).reshape(-1, m) for x in arrays)
    vc, vd, a = (np.broadcast_to(x, shape).reshape(-1, m) for x in (vc, vd, a))
    beta = np.broadcast_to(beta, shape[:-1] + (1,)).reshape(-1)
    alpha = np.maximum(alpha, _ALPHA_MIN)
    return _Batch(alpha=alpha, cmc=cmc, k=k, s=g * a, veff=vc + u * vd, vc=vc, vd=vd, uptake=u,
                  gamma=g, beta=beta, regular=blend.micelles == "regular", shape=shape)


def _sub(b: _Batch, rows) -> _Batch:
    """The batch restricted to some flat rows."""
    return _Batch(**{f: (v[rows] if isinstance(v, np.ndarray) else v) for f, v in b.__dict__.items()
                     if f != "shape"}, shape=(len(rows), b.shape[-1]))


# ---------------------------------------------------------------------------------------------
# below the onset: the state from w = D - 1


def _solve_w(b: _Batch, n):
    """Return ``w`` on flat rows for the doses ``n`` (flat) below the onset (no micelles)."""
    alpha, k, veff, s = b.alpha, b.k, b.veff, b.s
    ka = k * alpha
    hi = n * np.sum(ka / veff, axis=-1)
    lo = np.zeros_like(hi)

    def fdf(w, idx):
        d = 1.0 + w
        q = veff[idx] + s[idx] * k[idx] / d[:, None]
        f = np.sum(ka[idx] / q, axis=-1)
        df = np.sum(ka[idx] * s[idx] * k[idx] / (d[:, None] ** 2 * q * q), axis=-1)
        g = w - n[idx] * f
        dg = 1.0 - n[idx] * df
        scale = np.where(hi[idx] > 0, hi[idx], 1.0)
        return g / scale, dg / scale

    return bracketed_newton(fdf, lo, hi, x0=hi, xtol=0.0, rtol=1e-15)


def _n_of_w(b: _Batch, w, idx):
    """Dose [mol] that leaves ``w`` below the onset, and the Q_i there (flat rows ``idx``)."""
    alpha, k = b.alpha[idx], b.k[idx]
    q = b.veff[idx] + b.s[idx] * k / (1.0 + w)[:, None]
    return w / np.sum(k * alpha / q, axis=-1), q


# ---------------------------------------------------------------------------------------------
# two components in micelles: everything explicit in y = logit(x_1)


def _two(b: _Batch, y, idx):
    """Monomer, D, Q and derivatives along x_1 = expit(y) for rows ``idx`` (two components)."""
    c_m = b.cmc[idx]
    k, s, veff = b.k[idx], b.s[idx], b.veff[idx]
    beta = b.beta.reshape(-1)[idx]
    x1, x2 = expit(y), expit(-y)
    f1, f2 = np.exp(beta * x2 * x2), np.exp(beta * x1 * x1)
    c1, c2 = x1 * f1 * c_m[:, 0], x2 * f2 * c_m[:, 1]
    d = 1.0 + k[:, 0] * c1 + k[:, 1] * c2
    dc1 = f1 * c_m[:, 0] * (1.0 - 2.0 * beta * x1 * x2)
    dc2 = -f2 * c_m[:, 1] * (1.0 - 2.0 * beta * x1 * x2)
    dd = k[:, 0] * dc1 + k[:, 1] * dc2
    q1 = veff[:, 0] + s[:, 0] * k[:, 0] / d
    q2 = veff[:, 1] + s[:, 1] * k[:, 1] / d
    dq1 = -s[:, 0] * k[:, 0] * dd / (d * d)
    dq2 = -s[:, 1] * k[:, 1] * dd / (d * d)
    t1, t2 = f1 * c_m[:, 0] * q1, f2 * c_m[:, 1] * q2  # f_i C_i Q_i
    dt1 = c_m[:, 0] * (-2.0 * beta * x2 * f1 * q1 + f1 * dq1)
    dt2 = c_m[:, 1] * (2.0 * beta * x1 * f2 * q2 + f2 * dq2)
    return dict(x1=x1, x2=x2, c1=c1, c2=c2, t1=t1, t2=t2, dt1=dt1, dt2=dt2)


def _y_limits(alpha):
    """Wide brackets of y = logit(x_1) that hold a micelle composition of any charged mixture."""
    return (np.minimum(-300.0, np.log(alpha[:, 0]) - 60.0), np.maximum(300.0, -np.log(alpha[:, 1]) + 60.0))


def _onset_two(b: _Batch, rows):
    """Onset of micelles for two components: ``(n_on, y_on)`` on flat ``rows``.

    At the onset (N_mic = 0) ``alpha_1 N = x_1 f_1 C_1 Q_1`` and ``alpha_2 N = x_2 f_2 C_2 Q_2``;
    the root of ``ln(x_1 t_1 / alpha_1) - ln(x_2 t_2 / alpha_2)`` in ``y`` (increasing: the first
    term rises and the second falls with x_1 for beta < 2).
    """
    alpha = b.alpha[rows]
    la1, la2 = np.log(alpha[:, 0]), np.log(alpha[:, 1])

    def fdf(y, idx):
        t = _two(b, y, rows[idx])
        g = np.log(t["x1"] * t["t1"]) - la1[idx] - np.log(t["x2"] * t["t2"]) + la2[idx]
        dx1 = t["x1"] * t["x2"]
        dg = dx1 * (1.0 / t["x1"] + t["dt1"] / t["t1"] + 1.0 / t["x2"] - t["dt2"] / t["t2"])
        return g, dg

    # g = y + ln(f_1 C_1 Q_1 / (f_2 C_2 Q_2)) + ln(alpha_2 / alpha_1): the root lies within the
    # bounds of the middle term around the ideal guess (|ln f_i| <= |beta|, V_eff <= Q <= V_eff + S K)
    c_m = b.cmc[rows]
    ve, sk = b.veff[rows], b.s[rows] * b.k[rows]
    x0 = (np.log(alpha[:, 0] / c_m[:, 0] * c_m[:, 1] / alpha[:, 1]) - np.log(ve[:, 0] / ve[:, 1])
          if rows.size else np.zeros(0))
    width = (np.abs(b.beta[rows]) + np.sum(np.log1p(sk / ve), axis=-1) + 1.0) if rows.size else np.zeros(0)
    wide_lo, wide_hi = _y_limits(alpha)
    lo, hi = np.maximum(x0 - width, wide_lo), np.minimum(x0 + width, wide_hi)
    y = bracketed_newton(fdf, lo, hi, x0=np.clip(x0, lo, hi), xtol=1e-13, rtol=1e-15)
    t = _two(b, y, rows)
    n_on = t["x1"] * t["t1"] / alpha[:, 0]
    return n_on, y


def _micellar_two(b: _Batch, n, rows):
    """Micellar states of two components for doses ``n`` on flat ``rows``: ``(c, x, n_mic)``."""
    alpha = b.alpha[rows]

    def fdf(y, idx):
        t = _two(b, y, rows[idx])
        a1n, a2n = alpha[idx, 0] * n[idx], alpha[idx, 1] * n[idx]
        f = a1n / t["x1"] - a2n / t["x2"] - t["t1"] + t["t2"]
        df = -a1n / t["x1"] ** 2 - a2n / t["x2"] ** 2 - t["dt1"] + t["dt2"]  # d/dx_1
        dx1 = t["x1"] * t["x2"]
        return -f / n[idx], -df * dx1 / n[idx]

    lo, hi = _y_limits(alpha)
    # tight brackets from N_mic >= 0: x_i <= alpha_i N / (min f_i C_i V_eff_i); kept where the
    # residual has the right sign there, else the wide limits
    beta = b.beta[rows]
    fmin = np.exp(np.minimum(beta, 0.0))
    cm, ve = b.cmc[rows], b.veff[rows]
    b1 = np.clip(alpha[:, 0] * n / (fmin * cm[:, 0] * ve[:, 0]), 1e-130, 1 - 1e-15)
    b2 = np.clip(alpha[:, 1] * n / (fmin * cm[:, 1] * ve[:, 1]), 1e-130, 1 - 1e-15)
    t_hi, t_lo = np.log(b1) - np.log1p(-b1), np.log1p(-b2) - np.log(b2)
    t_lo = np.minimum(t_lo, t_hi)
    all_rows = np.arange(rows.size)
    if rows.size:
        g_hi = fdf(t_hi, all_rows)[0]
        g_lo = fdf(t_lo, all_rows)[0]
        hi = np.where(g_hi >= 0, t_hi, hi)
        lo = np.where(g_lo <= 0, t_lo, lo)
    x0 = np.clip(np.log(alpha[:, 0] / alpha[:, 1]), lo, hi) if rows.size else np.zeros(0)
    y = bracketed_newton(fdf, lo, hi, x0=x0, xtol=1e-13, rtol=1e-15)
    t = _two(b, y, rows)
    c = np.stack([t["c1"], t["c2"]], axis=-1)
    x = np.stack([t["x1"], t["x2"]], axis=-1)
    n_mic = np.maximum(alpha[:, 0] * n / t["x1"] - t["t1"], 0.0)
    return c, x, n_mic


# ---------------------------------------------------------------------------------------------
# ideal mixing, any number of components


def _onset_ideal(b: _Batch, rows):
    """Onset of ideal mixed micelles: ``sum_i c_i / C_i = 1`` along the no-micelle path, in ln w."""
    alpha, k, veff, s, cmc = (x[rows] for x in (b.alpha, b.k, b.veff, b.s, b.cmc))
    inv_c = np.where(np.isfinite(cmc), 1.0 / cmc, 0.0)

    def state(lw, idx):
        w = np.exp(lw)
        d = 1.0 + w
        q = veff[idx] + s[idx] * k[idx] / d[:, None]
        dq = -s[idx] * k[idx] / (d * d)[:, None]
        ka = k[idx] * alpha[idx]
        f = np.sum(ka / q, axis=-1)
        df = -np.sum(ka * dq / (q * q), axis=-1)
        n = w / f
        dn = (f - w * df) / (f * f)
        c = alpha[idx] * n[:, None] / q
        dc = alpha[idx] * (dn[:, None] * q - n[:, None] * dq) / (q * q)
        return w, n, c, dc

    def fdf(lw, idx):
        w, _, c, dc = state(lw, idx)
        g = np.sum(c * inv_c[idx], axis=-1)
        dg = w * np.sum(dc * inv_c[idx], axis=-1)
        return np.log(g), dg / g

    kc = np.where(np.isfinite(cmc), k * cmc, 0.0)
    m = alpha.shape[-1]
    with np.errstate(divide="ignore"):
        lo = np.log(np.maximum(np.min(np.where(kc > 0, kc, np.inf), axis=-1) / m, _TINY)) - 1.0
        hi = np.log(np.maximum(np.sum(kc, axis=-1), _TINY)) + 60.0
    lo = np.where(np.isfinite(lo), lo, -690.0)
    lw = bracketed_newton(fdf, lo, hi, xtol=1e-14, rtol=1e-15)
    w, n_on, _, _ = state(lw, np.arange(rows.size))
    g = np.sum(alpha * n_on[:, None] / (veff + s * k / (1.0 + w)[:, None]) * inv_c, axis=-1)
    n_on = np.where(np.isfinite(g) & (np.abs(g - 1.0) < 1e-6), n_on, np.inf)  # no onset reachable
    return n_on, w


def _micellar_ideal(b: _Batch, n, rows):
    """Micellar states of ideal mixing for doses ``n`` on flat ``rows``: ``(c, x, n_mic)``.

    Outer root ``mu = N_mic / N`` of ``sum_i c_i / C_i = 1``; inner root ``w`` of
    ``w = sum_i K_i c_i`` with ``c_i = alpha_i N / (Q_i(w) + N_mic / C_i)``.
    """
    alpha, k, veff, s, cmc = (x[rows] for x in (b.alpha, b.k, b.veff, b.s, b.cmc))
    inv_c = np.where(np.isfinite(cmc), 1.0 / cmc, 0.0)

    def inner(mu, idx):
        nn = n[idx]
        mm = mu * nn
        a = alpha[idx] * nn[:, None]
        kk, vv, ss, ic = k[idx], veff[idx], s[idx], inv_c[idx]
        base = vv + mm[:, None] * ic
        hi = np.sum(kk * a / base, axis=-1)

        def fdf_w(w, j):
            d = 1.0 + w
            den = base[j] + ss[j] * kk[j] / d[:, None]
            c = a[j] / den
            dc = c * ss[j] * kk[j] / (d * d)[:, None] / den  # dc/dw
            g = w - np.sum(kk[j] * c, axis=-1)
            dg = 1.0 - np.sum(kk[j] * dc, axis=-1)
            sc = np.where(hi[j] > 0, hi[j], 1.0)
            return g / sc, dg / sc

        w = bracketed_newton(fdf_w, np.zeros_like(hi), hi, x0=hi, xtol=0.0, rtol=1e-15)
        d = 1.0 + w
        den = base + ss * kk / d[:, None]
        c = a / den
        return w, c, den

    def fdf(mu, idx):
        w, c, den = inner(mu, idx)
        d = 1.0 + w
        ic, kk, ss = inv_c[idx], k[idx], s[idx]
        dc_dm = -c * ic / den  # partial, per unit N_mic
        dc_dw = c * ss * kk / (d * d)[:, None] / den
        dw_dm = np.sum(kk * dc_dm, axis=-1) / (1.0 - np.sum(kk * dc_dw, axis=-1))
        total = dc_dm + dc_dw * dw_dm[:, None]
        r = 1.0 - np.sum(c * ic, axis=-1)
        dr = -np.sum(total * ic, axis=-1) * n[idx]  # d/dmu
        return r, dr

    mu = bracketed_newton(fdf, np.zeros(rows.size), np.ones(rows.size), xtol=1e-15, rtol=1e-15)
    _, c, _ = inner(mu, np.arange(rows.size))
    x = c * inv_c
    return c, x, mu * n


# ---------------------------------------------------------------------------------------------
# public functions


def _onset(b: _Batch):
    """Return the onset dose [mol] and the rows' w there (inf where micelles never form), flat."""
    rows_all = np.arange(b.alpha.shape[0])
    finite = np.isfinite(b.cmc)
    any_finite = np.any(finite, axis=-1)
    n_on = np.full(rows_all.size, np.inf)
    if b.alpha.shape[-1] == 2:
        two = rows_all[np.all(finite, axis=-1)]
        if two.size:
            n_on[two] = _onset_two(b, two)[0]
        rest = rows_all[any_finite & ~np.all(finite, axis=-1)]
    else:
        rest = rows_all[any_finite]
    if rest.size:
        n_on[rest] = _onset_ideal(b, rest)[0]
    return n_on


def _use_two(b: _Batch, rows):
    return b.alpha.shape[-1] == 2 and bool(np.all(np.isfinite(b.cmc[rows])))


@_quiet
def onset_dose(blend: Blend, *, continuous_volume, dispersed_volume, area):
    """Return the dose [mol] at which micelles first form in the batch (inf if they never do).

    The batch's water, oil and interface take their share before any micelle forms, so the
    onset dose exceeds ``mixed_cmc * V_c`` (see :func:`mixed_cmc`).
    """
    b = _batch(blend, continuous_volume, dispersed_volume, area)
    return _onset(b).reshape(b.shape[:-1])


@_quiet
def mixed_cmc(fractions, cmc, micelles: str = "ideal", interaction=0.0):
    """Return the mixed CMC [mol/m**3] and micelle composition at the onset (continuous phase alone).

    Parameters
    ----------
    fractions : ndarray
        alpha_i, mole fractions of the monomer mixture (last axis) [-].
    cmc : ndarray
        C_i, pure CMCs [mol/m**3].
    micelles : str
        'ideal' or 'regular' (two components).
    interaction : float or ndarray
        beta [-] (regular only).

    Returns
    -------
    (ndarray, ndarray)
        The total monomer concentration at the onset [mol/m**3] and x_i there [-].

    Notes
    -----
    Ideal (Clint): ``1/C_12 = sum alpha_i / C_i``, ``x_i = alpha_i C_12 / C_i``.  Regular
    (Rubingh): ``alpha_1 C_12 = x_1 f_1 C_1``, ``alpha_2 C_12 = x_2 f_2 C_2``.

    Examples
    --------
    >>> c12, x = mixed_cmc([0.5, 0.5], [8.2, 0.11])  # SDS-like with C12E8-like, in mM
    >>> round(float(c12), 5)
    0.21709
    >>> round(float(mixed_cmc([0.5, 0.5], [8.2, 0.11], "regular", -4.1)[0]), 5)
    0.16274
    """
    alpha = np.asarray(fractions, dtype=float)
    alpha = alpha / np.sum(alpha, axis=-1, keepdims=True)
    # no interface and no second phase: K only scales D, which then does not matter
    blend = Blend(alpha, np.asarray(cmc, dtype=float), np.zeros_like(alpha), np.ones_like(alpha),
                  np.zeros_like(alpha), micelles, interaction)
    b = _batch(blend, 1.0, 0.0, 0.0)
    rows = np.arange(b.alpha.shape[0])
    shape = b.shape[:-1]
    if b.regular or _use_two(b, rows):
        n_on, y = _onset_two(b, rows)
        x = np.stack([expit(y), expit(-y)], axis=-1)
    else:
        n_on, _ = _onset_ideal(b, rows)
        c_m = b.cmc
        x = np.where(np.isfinite(c_m), b.alpha * n_on[:, None] / np.where(np.isfinite(c_m), c_m, 1.0), 0.0)
    return n_on.reshape(shape), x.reshape(shape + (b.alpha.shape[-1],))


@_quiet
def state_for_dose(dose_mol, blend: Blend, *, continuous_volume, dispersed_volume, area) -> BlendState:
    """Return the equilibrium state of every component for a total dose [mol] (forward).

    Parameters
    ----------
    dose_mol : float or ndarray
        N, total active of the blend per batch [mol], at the blend's mole fractions.
    blend : Blend
    continuous_volume, dispersed_volume : float or ndarray
        V_c, V_d [m**3].
    area : float or ndarray
        A [m**2].

    Returns
    -------
    BlendState
        Shape ``broadcast(...) + (m,)``; ``total_mol`` equals ``alpha_i N`` to about 1e-12.

    Examples
    --------
    >>> n1, n2 = 1e-3 + 3.3e-6 * 2.0 / 3.5, 1e-3 + 3.3e-6 * 0.5 / 3.5  # c_i V + Gamma_i A, 1 m**3, 1 m**2
    >>> bl = Blend([n1 / (n1 + n2), n2 / (n1 + n2)], [np.inf, np.inf], [3.3e-6, 3.3e-6],
    ...            [2000.0, 500.0], [0.0, 0.0])
    >>> s = state_for_dose(n1 + n2, bl, continuous_volume=1.0, dispersed_volume=0.0, area=1.0)
    >>> [round(float(v), 12) for v in s.free_concentration]  # 1e-3 mol/m**3 of each
    [0.001, 0.001]
    """
    n = np.asarray(dose_mol, dtype=float)
    b = _batch(blend, continuous_volume, dispersed_volume, area, extra_shape=n.shape)
    nf = np.broadcast_to(n, b.shape[:-1]).reshape(-1).astype(float)
    return _forward(b, nf, reshape=True)


def _forward(b: _Batch, nf, reshape=False, n_on=None) -> BlendState:
    """The forward solve on a flat batch and flat doses ``nf`` [mol] (``n_on``: onsets if known)."""
    n_on = _onset(b) if n_on is None else n_on
    rows = np.arange(nf.size)
    mic = (nf >= n_on) & (nf > 0)
    m = b.alpha.shape[-1]
    c = np.zeros((nf.size, m))
    x = np.full((nf.size, m), np.nan)
    below = rows[~mic & (nf > 0)]
    if below.size:
        sb = _sub(b, below)
        w = _solve_w(sb, nf[below])
        q = sb.veff + sb.s * sb.k / (1.0 + w)[:, None]
        c[below] = sb.alpha * nf[below, None] / q
    above = rows[mic]
    if above.size:
        if _use_two(b, above):
            ca, xa, _ = _micellar_two(b, nf[above], above)
        else:
            ca, xa, _ = _micellar_ideal(b, nf[above], above)
        c[above], x[above] = ca, xa
    return _state_from_c(b, c, nf, mic, x, b.shape if reshape else (nf.size, m))


def _state_from_c(b: _Batch, c, nf, mic, x, shape) -> BlendState:
    """Assemble the state from monomer concentrations (flat rows); micelles take the rest."""
    d = 1.0 + np.sum(b.k * c, axis=-1)
    theta = b.k * c / d[:, None]
    cont = c * b.vc
    disp = b.uptake * c * b.vd
    inter = b.s * theta
    rest = b.alpha * nf[:, None] - cont - disp - inter
    micelle = np.where(mic[:, None], np.maximum(rest, 0.0), 0.0)
    x = np.where(mic[:, None], x, np.nan)
    return BlendState(*(v.reshape(shape) for v in (c, theta, cont, disp, inter, micelle, x)))


@_quiet
def surface_pressure(state: BlendState, max_surface_excess, temperature, gibbs_prefactor=1.0):
    """Return the surface pressure [N/m] of a blend's interface (broadcast shape, no component axis).

    ``Pi = R T n_mix Gamma_mix ln(1 + sum_j K_j c_j)`` with ``ln(1 + sum K c) = -ln(1 - theta)``;
    exact (the ideal adsorbed solution) for equal Gamma_inf and n.  For unequal ones our mixing
    rule takes ``Gamma_mix`` and ``n_mix`` as the coverage-weighted means of the components'
    ``Gamma_inf_i`` and ``n_i`` (an approximation; tensions of such blends are estimates).

    Examples
    --------
    >>> n1, n2 = 1e-3 + 3.3e-6 * 2.0 / 3.5, 1e-3 + 3.3e-6 * 0.5 / 3.5
    >>> bl = Blend([n1 / (n1 + n2), n2 / (n1 + n2)], [np.inf, np.inf], [3.3e-6, 3.3e-6],
    ...            [2000.0, 500.0], [0.0, 0.0])
    >>> s = state_for_dose(n1 + n2, bl, continuous_volume=1.0, dispersed_volume=0.0, area=1.0)
    >>> round(float(surface_pressure(s, 3.3e-6, 298.15)) * 1e3, 3)  # mN/m
    10.248
    """
    th = np.asarray(state.coverage, dtype=float)
    g = np.asarray(max_surface_excess, dtype=float)
    nn = np.asarray(gibbs_prefactor, dtype=float)
    total = np.sum(th, axis=-1)
    safe = np.where(total > 0, total, 1.0)
    g_mix = np.where(total > 0, np.sum(th * g, axis=-1) / safe, np.mean(g * np.ones_like(th), axis=-1))
    n_mix = np.where(total > 0, np.sum(th * nn * np.ones_like(th), axis=-1) / safe, 1.0)
    with np.errstate(divide="ignore"):
        return R * np.asarray(temperature, dtype=float) * n_mix * g_mix * -np.log1p(-total)


# ---------------------------------------------------------------------------------------------
# the backward direction: the smallest dose that reaches a target


def _metric(kind, state: BlendState, pressure_fn):
    if kind == "coverage":
        return np.sum(state.coverage, axis=-1)
    if kind == "free_concentration":
        return np.sum(state.free_concentration, axis=-1)
    return pressure_fn(state)


SCAN_DECADES = 6.0  # above the onset, doses up to 1e6 times the onset dose are scanned
SCAN_POINTS = 37


@_quiet
def dose_for_target(kind: str, value, blend: Blend, *, continuous_volume, dispersed_volume, area,
                    pressure_fn=None, scan_all=False):
    """Return ``(dose_mol, feasible, best_metric, best_dose)``: the smallest dose reaching a target.

    Parameters
    ----------
    kind : str
        'coverage' (total theta [-]), 'free_concentration' (total monomer [mol/m**3]) or
        'pressure' (surface pressure [N/m], through ``pressure_fn(state)``).
    value : float or ndarray
        The target in SI.
    blend, continuous_volume, dispersed_volume, area
        As :func:`state_for_dose`.

    Returns
    -------
    tuple of ndarray
        The dose [mol] (nan where unreachable), reachable (bool), the largest value of the metric
        found and the dose giving it [mol].

    Notes
    -----
    Below the onset the metric rises with ``w`` and the dose is explicit in ``w`` (coverage) or one
    bisection in ``ln w``.  Above the onset the metric may fall again; doses from the onset up to
    ``10**SCAN_DECADES`` times it are scanned on a log grid in one forward call, and the first
    crossing is refined by bisection in ``ln N``.  The largest reachable value is the grid's
    largest (and the value as ``N`` grows without bound, where ``x_i -> alpha_i``); with
    ``scan_all`` every row with an onset is scanned, so the largest value holds for every row.
    """
    target = np.asarray(value, dtype=float)
    b = _batch(blend, continuous_volume, dispersed_volume, area, extra_shape=target.shape)
    shape = b.shape[:-1]
    tf = np.broadcast_to(target, shape).reshape(-1).astype(float)
    rows = np.arange(tf.size)
    n_on = _onset(b)

    def metric_rows(nv, r):
        st = _forward(_sub(b, r), np.asarray(nv, dtype=float), n_on=n_on[r])
        return _metric(kind, st, (lambda s_: pressure_fn(s_, r)) if pressure_fn is not None else None)

    fin = np.isfinite(n_on)
    m_on = np.full(tf.size, np.inf)
    if np.any(fin):
        r = rows[fin]
        m_on[fin] = metric_rows(n_on[fin] * (1.0 - 1e-12), r)
    dose = np.full(tf.size, np.nan)
    best = np.where(fin, m_on, np.nan)
    best_dose = np.where(fin, n_on, np.nan)
    low = rows[tf <= m_on]
    if low.size:
        dose[low] = _below_onset_dose(kind, tf[low], b, low, n_on[low], metric_rows)
        best[low] = np.where(fin[low], np.maximum(best[low], tf[low]), tf[low])
        best_dose[low] = np.where(fin[low], best_dose[low], dose[low])
    # above the onset: scan (every row with an onset when the largest value is wanted)
    high = rows[(tf > m_on) | (fin & bool(scan_all))] if scan_all else rows[tf > m_on]
    if high.size:
        grid = n_on[high, None] * np.logspace(0.0, SCAN_DECADES, SCAN_POINTS)[None, :]
        rr = np.repeat(high, SCAN_POINTS)
        mg = metric_rows(grid.reshape(-1), rr).reshape(high.size, SCAN_POINTS)
        arg = np.argmax(mg, axis=1)
        top = mg[np.arange(high.size), arg]
        better = top > best[high]
        best[high] = np.where(better, top, best[high])
        best_dose[high] = np.where(better, grid[np.arange(high.size), arg], best_dose[high])
        need = tf[high] > m_on[high]
        ok = (mg >= tf[high, None]) & need[:, None]
        hit = np.any(ok, axis=1)
        j = np.argmax(ok, axis=1)
        if np.any(hit):
            h = np.flatnonzero(hit)
            r = high[h]
            jj = j[h]
            lo = np.log(np.where(jj > 0, grid[h, np.maximum(jj - 1, 0)], n_on[r] * (1.0 - 1e-12)))
            hi = np.log(grid[h, jj])
            f_lo = np.where(jj > 0, mg[h, np.maximum(jj - 1, 0)], m_on[r]) - tf[r]
            f_hi = mg[h, jj] - tf[r]
            dose[r] = np.exp(_illinois(lambda x, idx: metric_rows(np.exp(x), r[idx]) - tf[r[idx]],
                                       lo, hi, f_lo, f_hi))
            best[r] = np.maximum(best[r], tf[r])
    feasible = np.isfinite(dose)
    return (dose.reshape(shape), feasible.reshape(shape), best.reshape(shape), best_dose.reshape(shape))


def _illinois(f, lo, hi, f_lo, f_hi, rtol=1e-14, maxiter=100):
    """Vectorised Illinois (modified regula falsi) root of ``f`` with ``f(lo) < 0 <= f(hi)``.

    Returns the smallest bracket end ``hi`` known to satisfy ``f >= 0``, converged to ``rtol``
    relative in ``x`` (Dowell and Jarratt, BIT 11 (1971) 168 [from memory]).
    """
    lo, hi, f_lo, f_hi = (np.array(v, dtype=float, copy=True) for v in (lo, hi, f_lo, f_hi))
    side = np.zeros(lo.size, dtype=int)
    open_ = np.flatnonzero(hi - lo > rtol * np.maximum(1.0, np.abs(hi)))
    for _ in range(maxiter):
        if open_.size == 0:
            break
        a, b, fa, fb = lo[open_], hi[open_], f_lo[open_], f_hi[open_]
        x = b - fb * (b - a) / (fb - fa)
        bad = ~np.isfinite(x) | (x <= a) | (x >= b)
        x = np.where(bad, 0.5 * (a + b), x)
        fx = f(x, open_)
        up = fx >= 0
        hi[open_] = np.where(up, x, b)
        f_hi[open_] = np.where(up, fx, fb)
        lo[open_] = np.where(up, a, x)
        f_lo[open_] = np.where(up, fa, fx)
        # Illinois: halve the stale end's value when the same end is kept twice
        s_new = np.where(up, 1, -1)
        stale = side[open_] == s_new
        f_lo[open_] = np.where(stale & up, 0.5 * f_lo[open_], f_lo[open_])
        f_hi[open_] = np.where(stale & ~up, 0.5 * f_hi[open_], f_hi[open_])
        side[open_] = s_new
        done = hi[open_] - lo[open_] <= rtol * np.maximum(1.0, np.abs(hi[open_]))
        open_ = open_[~done]
    return hi


def _below_onset_dose(kind, target, b: _Batch, rows, n_on, metric_rows):
    """Dose [mol] that gives ``target`` below the onset (no micelles), on flat ``rows``."""
    if kind == "coverage":
        w = target / (1.0 - target)
        return _n_of_w(b, w, rows)[0]
    # the metric rises with the dose below the onset: bisection in ln N between 0 and the onset
    top = np.where(np.isfinite(n_on), n_on * (1.0 - 1e-12), np.nan)
    # no onset: start from the dose that leaves this monomer total without any interface
    alpha, veff = b.alpha[rows], b.veff[rows]
    guess = np.where(np.isfinite(top), top, 1.0)
    hi = np.log(guess)
    if np.any(~np.isfinite(top)):
        # grow the bracket until the metric is reached (capped)
        miss = ~np.isfinite(top)
        hi_m = np.log(np.maximum(np.sum(alpha * veff, axis=-1)[miss] * np.maximum(target[miss], _TINY), _TINY))
        hi[miss] = hi_m
        for _ in range(200):
            reach = metric_rows(np.exp(hi), rows) >= target
            if np.all(reach | ~miss):
                break
            hi = np.where(miss & ~reach, hi + 2.0, hi)
    lo = hi - 80.0
    f_lo = metric_rows(np.exp(lo), rows) - target
    f_hi = metric_rows(np.exp(hi), rows) - target
    return np.exp(_illinois(lambda x, idx: metric_rows(np.exp(x), rows[idx]) - target[idx], lo, hi, f_lo, f_hi))


@_quiet
def apparent_cmc(blend: Blend, oil_water_ratio):
    """Return the apparent CMC [mol per m**3 of water] against the oil/water volume ratio.

    The total active per volume of water at which micelles first form when water and oil (volume
    ratio ``r = V_oil / V_water``) share the blend, the interface left out: the pseudo-phase
    treatment of technical ethoxylates with per-homologue partitioning [4].  For ideal mixing
    ``1/C_app = sum_i alpha_i / (C_i (1 + P_i r))`` (O/W, ``uptake_i = P_i``); the hydrophobic
    components move into the oil, so the apparent CMC rises with ``r``.

    Parameters
    ----------
    blend : Blend
        Its ``uptake`` are the oil/water partition coefficients (O/W).
    oil_water_ratio : float or ndarray
        r [-].

    Examples
    --------
    >>> bl = Blend([0.5, 0.5], [0.02, 0.1], [3e-6, 3e-6], [1.0, 1.0], [500.0, 1.0])
    >>> [round(float(c), 4) for c in apparent_cmc(bl, np.array([0.0, 0.25, 1.0]))]  # mM
    [0.0333, 0.2382, 0.3922]
    """
    r = np.asarray(oil_water_ratio, dtype=float)
    return onset_dose(blend, continuous_volume=np.ones_like(r), dispersed_volume=r, area=np.zeros_like(r))


def poisson_homologues(mean_eo, *, tail_molar_mass, ln_cmc_at_zero, ln_cmc_per_eo, ln_p_at_zero=0.0,
                       ln_p_per_eo=0.0, coverage_of_distribution=0.999, eo_molar_mass=0.04405):
    """Expand a nominal ethoxylate into homologue cuts with a Poisson distribution of EO number.

    Parameters
    ----------
    mean_eo : float
        Mean number of ethylene-oxide units per molecule, nu [-].
    tail_molar_mass : float
        Molar mass of the molecule without EO units (the alcohol) [kg/mol].
    ln_cmc_at_zero, ln_cmc_per_eo : float
        The log-linear rule ``ln(CMC_j / (mol/m**3)) = a + b j`` (user-given coefficients).
    ln_p_at_zero, ln_p_per_eo : float
        ``ln P_j = c + d j`` for the oil/water partition coefficient (d < 0: the short-EO homologues
        go into the oil).
    coverage_of_distribution : float
        The cuts kept hold at least this share of the molecules (renormalised) [-].
    eo_molar_mass : float
        One EO unit, C2H4O, 44.05 g/mol [kg/mol].

    Returns
    -------
    dict
        ``eo`` (int array), ``mole_fraction``, ``molar_mass`` [kg/mol], ``cmc`` [mol/m**3],
        ``partition_coefficient`` [-].

    Notes
    -----
    Ethoxylation without narrowing gives close to a Poisson distribution of adduct numbers,
    ``p_j = exp(-nu) nu**j / j!`` (Weibull and Nycander, Acta Chem. Scand. 8 (1954) 847, from memory);
    the log-linear CMC and partition rules per EO unit are the form used for homologue series in the
    pseudo-phase treatment of technical ethoxylates [4].

    Examples
    --------
    >>> h = poisson_homologues(6.5, tail_molar_mass=0.18634, ln_cmc_at_zero=-3.0, ln_cmc_per_eo=0.1)
    >>> round(float(h["mole_fraction"].sum()), 12), int(h["eo"][np.argmax(h["mole_fraction"])])
    (1.0, 6)
    """
    from scipy.stats import poisson  # deferred: scipy.stats is slow to import and only this uses it

    nu = float(mean_eo)
    if not (0 < nu <= 100):
        raise ValueError(f"mean_eo: expected a mean EO number between 0 and 100, got {mean_eo!r}")
    lo, hi = poisson.interval(coverage_of_distribution, nu)
    j = np.arange(int(lo), int(hi) + 1)
    p = poisson.pmf(j, nu)
    p = p / p.sum()
    return {
        "eo": j, "mole_fraction": p, "molar_mass": tail_molar_mass + eo_molar_mass * j,
        "cmc": np.exp(ln_cmc_at_zero + ln_cmc_per_eo * j),
        "partition_coefficient": np.exp(ln_p_at_zero + ln_p_per_eo * j),
    }


@_quiet
def area_for_dose(coverage, dose_mol, blend: Blend, *, continuous_volume, dispersed_volume):
    """Return the interfacial area [m**2] a blend dose covers at total coverage ``coverage`` (no micelles).

    With ``w = theta / (1 - theta)`` fixed, the balance below the onset reads
    ``sum_i K_i alpha_i / (V_eff_i + Gamma_inf_i K_i A / (1 + w)) = w / N``, decreasing in ``A``:
    one root in ``ln A`` per element (bisection).  0 where the dose cannot even bring the bulk to
    that coverage; use below the onset of micelles only.

    Examples
    --------
    >>> bl = Blend([1.0], [np.inf], [2e-6], [10.0], [0.0])  # one component: A = (N - c V) / (Gamma theta)
    >>> c = 0.5 / (10.0 * 0.5)  # theta 0.5 needs K c = 1
    >>> round(float(area_for_dose(0.5, 1.0, bl, continuous_volume=1.0, dispersed_volume=0.0)), 6)
    900000.0
    """
    th = np.asarray(coverage, dtype=float)
    n = np.asarray(dose_mol, dtype=float)
    shape = np.broadcast_shapes(th.shape, n.shape)
    b = _batch(blend, continuous_volume, dispersed_volume, np.ones(shape), extra_shape=shape)
    thf = np.broadcast_to(th, b.shape[:-1]).reshape(-1)
    nf = np.broadcast_to(n, b.shape[:-1]).reshape(-1)
    w = thf / (1.0 - thf)
    ka = b.k * b.alpha
    need = w / np.where(nf > 0, nf, np.nan)
    g = b.gamma * b.k / (1.0 + w)[:, None]

    def f(lna):
        return np.sum(ka / (b.veff + g * np.exp(lna)[:, None]), axis=-1) - need

    possible = f(np.full(nf.size, -700.0)) > 0
    # A <= N / (Gamma_min theta) bounds the root from above
    hi = np.log(np.maximum(nf / np.maximum(np.min(b.gamma, axis=-1) * thf, _TINY), _TINY)) + 1.0
    lo = np.full(nf.size, -700.0)
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        pos = f(mid) > 0
        lo = np.where(pos, mid, lo)
        hi = np.where(pos, hi, mid)
        if np.all(hi - lo < 1e-13 * np.maximum(1.0, np.abs(hi))):
            break
    return np.where(possible, np.exp(0.5 * (lo + hi)), 0.0).reshape(shape)


@_quiet
def dose_for_area(coverage, area, blend: Blend, *, continuous_volume, dispersed_volume):
    """Return the dose [mol] that covers ``area`` [m**2] at total ``coverage`` below the onset (explicit)."""
    th = np.asarray(coverage, dtype=float)
    b = _batch(blend, continuous_volume, dispersed_volume, area, extra_shape=th.shape)
    w = np.broadcast_to(th / (1.0 - th), b.shape[:-1]).reshape(-1)
    q = b.veff + b.s * b.k / (1.0 + w)[:, None]
    return (w / np.sum(b.k * b.alpha / q, axis=-1)).reshape(b.shape[:-1])
