"""The ``ratebank`` command line.

Each command parses its options, calls one library function and renders the
result; no SQL and no physics here. The commands live in the modules of
``ratebank.cli`` by subject; this one holds the global options, ``init``,
``history`` and ``demo``, and builds every other command only when it runs
(:data:`COMMANDS`), so that a listing loads no more than it uses.
"""

from __future__ import annotations

import importlib
from collections.abc import Iterator, MutableMapping
from functools import cache
from pathlib import Path
from typing import Any

import typer

from ratebank import __version__, api
from ratebank.cli import common
from ratebank.cli.common import (
    JSON_OPTION,
    STATE,
    RatebankGroup,
    calls,
    opened_store,
    print_json,
    say,
    show,
)
from ratebank.cli.progress import progress_bar
from ratebank.errors import BadInputError
from ratebank.report import tables
from ratebank.report.demo import demo_summary

HELP = """Curate gas-phase rate parameters: store species, reactions and measured k(T);
fit Arrhenius expressions; estimate missing A factors from collision theory; check
and export a mechanism as a data package.

Example: ratebank --db group.db species list
"""

#: Every command of ``ratebank`` in the order its help lists them, with the module of
#: ``ratebank.cli`` whose ``register`` attaches it (None: this module). A command's module,
#: and what it renders with, is imported, and the command (or group) built, only when that
#: command runs or is listed.
COMMANDS: tuple[tuple[str, str | None], ...] = (
    *((name, "kinetics") for name in ("fit", "estimate", "check", "rate", "recommend")),
    ("export", "kinetics"),
    ("plot", "kinetics"),
    *((name, "records") for name in ("backup", "restore", "withdraw", "reinstate", "remove")),
    ("review", "review"),
    ("diff", "release"),
    *((name, None) for name in ("init", "history", "demo")),
    *((name, "records") for name in ("species", "reactions", "data", "expressions")),
    ("steric", "kinetics"),
    ("thermo", "thermo"),
    ("evans-polanyi", "thermo"),
    ("efficiencies", "efficiencies"),
    ("release", "release"),
)


def attached(module: str) -> typer.Typer:
    """A typer app holding what ``ratebank.cli.<module>.register`` attaches, as the
    ``ratebank`` app would (no markup in help texts)."""
    part = typer.Typer(add_completion=False, pretty_exceptions_enable=False, rich_markup_mode=None)
    importlib.import_module(f"ratebank.cli.{module}").register(part)
    return part


def names_attached(module: str) -> list[str]:
    """The names of the commands and groups that ``module`` attaches."""
    part = attached(module)
    return [info.name for info in (*part.registered_commands, *part.registered_groups)]


@cache
def command_named(module: str, name: str) -> Any:
    """The command (or group) ``name`` that ``module`` attaches, built once, alone."""
    part = attached(module)
    part.registered_commands = [i for i in part.registered_commands if i.name == name]
    part.registered_groups = [i for i in part.registered_groups if i.name == name]
    built = typer.main.get_command(part)
    return built.commands[name] if hasattr(built, "commands") else built


class _CommandsOnDemand(MutableMapping[str, Any]):
    """The commands of ``ratebank`` by name, each built when first looked up (:data:`COMMANDS`)."""

    def __init__(self, built: dict[str, Any]):
        self._built = built
        self._module = {name: module for name, module in COMMANDS if module is not None}

    def __getitem__(self, name: str) -> Any:
        if name not in self._built and name in self._module:
            self._built[name] = command_named(self._module[name], name)
        return self._built[name]

    def __setitem__(self, name: str, command: Any) -> None:
        self._built[name] = command

    def __delitem__(self, name: str) -> None:
        self._module.pop(name, None)
        del self._built[name]

    def __iter__(self) -> Iterator[str]:
        listed = [name for name, _ in COMMANDS if name in self._module or name in self._built]
        yield from listed
        yield from (name for name in self._built if name not in listed)

    def __len__(self) -> int:
        return len(set(self._module) | set(self._built))


