"""Helpers shared by the command-line verbs: JSON output, tables, atomic writes, and the guards
between the engine and the terminal (numeric overflow, numpy warnings, control characters)."""

from __future__ import annotations

import contextlib
import functools
import math
import re
import sys
import warnings
from dataclasses import dataclass

from ..case import load_case
from ..errors import InputError, SizingError
from ..files import write_atomic  # noqa: F401  (re-exported for the verbs)
from ..model import parse_dose
from ..outputs.jsonify import dumps, to_jsonable  # noqa: F401  (re-exported for the verbs)
from ..plausible import check, quantity_of, values_of
from ..units import NumberFormatError, parse, sig

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


# ---------------------------------------------------------------------------------------------
# a dose on the command line, as active or as product (``--dose "13.5 kg product"``)

_BASIS_WORD = re.compile(r"^(.*?)\s+(product|active)\s*$", re.IGNORECASE | re.DOTALL)


@dataclass(frozen=True)
class Dose:
    """A ``--dose`` read against a case: ``mol`` of active, the ``basis`` it was written on."""

    text: str
    mol: float
    basis: str  # "active" or "product"
    kg_active: float
    kg_product: float
    active_fraction: float

    def echo(self) -> str:
        """One line saying how the dose was read (printed by ``plan`` and ``solve``)."""
        u = lambda x, unit: f"{sig(x, 4)} {unit}"  # noqa: E731
        if self.basis == "product":
            return (f"--dose {self.text!r} read as product as delivered (active fraction {sig(self.active_fraction, 4)}): "
                    f"{u(self.kg_active, 'kg')} active, {u(self.mol, 'mol')}")
        return (f"--dose {self.text!r} read as active surfactant ({u(self.mol, 'mol')}; "
                f"{u(self.kg_product, 'kg')} of product as delivered); write '... kg product' for product")

    def as_json(self) -> dict:
        return {"text": self.text, "basis": self.basis, "mol": self.mol, "kg_active": self.kg_active,
                "kg_product": self.kg_product, "active_fraction": self.active_fraction}


def _active_fraction_given(case) -> bool:
    if case.blend is not None:
        return any(case.source_of(f"blend.component[{i}].active_fraction") != "default"
                   for i in range(len(case.blend.component)))
    return case.source_of("surfactant.active_fraction") != "default"


def read_dose(text: str, case, inputs, field: str = "--dose") -> Dose:
    """Read a dose per batch: ``"12 kg"`` or ``"40 mol"`` of active (as always), ``"12 kg active"``,
    or ``"13.5 kg product"`` (as delivered, through the case's active fraction).

    ``inputs`` are the case's engine inputs (:func:`sizing.model.case_inputs`): their molar
    mass and active fraction (a blend's, mass-weighted) turn one basis into the other.

    Raises
    ------
    InputError
        An unreadable dose, moles of product, or "product" on a case without an active fraction.
    """
    m = _BASIS_WORD.match(str(text))
    amount, basis = (m.group(1), m.group(2).lower()) if m else (str(text), "active")
    mm = float(inputs.molar_mass)
    af = float(inputs.active_fraction)
    if basis == "product":
        if not _active_fraction_given(case):
            where = "blend.component[i].active_fraction" if case.blend is not None else "surfactant.active_fraction"
            raise InputError(f"{field}: {text!r} is a charge of product as delivered, but the case gives no "
                             f"{where} (the active mass per mass of product, e.g. 0.30 for a 30 % solution); "
                             "give it in the case, or write the dose as active, e.g. '4 kg active'")
        try:
            kg_product = parse(amount, field, "mass")
        except NumberFormatError:
            raise
        except InputError:
            raise InputError(f"{field}: expected a mass of product as delivered such as '13.5 kg product', "
                             f"got {text!r}") from None
        if not kg_product >= 0:
            raise InputError(f"{field}: expected a charge >= 0, got {text!r}")
        kg_active = kg_product * af
        mol = kg_active / mm
    else:
        mol = parse_dose(amount, mm, field)
        kg_active = mol * mm
        kg_product = kg_active / af
    return Dose(str(text), float(mol), basis, float(kg_active), float(kg_product), af)
