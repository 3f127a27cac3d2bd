"""Helpers shared by the command-line verbs: JSON output, tables, atomic writes, and the guards
between the engine and the terminal (numeric overflow, numpy warnings, control characters)."""

from __future__ import annotations

import contextlib
import functools
import math
import re
import sys
import warnings

from ..case import load_case
from ..errors import InputError, SizingError
from ..files import write_atomic  # noqa: F401  (re-exported for the verbs)
from ..outputs.jsonify import dumps, to_jsonable  # noqa: F401  (re-exported for the verbs)
from ..plausible import check, quantity_of, values_of

# C0 and C1 control characters other than newline and tab (ANSI escapes start with ESC or CSI)
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")
_NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)[eE][-+]?\d+")
EXTREME = 1e100  # magnitudes beyond 1e100 or below 1e-100 are named as likely causes


def clean(text: object) -> str:
    """Return ``text`` with control characters (ANSI escapes, bidi overrides) shown as ``?``.

    Newlines and tabs stay.  Everything a verb prints that a case or a file wrote (titles,
    names, notes) passes here, so a title cannot recolour, clear or rewrite the terminal.

    >>> clean("a\\x1b[2Jb\\nc")
    'a?[2Jb\\nc'
    """
    return _CONTROL.sub("?", str(text))


def print_json(obj) -> None:
    print(dumps(obj))  # json.dumps escapes every control character itself


def table(rows: list[tuple[str, str]], title: str | None = None) -> str:
    """Format (label, value-with-unit) pairs as an aligned two-column text table."""
    rows = [(clean(a), clean(b)) for a, b in rows]
    title = clean(title) if title else title
    width = max((len(r[0]) for r in rows), default=0)
    lines = [title, "-" * len(title)] if title else []
    lines += [f"  {label:<{width}}  {value}" for label, value in rows]
    return "\n".join(lines)


def _suspects(args) -> list[str]:
    """Name the inputs with extreme magnitudes: the case's quantities and the verb's options."""
    found: list[tuple[float, str]] = []
    path = getattr(args, "case", None)
    if path:
        try:
            for field, v in values_of(load_case(path)):
                si = float(v.si)
                if si == 0 or not math.isfinite(si):
                    continue
                try:
                    check(field, si, quantity_of(field, v.dimension))
                    odd = not (1 / EXTREME < abs(si) < EXTREME)
                except InputError:
                    odd = True
                if odd:
                    raw = v.raw if isinstance(v.raw, (str, int, float)) else v.raw.get("value", v.raw)
                    found.append((abs(math.log10(abs(si))), f"{field} = {clean(repr(raw))[:40]}"))
        except Exception:  # noqa: BLE001 - naming suspects must never hide the real error
            pass
    for name, value in sorted(vars(args).items()):
        if name == "case" or not isinstance(value, str):
            continue
        for m in _NUMBER.finditer(value):
            x = abs(float(m.group()))
            if x and not (1 / EXTREME < x < EXTREME):
                found.append((abs(math.log10(x)) if math.isfinite(x) else math.inf,
                              f"--{name.replace('_', '-')} {clean(repr(value))[:40]}"))
                break
    return [text for _, text in sorted(found, reverse=True)[:3]]


def numeric_error(args, what: str) -> InputError:
    """Build the one-line error for a calculation that overflowed, naming the likely inputs."""
    names = _suspects(args)
    where = (f"check {', '.join(names)}" if names else
             "no single input stands out; check the magnitudes and units of the case's values")
    return InputError(f"numeric overflow ({what}): the inputs give numbers beyond a float's range "
                      f"(about 1e308); {where}")


def _is_numeric(w: warnings.WarningMessage) -> bool:
    return issubclass(w.category, RuntimeWarning)


@contextlib.contextmanager
def numeric_guard(args, strict: bool = True):
    """Run a calculation with numpy's RuntimeWarnings kept off the terminal.

    An overflow (:class:`OverflowError`, :class:`FloatingPointError`, or with ``strict`` an
    overflow warning) becomes an :class:`InputError` naming the inputs with extreme magnitudes;
    an error raised after a numeric warning is reported the same way (it is a consequence, not
    the option it names).  Other warnings are shown as usual.  Use it around the computation
    only, before anything is printed or written, so a failed run keeps the earlier output.
    """
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", RuntimeWarning)
        try:
            yield
        except (OverflowError, FloatingPointError, ZeroDivisionError) as exc:
            raise numeric_error(args, str(exc) or type(exc).__name__) from None
        except SizingError:
            seen = [w for w in caught if _is_numeric(w)]
            if seen:  # the error follows from the overflow; the option it names is not the cause
                raise numeric_error(args, str(seen[0].message)) from None
            raise
        finally:
            others = [w for w in caught if not _is_numeric(w)]
    for w in others:  # not numpy's: shown as Python would have shown them
        warnings.showwarning(w.message, w.category, w.filename, w.lineno)
    over = [w for w in caught if _is_numeric(w) and "overflow" in str(w.message)]
    if over and strict:
        raise numeric_error(args, str(over[0].message))


def guarded(func):
    """Wrap a verb's ``run(args)``: :func:`numeric_guard` (not strict) and :func:`clean_output`.

    For any verb (``p.set_defaults(func=guarded(run))``): numpy warnings never reach the
    terminal, an overflow exception is one line naming the inputs, and nothing it prints
    carries control characters.  Not strict, since a verb may print as it goes; a verb that
    should also refuse a result reached through an overflow warning puts ``numeric_guard(args)``
    around its computation itself, as ``plan`` and ``solve`` do.
    """

    @functools.wraps(func)
    def run(args):
        with clean_output(), numeric_guard(args, strict=False):
            return func(args)

    return run


class _CleanWriter:
    """A text stream that passes everything through :func:`clean` on its way to ``stream``."""

    def __init__(self, stream):
        self._stream = stream

    def write(self, text):
        return self._stream.write(clean(text))

    def __getattr__(self, name):  # flush, fileno, encoding, isatty, buffer ...
        return getattr(self._stream, name)


@contextlib.contextmanager
def clean_output():
    """Send ``sys.stdout`` and ``sys.stderr`` through :func:`clean` for the duration (a verb's run).

    JSON output is unchanged (``json.dumps`` already escapes control characters).
    """
    out, err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = _CleanWriter(out), _CleanWriter(err)
    try:
        yield
    finally:
        sys.stdout, sys.stderr = out, err
