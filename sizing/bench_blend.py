"""The blend entry of ``sizing bench``: a two-component regular-solution forward solve with micelles.

The vectorised solve (:func:`sizing.physics.blend.state_for_dose`, one call over every case) runs
against a per-case loop of ``scipy.optimize.brentq`` on the same equations (the onset of micelles,
then the micellar composition), in the same run; both give the free monomer of each component, and
the largest relative difference is reported.  Never asserted in tests (timings vary by machine).
"""

from __future__ import annotations

import math
import time

import numpy as np

from .physics import blend as B


def random_blends(n: int, seed: int = 11) -> dict:
    """``n`` two-component regular blends with micelles (doses 1.5-50 times the onset) [SI]."""
    rng = np.random.default_rng(seed)
    a1 = rng.uniform(0.1, 0.9, n)
    return dict(
        alpha=np.c_[a1, 1 - a1], cmc=np.c_[rng.uniform(1.0, 10.0, n), rng.uniform(0.01, 0.5, n)],
        gamma=np.c_[rng.uniform(2e-6, 4e-6, n), rng.uniform(2e-6, 4e-6, n)],
        k=np.c_[rng.uniform(0.3, 5.0, n), rng.uniform(50.0, 2000.0, n)],
        uptake=np.c_[np.zeros(n), rng.uniform(0.0, 30.0, n)], beta=rng.uniform(-8.0, -1.0, n),
        vc=rng.uniform(0.5, 0.9, n), area=rng.uniform(1e5, 1e6, n), factor=np.exp(rng.uniform(np.log(1.5), np.log(50), n)),
    )


def _blend(c, idx=slice(None)):
    return B.Blend(c["alpha"][idx], c["cmc"][idx], c["gamma"][idx], c["k"][idx], c["uptake"][idx], "regular",
                   c["beta"][idx])


def vectorised(c, dose):
    bl = _blend(c)
    return B.state_for_dose(dose, bl, continuous_volume=c["vc"], dispersed_volume=1 - c["vc"],
                            area=c["area"]).free_concentration


def loop(c, dose, idx):
    """Per-case scipy: brentq on the onset, then on the micellar composition (one case at a time)."""
    from scipy.optimize import brentq  # deferred: only the benchmark loop needs it

    out = np.empty((len(idx), 2))
    for r, i in enumerate(idx):
        a, cm, g, k, u = c["alpha"][i], c["cmc"][i], c["gamma"][i], c["k"][i], c["uptake"][i]
        beta, vc, area, n = c["beta"][i], c["vc"][i], c["area"][i], dose[i]
        veff, s = vc + u * (1 - vc), g * area

        def parts(y):
            x1, x2 = 1.0 / (1.0 + math.exp(-y)), 1.0 / (1.0 + math.exp(y))
            f1, f2 = math.exp(beta * x2 * x2), math.exp(beta * x1 * x1)
            c1, c2 = x1 * f1 * cm[0], x2 * f2 * cm[1]
            d = 1.0 + k[0] * c1 + k[1] * c2
            q1, q2 = veff[0] + s[0] * k[0] / d, veff[1] + s[1] * k[1] / d
            return x1, x2, c1, c2, f1 * cm[0] * q1, f2 * cm[1] * q2

        def f(y):  # N_mic from either component's balance: equal at the root
            x1, x2, _, _, t1, t2 = parts(y)
            return a[0] * n / x1 - t1 - (a[1] * n / x2 - t2)

        def g(y):  # the onset (N_mic = 0): both balances give the same dose
            x1, x2, _, _, t1, t2 = parts(y)
            return math.log(x1 * t1 / a[0]) - math.log(x2 * t2 / a[1])

        y_on = brentq(g, -60.0, 60.0, xtol=1e-14, rtol=1e-15, maxiter=500)
        x1, _, _, _, t1, _ = parts(y_on)
        if n < x1 * t1 / a[0]:  # below the onset: not drawn here (doses are 1.5-50 x the onset)
            raise ValueError("benchmark case below the onset of micelles")
        y = brentq(f, -60.0, 60.0, xtol=1e-14, rtol=1e-15, maxiter=500)
        out[r] = parts(y)[2:4]  # c_1, c_2
    return out


def bench_blend(n: int = 100_000, loop_n: int = 300, repeats: int = 3) -> dict:
    """Return ``{ratio, cases_per_s, max_rel_diff, ...}``: vectorised against the per-case loop."""
    c = random_blends(n)
    onset = B.onset_dose(_blend(c), continuous_volume=c["vc"], dispersed_volume=1 - c["vc"], area=c["area"])
    dose = onset * c["factor"]
    idx = np.linspace(0, n - 1, loop_n).astype(int)
    t_vec, t_loop = [], []
    for _ in range(repeats):  # interleaved, so both sides see the same machine load
        t0 = time.process_time()
        got = vectorised(c, dose)
        t_vec.append(time.process_time() - t0)
        t0 = time.process_time()
        ref = loop(c, dose, idx)
        t_loop.append(time.process_time() - t0)
    per_vec, per_loop = min(t_vec) / n, min(t_loop) / loop_n
    rel = float(np.max(np.abs(got[idx] - ref) / np.abs(ref)))
    return {"ratio": per_loop / per_vec, "cases_per_s": 1.0 / per_vec, "max_rel_diff": rel,
            "cases": n, "loop_cases": loop_n, "vectorised_s": {"min": min(t_vec), "median": float(np.median(t_vec))},
            "loop_s": {"min": min(t_loop), "median": float(np.median(t_loop))}}
