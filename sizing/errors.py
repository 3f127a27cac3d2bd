"""Error types of the package.

Every problem a user can cause (a bad case file, a bad CSV, an unknown unit) raises
:class:`InputError`, which is also a :class:`ValueError`.  The command line prints its
message, one line per problem, and exits non-zero; it never shows a traceback for these.
A numeric failure that is not the user's mistake (a fit that does not converge, a root that
fails) raises :class:`CalculationError` instead, which is not a :class:`ValueError`.
"""

from __future__ import annotations


class SizingError(Exception):
    """Base class of every error raised on purpose by the package."""


class InputError(SizingError, ValueError):
    """A user input is wrong: the message names the field, the value given and what is allowed.

    ``problems`` holds one line per problem when several were found at once.
    """

    def __init__(self, message: str | None = None, problems: list[str] | None = None):
        self.problems = list(problems) if problems else [message or "invalid input"]
        super().__init__(message if message is not None else "\n".join(self.problems))

    def __str__(self) -> str:  # one line per problem
        return "\n".join(self.problems)


class CalculationError(SizingError):
    """A numeric method failed on valid input: a fit did not converge, a root was not found.

    The message names the calculation, the data it ran on and what to try; it is kept apart
    from :class:`InputError` so that a caller can tell a wrong input from a failed method.
    """


def field_error(field: str, given: object, expected: str) -> InputError:
    """Build the standard one-line error: ``field: expected ..., got '...'``."""
    return InputError(f"{field}: expected {expected}, got {given!r}")
