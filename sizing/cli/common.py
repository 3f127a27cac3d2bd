"""Helpers shared by the command-line verbs: JSON output, tables, atomic writes."""

from __future__ import annotations

import json
import math

import numpy as np

from ..files import write_atomic  # noqa: F401  (re-exported for the verbs)


def to_jsonable(obj):
    """Convert numpy scalars/arrays and non-finite floats into plain JSON values."""
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [to_jsonable(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return to_jsonable(obj.tolist())
    if isinstance(obj, (np.floating, float)):
        x = float(obj)
        return x if math.isfinite(x) else None
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, np.bool_):
        return bool(obj)
    return obj


def dumps(obj) -> str:
    return json.dumps(to_jsonable(obj), indent=2, allow_nan=False)


def print_json(obj) -> None:
    print(dumps(obj))


def table(rows: list[tuple[str, str]], title: str | None = None) -> str:
    """Format (label, value-with-unit) pairs as an aligned two-column text table."""
    width = max((len(r[0]) for r in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"  {label:<{width}}  {value}" for label, value in rows]
    return "\n".join(lines)
