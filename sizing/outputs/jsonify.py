"""The one JSON-number rule of every output: plain floats, ``null`` for nan and inf.

Every JSON contract of the package (solve, plan, fits, scale-up, achievable, bench) passes its
numbers through :func:`json_number` (one value) or :func:`to_jsonable` (a whole tree), so a
non-finite number is never written as ``NaN`` (not JSON) nor silently as a number.
"""

from __future__ import annotations

import json
import math

import numpy as np


def json_number(x):
    """Return a finite float, or None for nan/inf (one value; arrays of size one allowed).

    Examples
    --------
    >>> json_number(2.5), json_number(float("nan")), json_number(np.float64(-np.inf))
    (2.5, None, None)
    """
    x = float(np.asarray(x, dtype=float))
    return x if math.isfinite(x) else None


def to_jsonable(obj):
    """Convert numpy scalars and arrays and non-finite floats (nested) into plain JSON values.

    Examples
    --------
    >>> to_jsonable({"a": np.array([1.0, np.nan]), "b": (np.int64(3), np.bool_(True))})
    {'a': [1.0, None], 'b': [3, True]}
    """
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, np.bool_):
        return bool(obj)
    if isinstance(obj, (np.floating, float)):
        return json_number(obj)
    if isinstance(obj, np.integer):
        return int(obj)
    return obj


def dumps(obj) -> str:
    """Return indented JSON text of ``obj`` (through :func:`to_jsonable`; NaN never written)."""
    return json.dumps(to_jsonable(obj), indent=2, allow_nan=False)
