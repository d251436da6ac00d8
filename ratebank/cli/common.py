"""What every command shares: global state, opening the store, output, errors.

Errors are turned into one ``Error: ...`` line and an exit code in exactly
one place, :class:`RatebankGroup.invoke`; ``--traceback`` lets them through.
"""

from __future__ import annotations

import json
import os
import re
import sqlite3
import sys
import warnings
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import typer
from sqlalchemy.exc import DataError, DBAPIError, IntegrityError, OperationalError, SQLAlchemyError
from sqlalchemy.orm.exc import StaleDataError
from typer.core import TyperGroup

from ratebank import api
from ratebank.api import Store
from ratebank.errors import BadInputError, ExportGapsError, RatebankError, RefusedEstimateError
from ratebank.services.number_syntax import NUMBER_PADDING, number_text_problem
from ratebank.store.constraints import explain_integrity_error
from ratebank.store.engine import database_url, explain_sqlite_error, mask_url, redact

if TYPE_CHECKING:  # rich.console is imported when a console is first made: JSON needs none
    from rich.console import Console


#: The ``--json`` option of every command that can print JSON instead of a table.
JSON_OPTION = typer.Option(False, "--json", help="Print JSON (full precision) instead of a table.")


@dataclass
class GlobalOptions:
    db: str | None = None
    author: str | None = None
    quiet: bool = False
    traceback: bool = False


STATE = GlobalOptions()

_console: Console | None = None
_error_console: Console | None = None


def console() -> Console:
    """The stdout console; wide when not a terminal so tables are not cut."""
    global _console
    if _console is None:
        from rich.console import Console

        width = None if sys.stdout.isatty() else int(os.environ.get("COLUMNS", "200"))
        _console = Console(width=width, highlight=False)
    return _console


def error_console() -> Console:
    global _error_console
    if _error_console is None:
        from rich.console import Console

        _error_console = Console(stderr=True, highlight=False, soft_wrap=True)
    return _error_console


def reset_consoles() -> None:
    """Forget the consoles (tests swap sys.stdout between invocations)."""
    global _console, _error_console
    _console = None
    _error_console = None


def print_json(data: Any) -> None:
    """``data`` as JSON on stdout, every float rounded to 15 significant digits."""
    from ratebank.numbers import rounded

    text = json.dumps(rounded(data), indent=2, ensure_ascii=False, default=str)
    sys.stdout.write(text + "\n")


def say(message: str) -> None:
    """A summary line on stdout, unless --quiet."""
    if not STATE.quiet:
        # one logical line stays one line, however long, so scripts can read it
        console().print(_scrub(message), markup=False, soft_wrap=True)


def show(*renderables: Any) -> None:
    for renderable in renderables:
        console().print(renderable)


@contextmanager
def opened_store() -> Iterator[Store]:
    """The store named by the global options, as the library's front door opens it."""
    store = api.open(STATE.db, author=STATE.author)
    try:
        yield store
    finally:
        store.close()