class RatebankApp(RatebankGroup):
    """The ``ratebank`` group: its commands are built on demand (:class:`_CommandsOnDemand`)."""

    def __init__(self, *args: Any, **kwargs: Any):
        super().__init__(*args, **kwargs)
        self.commands = _CommandsOnDemand(dict(self.commands))


app = typer.Typer(
    cls=RatebankApp,
    help=HELP,
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"ratebank {__version__}")
        raise typer.Exit()


@app.callback()
def main_options(
    db: str = typer.Option(
        None,
        "--db",
        envvar="RATEBANK_DB",
        help="Store: a SQLite file path or a database URL (default ./ratebank.db).",
        show_envvar=True,
    ),
    author: str = typer.Option(
        None,
        "--author",
        envvar="RATEBANK_AUTHOR",
        help="Name recorded in the history (default: your login name).",
        show_envvar=True,
    ),
    quiet: bool = typer.Option(False, "--quiet", "-q", help="No summaries or progress bars."),
    traceback: bool = typer.Option(
        False, "--traceback", help="Show the full trace of an error (for debugging)."
    ),
    version: bool = typer.Option(
        False, "--version", callback=_version, is_eager=True, help="Print the version and exit."
    ),
) -> None:
    STATE.db = db
    STATE.author = author
    STATE.quiet = quiet
    STATE.traceback = traceback
    common.reset_consoles()


# --------------------------------------------------------------------------- store


@app.command()
@calls("api.init")
def init() -> None:
    """Create the store, or upgrade it to this ratebank's schema.

    Running it on a store that is already up to date changes nothing.

    Example: ratebank --db group.db init
    """
    store, result = api.init(STATE.db, author=STATE.author)
    try:
        if result.before is None:
            say(f"Created a ratebank store at {store.address} (schema {result.after}).")
        elif result.changed:
            say(f"Upgraded {store.address} from schema {result.before} to {result.after}.")
        else:
            say(f"{store.address} is up to date (schema {result.after}); nothing to do.")
    finally:
        store.close()


@app.command()
@calls("history")
def history(
    limit: int = typer.Option(50, "--limit", "-n", min=1, help="How many entries."),
    target: str = typer.Option(None, "--target", help="Only entries about this file or key."),
    author: str = typer.Option(None, "--by", help="Only entries by this author."),
    as_json: bool = JSON_OPTION,
) -> None:
    """Who changed what, when (newest first).

    Example: ratebank history --limit 20
    """
    with opened_store() as store:
        rows = store.history(limit=limit, target=target, author=author)
    if as_json:
        print_json(tables.history_records(rows))
    else:
        show(tables.history_table(rows))


@app.command()
@calls("api.demo")
def demo(
    ctx: typer.Context,
    db: Path = typer.Option(
        None,
        "--db",
        help="Where to build the demo store (default: the global --db, else ratebank-demo.db).",
        show_default=False,
    ),
    out: Path = typer.Option(Path("demo-out"), "--out", help="Folder for the demo's outputs."),
) -> None:
    """Build a fresh store from the invented demo scenario and summarise it.

    Every rate number in the demo is synthetic. The demo store file is
    replaced only if it is an earlier demo store. The review book of the demo
    store is written to OUT/review; the last line is the path of its index.

    Example: ratebank demo --db /tmp/demo.db
    """
    if db is None:
        # a --db typed before the command names the demo store; RATEBANK_DB, which
        # names the group's own store, does not
        given = ctx.parent.get_parameter_source("db") if ctx.parent else None
        typed = given is not None and given.name == "COMMANDLINE" and STATE.db
        if typed and "://" in str(STATE.db):
            raise BadInputError(
                "the demo builds a SQLite file: give --db a file path, not a database address",
                argument="db",
            )
        db = Path(STATE.db) if typed else Path("ratebank-demo.db")
    with progress_bar(STATE.quiet) as progress:
        result = api.demo(db, out, author=STATE.author, progress=progress)
    show(*demo_summary(result))
    say(f"Review book of the demo store ({result.book.pages} pages); open its index:")
    say(str(result.book.index))


def main() -> None:
    """Console-script entry point."""
    app(prog_name="ratebank")
