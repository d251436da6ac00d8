"""Domain errors. Every error a user can cause is one of these.

The hierarchy is small and speaks in the library's own words (arguments and
values, never command-line options)::

    RatebankError
    ├── BadInputError (ValueError)      a value or argument is not acceptable
    │   ├── UnitError, FormulaError, EquationError, DiameterError,
    │   │   ScienceInputError           the science layer's refusals
    │   ├── FitError                    data that cannot be fitted as asked
    │   └── ImportValidationError       an import file failed validation
    ├── NotFoundError (LookupError)     a named record is not in the store
    ├── ConflictError                   the store's content forbids the change
    │   └── StaleEditError              someone changed the record since it was read
    ├── RefusedError                    the work cannot be done as asked
    │   ├── RefusedEstimateError        some reactions cannot be estimated
    │   └── ExportGapsError             some reactions have no usable expression
    └── StoreError                      the store cannot be opened or used
        └── StoreRevisionError          its schema is not this ratebank's

``BadInputError`` carries the name of the argument at fault (``argument``)
where there is one, so that the command line can add the option a user typed;
the library's message itself never names an option. The command line catches
:class:`RatebankError` in one place and prints ``Error: <message>`` with a
non-zero exit; ``--traceback`` shows the trace.
"""

from __future__ import annotations


class RatebankError(Exception):
    """Base class of every error ratebank reports to a user."""

    exit_code: int = 1


class BadInputError(RatebankError, ValueError):
    """A value or argument is not acceptable; ``argument`` names it when known."""

    def __init__(self, message: str, *, argument: str | None = None):
        super().__init__(message)
        self.argument = argument


class UnitError(BadInputError):
    """A unit string could not be parsed or has the wrong dimension."""


class FormulaError(BadInputError):
    """A chemical formula could not be parsed."""


class EquationError(BadInputError):
    """A reaction equation could not be parsed or does not balance."""


class FitError(BadInputError):
    """A rate-constant data set cannot be fitted as asked."""


class DiameterError(BadInputError):
    """A collision diameter cannot be estimated from the data given."""


class ScienceInputError(BadInputError):
    """A scientific function received values outside its domain."""


class NotFoundError(RatebankError, LookupError):
    """A named species, reaction, set or expression is not in the store."""


class ConflictError(RatebankError):
    """A change conflicts with the store's content (a duplicate, or a record in use)."""


class StaleEditError(ConflictError):
    """The record changed since the curator read it; nothing was written."""


class RefusedError(RatebankError):
    """The work cannot be done as asked; nothing was written."""


class RefusedEstimateError(RefusedError):
    """Some requested reactions cannot be estimated; nothing was written.

    ``report`` holds what could and could not be estimated.
    """

    def __init__(self, message: str, report: object = None):
        super().__init__(message)
        self.report = report


class ExportGapsError(RefusedError):
    """Some reactions have no usable expression; nothing was written.

    ``gaps`` holds their keys.
    """

    def __init__(self, gaps: list[str]):
        self.gaps = gaps
        shown = ", ".join(gaps[:30]) + (f", ... ({len(gaps) - 30} more)" if len(gaps) > 30 else "")
        super().__init__(
            f"{len(gaps)} reaction(s) have no usable expression, so nothing was written: "
            f"{shown}. Fit, estimate or import them, or leave the gaps out"
        )


class StoreError(RatebankError):
    """The store cannot be opened or used."""


class StoreRevisionError(StoreError):
    """The store's schema revision is not the one this ratebank knows."""


class ImportValidationError(BadInputError):
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