def calls(method: str) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Declare the one ``ratebank.api`` call a command is a thin call of: a ``Store`` method
    by name (``"fit"``), or a module function as ``"api.init"``.

    A command parses its options, makes that one call and renders the result;
    ``tests/cli/test_commands.py`` walks every command and checks that it does.
    """

    def mark(command: Callable[..., Any]) -> Callable[..., Any]:
        command.__ratebank_calls__ = method  # type: ignore[attr-defined]
        return command

    return mark


def number(text: str | float) -> float:
    """A number given on the command line, in the one syntax the importers accept too.

    Used as the ``parser`` of every number option, so that ``1_000``, digits of
    other scripts and values too close to zero are refused with the reason;
    ``inf`` and ``nan`` are left to the command, which refuses them in one line
    naming the field.
    """
    if isinstance(text, int | float):  # a default value, not typed by anyone
        return float(text)
    problem = number_text_problem(text)
    if problem is None:
        return float(text.strip(NUMBER_PADDING))
    try:
        value = float(text)
    except ValueError:
        value = 0.0
    if value != value or value in (float("inf"), float("-inf")):
        # inf and nan reach the command, whose check names the field in one line
        return value
    raise typer.BadParameter(problem)


def _one_line(text: str) -> str:
    return text.strip()


def _scrub(text: str) -> str:
    """``text`` without the password of the store address in use (belt and braces).

    Every address shown is masked where it is made (``mask_url``); this also
    catches a password that a driver or library echoes in its own words.
    """
    if "://" not in (STATE.db or "") and "://" not in os.environ.get("RATEBANK_DB", ""):
        return text
    return redact(text, STATE.db, os.environ.get("RATEBANK_DB"))


def report_error(message: str) -> None:
    error_console().print(f"Error: {_scrub(_one_line(message))}", markup=False)


#: Exit status of a command stopped by Ctrl-C (128 + SIGINT), as shells report it.
INTERRUPTED_EXIT = 130


class CommandLineError(RatebankError):
    """The command line is written wrongly (exit status 2, as for other usage errors)."""

    exit_code = 2


#: Options of the ``ratebank`` command itself, which go before the command's name.
GLOBAL_OPTIONS = ("--db", "--author", "--quiet", "-q", "--traceback", "--version")
#: A negative number, which is a value, not an option (``steric set-class ozone -0.1``).
_NEGATIVE_NUMBER = re.compile(r"^-(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?$")


def prepare_arguments(command: Any, args: list[str], path: str = "") -> list[str]:
    """The arguments of a (leaf) command, made ready for its parser.

    - A negative number where an argument is expected is passed as that
      argument: every argument from it on goes after ``--`` (in order), which
      the parser reads as values, not options.
    - A global option written after the command is refused with a message
      saying that global options come first.
    """
    params = getattr(command, "params", [])
    own = {name for p in params for name in (*p.opts, *p.secondary_opts)}
    takes_value = {
        name: max(p.nargs, 1)
        for p in params
        if getattr(p, "param_type_name", "") == "option" and not getattr(p, "is_flag", False)
        for name in p.opts
    }
    before: list[str] = []
    after: list[str] = []
    index = 0
    while index < len(args):
        arg = args[index]
        if arg == "--":
            after.extend(args[index + 1 :])
            break
        name = arg.split("=", 1)[0]
        if name in takes_value and "=" not in arg:
            before.extend(args[index : index + 1 + takes_value[name]])
            index += 1 + takes_value[name]
            continue
        if name in GLOBAL_OPTIONS and name not in own:
            value = " VALUE" if name in ("--db", "--author") else ""
            raise CommandLineError(
                f"{name} is an option of ratebank itself: global options come before the "
                f"command, as in `ratebank {name}{value} {path or command.name} ...`"
            )
        if after or _NEGATIVE_NUMBER.match(arg):
            if arg.startswith("-") and not _NEGATIVE_NUMBER.match(arg):
                before.append(arg)  # an option after a moved number stays an option
            else:
                after.append(arg)
        else:
            before.append(arg)
        index += 1
    return [*before, "--", *after] if after else before


#: The option that lets a refused command go ahead, by error type.
_WAY_AROUND = {ExportGapsError: "--leave-out-gaps", RefusedEstimateError: "--keep-going"}


def _options_by_argument(command: Any) -> dict[str, str]:
    """Every option of the command tree, by its parameter name in lower case."""
    found: dict[str, str] = {}
    for sub in getattr(command, "commands", {}).values():
        for name, flag in _options_by_argument(sub).items():
            found.setdefault(name, flag)
    for param in getattr(command, "params", []):
        opts = [o for o in getattr(param, "opts", []) if o.startswith("--")]
        if opts and param.name:
            found.setdefault(param.name.lower(), opts[0])
    return found


def with_option_names(exc: RatebankError, command: Any, leaf: Any = None) -> str:
    """The library's message, with the command-line option it concerns where that helps.

    The library speaks of arguments (``argument="fixed_n"``); a user typed an
    option (``--fixed-n``), so the option is named here, in one place: the
    command's own (``leaf``) first, else the first of that name in the tree.
    """
    message = str(exc)
    for kind, option in _WAY_AROUND.items():
        if isinstance(exc, kind):
            return f"{message} ({option})"
    argument = getattr(exc, "argument", None) if isinstance(exc, BadInputError) else None
    options = _options_by_argument(command) | (_options_by_argument(leaf) if leaf else {})
    option = options.get(argument.lower()) if argument else None
    return f"{message} (option {option})" if option else message


class _AsTyped:
    """The value of an option as typer's own coercion makes of it, without its validator.

    typer coerces every value through a validator it builds on first use, and building
    the first one imports pydantic, which costs a listing more than its query and every
    other command a tenth of a second. Options of three plain kinds need no validator, so
    :func:`take_as_typed` gives them this stand-in instead (typer < 0.30 looks it up as
    ``_runtime_param``; ``tests/test_project.py`` fails when a command imports pydantic
    again): text and flags (as given), numbers read by their own ``parser`` (:func:`number`,
    which raises typer's BadParameter itself), and paths (typer's own checks of an existing
    path, then a :class:`~pathlib.Path`).
    """

    def __init__(self, parse: Callable[[Any, Any, Any], Any] | None = None) -> None:
        self._parse = parse

    def coerce(self, value: Any, param: Any, ctx: Any) -> Any:
        if value is None:
            return () if param.multiple or param.nargs == -1 else None
        if self._parse is not None:
            return self._parse(value, param, ctx)
        if isinstance(value, str | bool):
            return value
        return str(value)


_AS_TYPED = _AsTyped()


def _parsed(parser: Callable[[Any], Any]) -> _AsTyped:
    return _AsTyped(lambda value, param, ctx: parser(value))


def _as_path(value: Any, param: Any, ctx: Any) -> Any:
    from pathlib import Path

    from typer._param_types import coerce_cli_path

    checked = coerce_cli_path(
        value, param.type_descriptor.parameter_info, path_type=None, param=param, ctx=ctx
    )
    return checked if isinstance(checked, Path) else Path(checked)


def _texts(value: Any, param: Any, ctx: Any) -> list[str]:
    return [item if isinstance(item, str) else str(item) for item in value]


_AS_TEXTS = _AsTyped(_texts)


def _numbers(parser: Callable[[Any], Any]) -> _AsTyped:
    return _AsTyped(lambda value, param, ctx: tuple(parser(item) for item in value))


def _stand_in(param: Any) -> _AsTyped | None:
    """The stand-in for ``param``'s validator, or None where typer's own is needed: a
    text option or argument (one value, no parser), a flag not read from the environment
    (so always True, False or None), a number option with its own parser, or a path; a
    list of texts or of numbers read by their own parser (a repeatable option, or an
    argument of any number of values); a fixed number of numbers read by their own parser
    (``--t-range TMIN TMAX``)."""
    from typing import get_args, get_origin

    described = getattr(param, "type_descriptor", None)
    if described is None:
        return None
    annotation = described.annotation
    info = described.parameter_info
    if param.nargs == -1 or param.multiple:
        many = param.nargs == -1 or (param.multiple and param.nargs == 1)
        if not many or get_origin(annotation) is not list:
            return None
        if get_args(annotation) == (str,) and info.parser is None:
            return _AS_TEXTS
        if get_args(annotation) in ((float,), (int,)) and info.parser is not None:
            return _AsTyped(lambda value, param, ctx: [info.parser(item) for item in value])
        return None
    if param.nargs > 1:
        numbers = get_origin(annotation) is tuple and set(get_args(annotation)) <= {float}
        sized = numbers and len(get_args(annotation)) == param.nargs
        return _numbers(info.parser) if sized and info.parser is not None else None
    if param.nargs != 1:
        return None
    if info.parser is not None:
        return _parsed(info.parser) if annotation in (float, int) else None
    if annotation is bool:
        plain_flag = bool(getattr(param, "is_flag", False)) and not param.envvar
        return _AS_TYPED if plain_flag else None
    if annotation is str:
        return _AS_TYPED
    if _is_path(annotation) and getattr(info, "path_type", None) is None:
        return _AS_PATH
    return None


def _is_path(annotation: Any) -> bool:
    from pathlib import Path

    return annotation is Path


_AS_PATH = _AsTyped(_as_path)


def take_as_typed(command: Any, ctx: Any) -> None:
    """Let the plain options of ``command`` (:func:`_stand_in`), its help option among
    them, skip typer's validator; ``ctx`` is its context or its parent's (whose help
    option names it inherits)."""
    for param in command.get_params(ctx):
        if getattr(param, "_runtime_param", "") is None:
            stand_in = _stand_in(param)
            if stand_in is not None:
                param._runtime_param = stand_in


class RatebankGroup(TyperGroup):
    """A command group that turns every error into one line and an exit code."""

    def parse_args(self, ctx: Any, args: list[str]) -> list[str]:
        take_as_typed(self, ctx)
        return super().parse_args(ctx, args)

    def resolve_command(self, ctx: Any, args: list[str]) -> Any:
        name, command, rest = super().resolve_command(ctx, args)
        # the leaf command's arguments, wherever it sits in the tree of groups
        depth = 0
        leaf = command
        while leaf is not None and hasattr(leaf, "commands"):
            take_as_typed(leaf, ctx)
            leaf = leaf.commands.get(rest[depth]) if depth < len(rest) else None
            depth += 1
        if leaf is not None:
            take_as_typed(leaf, ctx)
            ctx.meta["ratebank.leaf"] = leaf
            path = " ".join([name, *rest[:depth]])
            rest = [*rest[:depth], *prepare_arguments(leaf, rest[depth:], path)]
        return name, command, rest

    def invoke(self, ctx: Any) -> Any:
        try:
            with warnings.catch_warnings():
                # what a library says (a plot layout it could not apply, a deprecation)
                # is not the user's business; errors still come through as errors
                warnings.simplefilter("ignore")
                return super().invoke(ctx)
        except RatebankError as exc:
            if STATE.traceback:
                raise
            report_error(with_option_names(exc, self, ctx.meta.get("ratebank.leaf")))
            raise typer.Exit(exc.exit_code) from None
        except KeyboardInterrupt:
            if STATE.traceback:
                # click turns a KeyboardInterrupt into a bare "Aborted!"; print the trace
                # ourselves so that --traceback shows where the command was stopped.
                import traceback

                traceback.print_exc(file=sys.stderr)
            report_error("interrupted; nothing was written by the interrupted command")
            raise typer.Exit(INTERRUPTED_EXIT) from None
        except Exception as exc:
            if STATE.traceback or _is_command_line_signal(exc):
                raise
            report_error(translate_exception(exc))
            raise typer.Exit(1) from None


def _is_command_line_signal(exc: Exception) -> bool:
    """Exit, abort and usage errors of the command-line library pass through."""
    if isinstance(exc, typer.Exit | typer.Abort):
        return True
    # usage errors (bad option, missing argument) know how to show themselves
    return hasattr(exc, "show") and hasattr(exc, "exit_code")


def _as_library_error(exc: Exception) -> Exception:
    """A driver's own error (bulk inserts use the driver directly) as SQLAlchemy's wrapper."""
    bases: list[type[Exception]] = [sqlite3.Error]
    try:
        import psycopg

        bases.append(psycopg.Error)
    except ImportError:  # pragma: no cover - psycopg is a dependency
        pass
    for base in bases:
        if isinstance(exc, base):
            return DBAPIError.instance(None, None, exc, base)
    return exc


def translate_exception(exc: Exception) -> str:
    """A one-line message for a library error, naming what to do next."""
    if isinstance(exc, StaleDataError):
        # Sessions made by ratebank.store.engine name the row and who changed it; this
        # is for a StaleDataError that reached here some other way.
        return (
            "someone else changed a record you were editing at the same time; nothing was "
            "written; read it again before changing it"
        )
    exc = _as_library_error(exc)
    if isinstance(exc, SQLAlchemyError):
        orig = getattr(exc, "orig", None)
        detail = str(orig) if orig is not None else str(exc)
        detail = mask_url(detail.splitlines()[0]) if detail.strip() else type(exc).__name__
        try:
            url = database_url(STATE.db)
        except RatebankError:  # an address that could not have been opened anyway
            url = ""
        if url.startswith("sqlite"):
            explained = explain_sqlite_error(exc, url.split("///", 1)[-1])
            if explained is not None:
                return str(explained)
        if isinstance(exc, IntegrityError):
            return explain_integrity_error(exc)
        if isinstance(exc, DataError):
            # A value validation let through but the database cannot hold (too long, NUL).
            return f"the store refused a value: {detail}; nothing was written"
        if getattr(orig, "sqlstate", None) == "53100":  # PostgreSQL: disk full
            return (
                "the database server has no space left on its disk; nothing was written; ask "
                "its administrator to free some, then run the command again"
            )
        if isinstance(exc, DBAPIError) and exc.connection_invalidated:
            return (
                f"lost the connection to the database server ({detail}); nothing was "
                "written; try again"
            )
        if isinstance(exc, OperationalError) and not url.startswith("sqlite"):
            return f"the database server reported: {detail}; nothing was written; try again"
        return f"database error: {detail}; nothing was written (rerun with --traceback for details)"
    if isinstance(exc, OSError):
        return f"{exc.strerror or exc}: {exc.filename or ''}".rstrip(": ")
    return (
        f"unexpected {type(exc).__name__}: {str(exc).splitlines()[0] if str(exc) else ''} "
        "(rerun with --traceback and report it)"
    )
