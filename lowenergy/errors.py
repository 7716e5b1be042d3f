"""Exceptions of lowenergy.

Every error a user can cause derives from :class:`LowEnergyError`.  The
command line maps these (and only these) to a one-line message and exit
code 2.

A failure of the package itself (an inconsistent table, an exact
reconstruction that did not converge, a broken invariant) is an
:class:`InternalError`: it is *not* a :class:`LowEnergyError`, carries no
hint for the user, and the command line shows it as ``internal error: ...
please report`` with exit code :data:`INTERNAL_EXIT_CODE` (70).
"""

from __future__ import annotations

__all__ = [
    "LowEnergyError",
    "ParseError",
    "RegularizationError",
    "TableError",
    "NumericError",
    "InputError",
    "InternalError",
    "INTERNAL_EXIT_CODE",
]

#: Exit code of the command line for an :class:`InternalError` (or any other
#: unexpected failure); 70 is ``EX_SOFTWARE`` of BSD ``sysexits.h``.
INTERNAL_EXIT_CODE = 70


class LowEnergyError(Exception):
    """Base class of all errors raised on purpose by lowenergy.

    Parameters
    ----------
    message:
        What went wrong, in one sentence.
    source:
        File name (or ``"<expression>"``) the offending text came from.
    line, column:
        1-based position of the offending text, when known.
    term:
        The offending piece of text, when known.
    hint:
        What the user can change to fix it.
    """

    def __init__(
        self,
        message: str,
        *,
        source: str | None = None,
        line: int | None = None,
        column: int | None = None,
        term: str | None = None,
        hint: str | None = None,
    ) -> None:
        super().__init__(message)
        self.message = message
        self.source = source
        self.line = line
        self.column = column
        self.term = term
        self.hint = hint

    def located(self, **kwargs: object) -> "LowEnergyError":
        """Fill in location fields that are still unknown; return self."""
        for key, value in kwargs.items():
            if getattr(self, key, None) is None:
                setattr(self, key, value)
        return self

    def __str__(self) -> str:
        where = []
        if self.source is not None:
            where.append(str(self.source))
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.column is not None:
            where.append(f"column {self.column}")
        text = ", ".join(where)
        text = f"{text}: {self.message}" if text else self.message
        if self.term is not None:
            text += f" (term: {self.term!r})"
        if self.hint:
            text += f"; hint: {self.hint}"
        return text


class ParseError(LowEnergyError):
    """Malformed text: an expression, an integrand or a constraint file."""


class InputError(LowEnergyError):
    """Well-formed text asking for something unsupported or inconsistent."""


class RegularizationError(LowEnergyError):
    """A divergent MZV or word was used without asking for a regularization."""


class TableError(LowEnergyError):
    """A reduction needs an MZV table of a weight that has not been built."""


class NumericError(LowEnergyError):
    """A numerical evaluation could not reach the requested accuracy."""


class InternalError(Exception):
    """A failure of lowenergy itself, not of its input: please report it.

    Raised when a check the package makes on its own results fails (an MZV
    table inconsistent with itself, an exact reconstruction that did not
    converge).  Deliberately not a :class:`LowEnergyError`: there is nothing
    the user can change in the input to avoid it.
    """
