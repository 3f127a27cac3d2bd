"""The ``sizing`` command line.

Each verb lives in its own module of this package and exposes ``register(subparsers)``, which
adds its parser and sets ``func`` to a function ``(args) -> int``.  Only the module of the verb
that runs is imported (the engine behind a verb is heavy); ``sizing --help`` lists every verb
from :data:`VERBS` without importing any.  User mistakes (:class:`sizing.errors.InputError`)
print one line per problem on stderr and exit 2.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from ..errors import InputError, SizingError
from ..version import __version__

#: verb -> its one-line help in ``sizing --help`` (the same text as the module's own parser),
#: in the order they appear; the verb's module is ``sizing.cli.<verb>``
VERBS = {
    "solve": "dose for the case's target, or the equilibrium for a given dose",
    "plan": "recommended charge, trial matrix and an HTML report",
    "sweep": "what-if table of the dose over one or two inputs",
    "check": "validate a case and print it resolved to SI (no solve)",
    "fit": "fit surfactant parameters from lab data (CSV)",
    "scaleup": "plant drop size from the [scaleup] section, and the dose it implies",
    "achievable": "drop size reached with a dose when surfactant may limit it",
    "calibrate": "update the case's spreads from plant trials and set the next charge",
    "compare": "several cases side by side: dose, coverage, d32, area",
    "homologues": "a technical ethoxylate as homologue cuts (Poisson EO spread): [blend] block, apparent CMC",
    "bench": "benchmark the vectorised balance against a per-case loop",
    "app": "start the Streamlit workbench in the browser (127.0.0.1)",
}


def verb_of(argv: list[str]) -> str | None:
    """Return the verb named on a command line (its first word that is not an option), if any."""
    for word in argv:
        if word == "--":
            return None
        if not word.startswith("-"):
            return word if word in VERBS else None
    return None


def load_verb(verb: str):
    """Import and return ``sizing.cli.<verb>`` (None when the verb's module is not built yet)."""
    try:
        return importlib.import_module(f"sizing.cli.{verb}")
    except ModuleNotFoundError as exc:
        if exc.name == f"sizing.cli.{verb}":
            return None
        raise


def build_parser(verb: str | None = None, *, every_verb: bool = False) -> argparse.ArgumentParser:
    """Return the parser; the full parser of ``verb`` (or of every verb), a one-line entry for the others."""
    parser = argparse.ArgumentParser(
        prog="sizing",
        description="Size the surfactant dose for an emulsion or a foam and plan the plant trial.",
    )

    parser.add_argument("--version", action="version", version=f"sizing {__version__}")
    sub = parser.add_subparsers(dest="verb", metavar="COMMAND")
    for name, help_text in VERBS.items():
        module = load_verb(name) if every_verb or name == verb else None
        if module is not None:
            module.register(sub)
        else:  # listed in --help; its arguments are read only when it runs
            sub.add_parser(name, help=help_text, add_help=False)
    return parser


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else list(argv)
    parser = build_parser(verb_of(argv))
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 1
    try:
        return int(args.func(args) or 0)
    except InputError as exc:
        for line in exc.problems:
            print(f"error: {line}", file=sys.stderr)
        return 2
    except SizingError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return 2
    except FileNotFoundError as exc:
        print(f"error: file not found: {exc.filename}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # output piped into `head` and the like: stop quietly

        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 0
    except OSError as exc:  # any other file error (read-only folder, disk full, ...): one line
        where = f"{exc.filename}: " if exc.filename else ""
        print(f"error: {where}{exc.strerror or exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:  # pragma: no cover
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
