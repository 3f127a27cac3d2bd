"""Measure `fit_partition_arrays` on 10**6 pairs against 10**4 in the same process (not a test).

Run: ``.venv/bin/python tests/bench_fit_partition.py``.  Prints the wall time of each size, the
ratio of the two (about 100 for a fit linear in n; the old per-gap least_squares loop was
quadratic, minutes at 10**6) and the peak traced memory of the large fit without the per-row
table.  Synthetic pairs: P = 20, CMC 0.1 mM, 5 % log-normal noise, seeded.
"""

from __future__ import annotations

import time
import tracemalloc

import numpy as np

from sizing.fitting.partition import fit_partition_arrays


def pairs(n, seed=0):
    rng = np.random.default_rng(seed)
    cw = np.exp(rng.uniform(np.log(1e-3), 0.0, n))
    return cw, 20.0 * np.minimum(cw, 0.1) * np.exp(rng.normal(0.0, 0.05, n))


def timed(n, **kw):
    cw, co = pairs(n)
    t0 = time.perf_counter()
    res = fit_partition_arrays(cw, co, **kw)
    return time.perf_counter() - t0, res


if __name__ == "__main__":
    t_small, _ = timed(10**4)
    t_large, res = timed(10**6, with_rows=False)
    t_rows, _ = timed(10**6)
    cw, co = pairs(10**6)
    tracemalloc.start()
    fit_partition_arrays(cw, co, with_rows=False)
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"10**4 pairs: {t_small:.3f} s; 10**6 pairs: {t_large:.3f} s without rows, {t_rows:.3f} s with "
          f"the row table; ratio 10**6/10**4 = {t_large / t_small:.0f}; peak {peak / 1e6:.0f} MB (arrays 8 MB each)")
    print(f"P = {res.partition_coefficient:.4f} (95 %: {res.interval[0]:.4f} to {res.interval[1]:.4f}), "
          f"CMC {res.cmc:.4g} mol/m**3 ({res.cmc_source})")
