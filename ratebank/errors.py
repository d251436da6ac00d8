"""Domain errors. Every error a user can cause is one of these.

The command line catches :class:`RatebankError` in one place and prints
``Error: <message>`` with a non-zero exit; ``--traceback`` shows the trace.
Errors raised by the science layer also derive from :class:`ValueError`, so
that notebook users can catch them the usual way.
"""

from __future__ import annotations


class RatebankError(Exception):
    """Base class of every error ratebank reports to a user."""

    exit_code: int = 1


class UnitError(RatebankError, ValueError):
    """A unit string could not be parsed or has the wrong dimension."""


class FormulaError(RatebankError, ValueError):
    """A chemical formula could not be parsed."""


class EquationError(RatebankError, ValueError):
    """A reaction equation could not be parsed or does not balance."""


class FitError(RatebankError, ValueError):
    """A rate-constant data set cannot be fitted as asked."""


class DiameterError(RatebankError, ValueError):
    """A collision diameter cannot be estimated from the data given."""


class ScienceInputError(RatebankError, ValueError):
    """A scientific function received values outside its domain."""


class StoreError(RatebankError):
    """The store cannot be opened or used."""


class StoreRevisionError(StoreError):
    """The store's schema revision is not the one this ratebank knows."""


class NotFoundError(RatebankError):
    """A named species, reaction, set or expression is not in the store."""


class ConflictError(RatebankError):
    """An edit conflicts with the store's content (duplicate or stale)."""


class ImportValidationError(RatebankError):
    """An import file failed validation; nothing was written.

    ``problems`` holds one ``FILE:LINE: column: message`` string per problem.
    """

    def __init__(self, path: str, problems: list[str], total: int | None = None):
        self.path = path
        self.problems = problems
        self.total = total if total is not None else len(problems)
        shown = "\n".join(problems)
        more = ""
        if self.total > len(problems):
            more = f"\n... and {self.total - len(problems)} more problems"
        super().__init__(f"{path}: {self.total} problem(s), nothing was imported\n{shown}{more}")


class OutputError(RatebankError):
    """A file cannot be written where it was asked to; the message names the path."""


class OutputExistsError(OutputError):
    """The file to be written appeared meanwhile and may not be replaced."""
