"""The ``sizing`` command line.

Each verb lives in its own module of this package and exposes ``register(subparsers)``, which
adds its parser and sets ``func`` to a function ``(args) -> int``.  User mistakes
(:class:`sizing.errors.InputError`) print one line per problem on stderr and exit 2.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

from ..errors import InputError, SizingError
from ..version import __version__

# verb modules, in the order they appear in --help
VERBS = ("solve", "plan", "sweep", "check", "fit", "scaleup", "achievable", "bench", "app")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="sizing",
        description="Size the surfactant dose for an emulsion or a foam and plan the plant trial.",
    )

    parser.add_argument("--version", action="version", version=f"sizing {__version__}")
    sub = parser.add_subparsers(dest="verb", metavar="COMMAND")
    for verb in VERBS:
        try:
            module = importlib.import_module(f"sizing.cli.{verb}")
        except ModuleNotFoundError as exc:
            if exc.name == f"sizing.cli.{verb}":
                continue  # verb not built yet
            raise
        module.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
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
