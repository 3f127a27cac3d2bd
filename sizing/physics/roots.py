"""A vectorised, bracketed Newton solver for monotone scalar equations over arrays.

Every element has its own bracket ``[lo, hi]`` with ``f(lo) <= 0 <= f(hi)`` (f increasing).
A Newton step that leaves the bracket is replaced by bisection, so the method converges
like Newton near the root and never diverges.  One call solves millions of equations.
"""

from __future__ import annotations

import numpy as np


def bracketed_newton(fdf, lo, hi, x0=None, *, xtol=1e-13, rtol=4e-16, maxiter=200):
    """Solve ``f(x) = 0`` elementwise for increasing ``f`` inside ``[lo, hi]``.

    Parameters
    ----------
    fdf : callable
        ``fdf(x, idx) -> (f, dfdx)`` evaluated on the sub-array of elements ``idx`` still open
        (units of x as the caller's).
    lo, hi : ndarray
        Brackets (same shape); ``f(lo) <= 0 <= f(hi)`` is assumed.
    x0 : ndarray, optional
        Start values; the midpoint by default.
    xtol, rtol : float
        Absolute and relative tolerances on x.
    maxiter : int
        Iteration cap (the bracket at least halves every second step, so 200 is ample).

    Returns
    -------
    ndarray
        The roots, converged to ``|dx| <= xtol + rtol |x|``, shape of ``lo``.

    Raises
    ------
    None.
        Elements still open after ``maxiter`` return their last iterate.

    Notes
    -----
    Each step tightens the bracket with the sign of f and takes the Newton step
    ``x - f/f'``; it bisects instead when the Newton step leaves the bracket or is not at
    most half the previous step (the safeguard of ``rtsafe`` [1]), so the method converges
    quadratically near a simple root and never cycles (Newton alone cycles around the
    inflection that Frumkin isotherms with strong repulsion have).

    Examples
    --------
    >>> import numpy as np
    >>> x = bracketed_newton(lambda x, i: (x * x - 2.0, 2.0 * x), np.array([0.0]), np.array([2.0]))
    >>> round(float(x[0]), 12)
    1.414213562373

    References
    ----------
    1. Press, W. H., Teukolsky, S. A., Vetterling, W. T. and Flannery, B. P., Numerical Recipes:
       The Art of Scientific Computing, 3rd ed., Cambridge University Press (2007), sec. 9.4
       (Newton-Raphson with bracketing, rtsafe) [from memory].
    """
    lo = np.array(lo, dtype=float, copy=True)
    hi = np.array(hi, dtype=float, copy=True)
    x = 0.5 * (lo + hi) if x0 is None else np.clip(np.array(x0, dtype=float, copy=True), lo, hi)
    shape = x.shape
    lo, hi, x = lo.ravel(), hi.ravel(), x.ravel()
    idx = np.flatnonzero(hi - lo > xtol + rtol * np.abs(x))
    # the open elements are kept packed (their x, bracket and previous step), so each step costs
    # in proportion to what is still open; a converged element is written back once
    xi, lo, hi = x[idx], lo[idx], hi[idx]
    last = np.full(idx.shape, np.inf)  # size of each element's previous step
    for _ in range(maxiter):
        if idx.size == 0:
            break
        f, df = fdf(xi, idx)
        # tighten the brackets with the sign of f
        neg = f < 0
        lo = np.where(neg, xi, lo)
        hi = np.where(neg, hi, xi)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = f / df
            xn = xi - step
        # bisect when Newton leaves the bracket or does not halve the previous step (a Newton
        # cycle around an inflection, as Frumkin with strong repulsion makes)
        # a Newton step below the tolerance is the answer (it may round onto a bracket end)
        tol = xtol + rtol * np.abs(xi)
        tiny = np.isfinite(xn) & (np.abs(xn - xi) <= tol)
        bad = (~np.isfinite(xn) | (xn <= lo) | (xn >= hi) | (np.abs(xn - xi) > 0.5 * last)) & ~tiny
        xn = np.where(bad, 0.5 * (lo + hi), xn)
        last = np.abs(xn - xi)
        done = (f == 0) | tiny | (last <= tol) | (hi - lo <= tol)
        xn = np.where(f == 0, xi, xn)
        if done.any():
            x[idx[done]] = xn[done]
            keep = ~done
            idx, xi, lo, hi, last = idx[keep], xn[keep], lo[keep], hi[keep], last[keep]
        else:
            xi = xn
    x[idx] = xi  # elements still open after maxiter: their last iterate
    return x.reshape(shape)
