"""Helpers shared by the command-line verbs: JSON output, tables, atomic writes."""

from __future__ import annotations

from ..files import write_atomic  # noqa: F401  (re-exported for the verbs)
from ..outputs.jsonify import dumps, to_jsonable  # noqa: F401  (re-exported for the verbs)


def print_json(obj) -> None:
    print(dumps(obj))


def table(rows: list[tuple[str, str]], title: str | None = None) -> str:
    """Format (label, value-with-unit) pairs as an aligned two-column text table."""
    width = max((len(r[0]) for r in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"  {label:<{width}}  {value}" for label, value in rows]
    return "\n".join(lines)
