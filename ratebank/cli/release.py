"""Commands of releases and comparison: release create/list/show, diff."""

from __future__ import annotations

import typer

from ratebank.cli.common import JSON_OPTION, calls, number, opened_store, print_json, say, show
from ratebank.report.releases import (
    diff_record,
    diff_summary,
    diff_tables,
    release_record,
    release_table,
    releases_table,
)

release_app = typer.Typer(
    help="Releases: the content of an export frozen under a name, never changed.\n\n"
    "Example: ratebank release create 2026-12",
    no_args_is_help=True,
)


def register(app: typer.Typer) -> None:
    app.add_typer(release_app, name="release")
    app.command("diff")(diff)


@release_app.command("create")
@calls("create_release")
def release_create(
    name: str = typer.Argument(..., help="A new name (a name is used once)."),
    leave_out_gaps: bool = typer.Option(
        False, "--leave-out-gaps", help="Release even if some reactions have no expression."
    ),
) -> None:
    """Freeze what an export would hold now: every row in SI units with its provenance,
    the efficiencies and species, the check results and a fingerprint, with who and when.

    Example: ratebank release create 2026-12
    """
    with opened_store() as store:
        view = store.create_release(name, leave_out_gaps=leave_out_gaps)
    say(
        f"Release {view.name}: {view.reactions} reactions ({view.rows} rows), "
        f"{view.efficiencies} efficiencies, {view.species} species; fingerprint "
        f"{view.fingerprint}. Write it with: ratebank export OUT --release {view.name}"
    )


@release_app.command("list")
@calls("releases")
def release_list(as_json: bool = JSON_OPTION) -> None:
    """List the releases, oldest first.

    Example: ratebank release list
    """
    with opened_store() as store:
        views = store.releases()
    if as_json:
        print_json([release_record(v) for v in views])
    else:
        show(releases_table(views))


@release_app.command("show")
@calls("release")
def release_show(
    name: str = typer.Argument(..., help="The release's name."), as_json: bool = JSON_OPTION
) -> None:
    """What a release holds: counts, fingerprint, who and when, the check summary.

    Example: ratebank release show 2026-12
    """
    with opened_store() as store:
        view = store.release(name)
    if as_json:
        print_json(release_record(view))
    else:
        show(release_table(view))


@calls("diff")
def diff(
    a: str = typer.Argument(
        ...,
        help="The older side: store, release:NAME (or a release's name), a store's path or "
        "URL, or an exported package folder.",
    ),
    b: str = typer.Argument(..., help="The newer side, as A."),
    temperatures: list[float] = typer.Option(
        None,
        "-T",
        "--temperature",
        help="Temperature [K] of the ratios (repeat; default 300, 1000 and each row's range "
        "ends inside its range).",
        parser=number,
    ),
    pressure: float = typer.Option(
        1.0,
        "-P",
        "--pressure",
        help="Pressure [bar] at which k of pressure-dependent forms is compared (efficiency 1).",
        parser=number,
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """Reactions added, removed and changed from A to B: for a changed one, the fields, the
    ratio k_B/k_A at the temperatures and whether it exceeds A's uncertainty factor, largest
    change first.

    Example: ratebank diff release:2026-12 store -T 500
    """
    with opened_store() as store:
        report = store.diff(a, b, temperatures=temperatures or None, pressure=pressure)
    if as_json:
        print_json(diff_record(report))
        return
    say(diff_summary(report))
    show(*diff_tables(report))
