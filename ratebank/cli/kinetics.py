"""Commands of the kinetics: fit, steric, estimate, check, rate, recommend, export."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import typer

from ratebank.cli import plot as plot_commands
from ratebank.cli.common import (
    JSON_OPTION,
    STATE,
    calls,
    number,
    opened_store,
    print_json,
    say,
    show,
)
from ratebank.cli.progress import progress_bar
from ratebank.errors import RefusedEstimateError
from ratebank.report.kinetics import (
    check_records,
    check_table,
    derived_records,
    derived_table,
    estimate_records,
    estimate_tables,
    fit_records,
    fit_table,
    low_pressure_records,
    low_pressure_table,
    pressure_fit_records,
    pressure_fit_table,
    rate_records,
    rate_table,
    steric_rule_records,
    steric_rule_tables,
)
from ratebank.report.thermo import reverse_rate_records, reverse_rate_table

PRESET_OPTION = typer.Option(
    "combustion", "--units", help="Unit preset for the table: combustion, atmospheric or si."
)
DEFINITION_OPTION = typer.Option(
    "local",
    "--definition",
    help="How P is defined: local (ratebank's, k / (z exp(-E0/RT))) or textbook (A / z, "
    "converted to the local P = e^(-1/2) A / z).",
)
COLLISION_OPTION = typer.Option(
    "hard-sphere", "--collision", help="Collision rate model: hard-sphere or lennard-jones."
)

steric_app = typer.Typer(
    help="Steric factors: class rules, per-reaction values, and those implied by "
    "measurements.\n\nExample: ratebank steric derived",
    no_args_is_help=True,
)


def _t_range(values: tuple[float, float] | None) -> tuple[float, float] | None:
    if not values or values[0] is None:
        return None
    return (float(values[0]), float(values[1]))


def register(app: typer.Typer) -> None:
    app.command("fit")(fit)
    app.command("estimate")(estimate)
    app.command("check")(check)
    app.command("rate")(rate)
    app.command("recommend")(recommend)
    app.command("export")(export)
    app.add_typer(steric_app, name="steric")
    plot_commands.register(app)


def _fixed_values(texts: list[str] | None) -> dict[str, float]:
    """``NAME=VALUE`` texts as a mapping (the value in the one number syntax)."""
    fixed: dict[str, float] = {}
    for text in texts or ():
        name, sign, value = text.partition("=")
        if not sign or not name.strip():
            raise typer.BadParameter(f"{text!r}: expected NAME=VALUE, such as Fc=0.6")
        try:
            fixed[name.strip()] = number(value.strip())
        except typer.BadParameter as exc:
            raise typer.BadParameter(f"{text!r}: {exc}") from None
    return fixed


@calls("fit")
def fit(
    keys: list[str] = typer.Argument(None, help="Reaction keys (default: every measured one)."),
    form: str = typer.Option(
        "auto",
        "--form",
        help="arrhenius (A, Ea), modified (A, n, Ea), auto (n only when the data support it), "
        "or falloff / activated (k0, k_inf and the broadening across T and P, one reaction).",
    ),
    fixed_n: float = typer.Option(
        None, "--fixed-n", help="Fit A and Ea with n held at this value.", parser=number
    ),
    pool_pressures: bool = typer.Option(
        False,
        "--pool-pressures",
        help="Fit a reaction written with M in k(T) although its points lie at different "
        "pressures (said in the fit's warnings and provenance).",
    ),
    broadening: str = typer.Option(
        "none", "--broadening", help="falloff / activated: none (Lindemann), troe or fixed-fc."
    ),
    free: list[str] = typer.Option(
        None, "--free", help="falloff / activated: also fit this optional parameter (N, T2)."
    ),
    fix: list[str] = typer.Option(
        None,
        "--fix",
        help="falloff / activated: hold NAME=VALUE, in SI (A0, n0, Ea0 [J/mol], A_inf, n_inf, "
        "Ea_inf, Fc, N, alpha, T3, T1, T2 [K]); e.g. --fix Fc=0.6 --fix Ea0=0.",
    ),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Fit the measured k(T) sets of reactions and store each fit.

    All sets of a reaction are pooled in one weighted least-squares fit in ln k.
    Points whose pressures differ by more than a factor of 2 are never pooled
    silently: a reaction written with M is refused (fit it with --form falloff, or
    give --pool-pressures), any other is fitted with a warning.

    With --form falloff (reaction written with M) or activated (written without M),
    one reaction's points across temperatures and pressures are fitted by weighted
    nonlinear least squares; every needed parameter is fitted unless --fix holds it.

    Example: ratebank fit h-o2-m --form falloff --broadening fixed-fc --fix Ea0=0
    """
    with opened_store() as store, progress_bar(STATE.quiet) as progress:
        report = store.fit(
            keys or None,
            form=form,
            fixed_n=fixed_n,
            pool_pressures=pool_pressures,
            broadening=broadening,
            free=free or (),
            fixed=_fixed_values(fix),
            progress=progress,
        )
    if not hasattr(report, "rows"):
        if as_json:
            print_json(pressure_fit_records(report, preset))
        elif not STATE.quiet:
            show(pressure_fit_table(report, preset))
            said = "stored as" if report.status == "stored" else "unchanged since the last fit,"
            say(f"fit {said} expression {report.expression_id}.")
        return
    if as_json:
        print_json(fit_records(report, preset))
    elif not STATE.quiet:
        show(fit_table(report, preset))
        say(f"{report.stored} fit(s) stored, {report.failed} reaction(s) could not be fitted.")
        if any("pool the pressures" in (row.message or "") for row in report.rows):
            say("(--form falloff fits across pressures; --pool-pressures pools them on purpose)")
    if report.failed:
        raise typer.Exit(1)


@calls("estimate")
def estimate(
    keys: list[str] = typer.Argument(
        None, help="Reaction keys (default: every bimolecular reaction with only an Ea)."
    ),
    steric: float = typer.Option(
        None, "--steric", help="Steric factor P for these reactions.", parser=number
    ),
    t_ref: float = typer.Option(
        None, "--t-ref", help="Temperature [K] at which the activation energy holds.", parser=number
    ),
    collision: str = COLLISION_OPTION,
    reaction_class: str = typer.Option(None, "--class", help="Only reactions of this class."),
    fallback_steric: float = typer.Option(
        None, "--fallback-steric", help="P for reactions no other rule covers.", parser=number
    ),
    uncertainty_factor: float = typer.Option(
        None,
        "--uncertainty-factor",
        help="Uncertainty factor when no class spread is known (default 10).",
        parser=number,
    ),
    t_range: tuple[float, float] = typer.Option(
        None,
        "--t-range",
        help="Valid range TMIN TMAX [K] for estimates that state none.",
        show_default=False,
        parser=number,
    ),
    keep_going: bool = typer.Option(
        False, "--keep-going", help="Store what can be estimated even if some cannot."
    ),
    low_pressure: bool = typer.Option(
        False,
        "--low-pressure",
        help="Estimate k0 of the named decompositions written with M (Hinshelwood).",
    ),
    oscillators: float = typer.Option(
        None, "--oscillators", help="Effective number of oscillators s.", parser=number
    ),
    collision_efficiency: float = typer.Option(
        None, "--efficiency", help="Collision efficiency beta_c in (0, 1].", parser=number
    ),
    bath: str = typer.Option(None, "--bath", help="Bath-gas species (Lennard-Jones data)."),
    threshold: float = typer.Option(
        None, "--threshold", help="Threshold energy E0 (default: the stored Ea).", parser=number
    ),
    threshold_units: str = typer.Option(
        "kJ/mol", "--threshold-units", help="Unit of --threshold, e.g. kJ/mol or K."
    ),
    preset: str = PRESET_OPTION,
    as_json: bool = JSON_OPTION,
) -> None:
    """Estimate missing A factors from collision theory times a steric factor.

    P comes from --steric, else the value stored on the reaction, else the class rule,
    else the class's measured reactions, else --fallback-steric. Nothing is written if
    any requested reaction cannot be estimated, unless --keep-going. An association
    written with M whose falloff expression leaves A empty gets k_inf this way, with
    its k0 and broadening kept.

    With --low-pressure: k0 of each named decomposition written with M (one reactant
    besides M) from Hinshelwood's strong-collision formula, with --oscillators,
    --efficiency and --bath, over the stored Ea's range (or --t-range); stored as
    order-of-magnitude guidance with uncertainty factor 10 (or --uncertainty-factor).

    Exit status: 0 when every estimate that could be made is stored (with
    --keep-going the reactions left out are listed, each with the reason); 1 when
    nothing was written (a reaction cannot be estimated without --keep-going, or
    any other error).

    Example: ratebank estimate --class h-abstraction --collision hard-sphere
    """
    try:
        with opened_store() as store, progress_bar(STATE.quiet) as progress:
            report = store.estimate(
                keys or None,
                steric=steric,
                T_ref=t_ref,
                collision=collision,
                reaction_class=reaction_class,
                fallback_steric=fallback_steric,
                uncertainty_factor=uncertainty_factor,
                T_range=_t_range(t_range),
                keep_going=keep_going,
                progress=progress,
                low_pressure=low_pressure,
                oscillators=oscillators,
                collision_efficiency=collision_efficiency,
                bath=bath,
                threshold_energy=threshold,
                threshold_units=threshold_units if threshold is not None else None,
            )
    except RefusedEstimateError as exc:
        if as_json and exc.report is not None:
            print_json(estimate_records(exc.report, preset))
        raise
    if low_pressure:
        _show_low_pressure(report, preset, as_json)
        return
    if as_json:
        print_json(estimate_records(report, preset))
    elif not STATE.quiet:
        show(*estimate_tables(report, preset))
        say(
            f"{len(report.rows)} estimate(s) stored; {len(report.skipped)} reaction(s) "
            "not estimated."
        )
    # with --keep-going, reactions left out (listed above) are not a failure


def _check_summary(report) -> str:  # type: ignore[no-untyped-def]
    if report.clean:
        return "Clean: nothing flagged, everything checked."
    unchecked = f"{len(report.unchecked)} expression(s) could not be checked"
    if not report.flags:
        return f"Nothing flagged, but {unchecked} (listed above)."
    return (
        f"{len(report.flags)} flag(s); {unchecked}."
        if report.unchecked
        else (f"{len(report.flags)} flag(s).")
    )


def _show_low_pressure(report: Any, preset: str, as_json: bool) -> None:
    if as_json:
        print_json(low_pressure_records(report, preset))
    elif not STATE.quiet:
        show(low_pressure_table(report, preset))
        say(
            f"{len(report.rows)} low-pressure estimate(s) stored: order-of-magnitude "
            "guidance (Hinshelwood, strong collisions)."
        )


@calls("check")
def check(
    t_range: tuple[float, float] = typer.Option(
        None,
        "--t-range",
        help="Range TMIN TMAX [K] the mechanism will be used over (flags extrapolation).",
        show_default=False,
        parser=number,
    ),
    ignore: list[str] = typer.Option(None, "--ignore", help="A check not to report (repeatable)."),
    keys: list[str] = typer.Argument(None, help="Reaction keys (default: all)."),
    collision: str = typer.Option(
        None,
        "--collision",
        help="Collision model of the limit: hard-sphere or lennard-jones (default: each "
        "estimate's own model, else hard-sphere).",
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """Check every expression against physical limits; exit 1 when anything is flagged.

    Checks: above-collision-limit, steric-above-one, collinear-fit, extrapolation
    (with --t-range), estimated-diameter, nothing-usable; with thermochemistry:
    ea-below-reaction-enthalpy, reverse-above-collision-limit, directions-disagree,
    reverse-without-thermochemistry, thermo-midpoint-jump; of the rate-law forms:
    falloff-not-monotonic, fc-out-of-range, troe-temperature-not-positive,
    sum-ranges-inconsistent, efficiency-unknown-species, efficiency-unused. The note
    no-efficiencies (a reaction with M stating none) is listed but fails nothing.

    Example: ratebank check --t-range 300 2000
    """
    with opened_store() as store:
        report = store.check(
            keys or None, T_range=_t_range(t_range), ignore=ignore or None, collision=collision
        )
    if as_json:
        print_json(check_records(report))
    else:
        show(check_table(report))
        say(_check_summary(report))
    if report.flags:
        raise typer.Exit(1)


@calls("rate")
def rate(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    temperatures: list[float] = typer.Option(
        ..., "-T", "--temperature", help="Temperature [K].", parser=number
    ),
    k_units: str = typer.Option(None, "--k-units", help="Unit of k (default: from --units)."),
    preset: str = PRESET_OPTION,
    reverse: bool = typer.Option(
        False, "--reverse", help="The reverse rate k_f / Kc (needs the species' thermochemistry)."
    ),
    pressure: float = typer.Option(
        None, "-P", "--pressure", help="Pressure (in --pressure-units, default bar).", parser=number
    ),
    pressure_units: str = typer.Option(
        "bar", "--pressure-units", help="Pa, kPa, bar, atm, Torr or mbar."
    ),
    bath: str = typer.Option(None, "--bath", help="Bath gas, e.g. N2 (one collider)."),
    mixture: str = typer.Option(
        None, "--mixture", help="Colliders and mole fractions, e.g. 'N2:0.78,O2:0.21,H2O:0.01'."
    ),
    as_json: bool = JSON_OPTION,
) -> None:
    """k at given temperatures from the expression that would be exported.

    With -P, at that pressure of the bath gas or mixture, each collider counting with
    its third-body efficiency (1 when none is stated): a reaction written with M gives
    its effective k, and a fall-off or chemically activated one also k0, k∞, Pr and F
    (those two need a pressure). With --reverse, the reverse reaction's k_r = k_f / Kc by
    detailed balance, in the units of its own order.

    Example: ratebank rate h-o2-m -T 300 -T 1000 -P 1 --mixture 'N2:0.78,O2:0.21,H2O:0.01'
    """
    with opened_store() as store:
        report = store.rate(
            key, temperatures, k_units=k_units, preset=preset, reverse=reverse,
            pressure=pressure, pressure_units=pressure_units, bath=bath, mixture=mixture,
        )  # fmt: skip
    if as_json:
        print_json(reverse_rate_records(report) if reverse else rate_records(report))
    else:
        show(reverse_rate_table(report) if reverse else rate_table(report))


@calls("recommend")
def recommend(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    expression_id: int = typer.Argument(..., help="Id of the expression (see expressions list)."),
) -> None:
    """Mark an expression as the curator's choice for export.

    Example: ratebank recommend oh-ch4 12
    """
    with opened_store() as store:
        origin = store.recommend(key, expression_id).origin
    say(f"Expression {expression_id} ({origin}) is now the recommended one for {key}.")


@calls("export")
def export(
    out: Path = typer.Argument(
        ..., help="Output folder: a data package (datapackage.json, mechanism.csv, ...)."
    ),
    preset: str = typer.Option(
        "combustion", "--preset", help="Units: combustion, atmospheric or si."
    ),
    k_units: str = typer.Option(
        None, "--k-units", help="Explicit bimolecular k unit (other orders follow from it)."
    ),
    e_units: str = typer.Option(None, "--e-units", help="Explicit energy unit, e.g. cal/mol."),
    form: str = typer.Option(
        "modified", "--form", help="modified (A, n, Ea) or arrhenius (A, Ea)."
    ),
    linearise_at: float = typer.Option(
        None,
        "--linearise-at",
        help="With --form arrhenius: T [K] at which n != 0 rows are "
        "replaced by their local two-parameter form.",
        parser=number,
    ),
    leave_out_gaps: bool = typer.Option(
        False, "--leave-out-gaps", help="Export even if some reactions have no expression."
    ),
    reverse_as_fit: bool = typer.Option(
        False,
        "--reverse-as-fit",
        help="Write the reverse of each reversible reaction as its own modified-Arrhenius "
        "row (fitted to k_f / Kc over the row's range).",
    ),
    release: str = typer.Option(
        None,
        "--release",
        help="Write this release again, as frozen (SI units), whatever changed since.",
    ),
) -> None:
    """Write the mechanism as a data package: the folder OUT holding datapackage.json,
    mechanism.csv, efficiencies.csv and species.csv, written as one unit.

    Example: ratebank export mechanism --preset atmospheric
    """
    with opened_store() as store:
        result = store.export(
            out,
            release=release,
            preset=preset,
            k_units=k_units,
            e_units=e_units,
            form=form,
            linearise_at=linearise_at,
            leave_out_gaps=leave_out_gaps,
            reverse_as_fit=reverse_as_fit,
        )
    left = result.table.left_out
    say(
        f"Wrote {result.table.reaction_count} reactions to the data package "
        f"{result.folder} "
        f"({result.descriptor_path.name}, {result.table_path.name}, efficiencies.csv, "
        "species.csv)" + (f"; left out {len(left)}: {', '.join(left[:10])}" if left else "")
    )


@steric_app.command("list")
@calls("steric_rules")
def steric_list(as_json: bool = JSON_OPTION) -> None:
    """The stored steric factors: class rules and per-reaction values.

    Example: ratebank steric list
    """
    with opened_store() as store:
        rules, reactions = store.steric_rules()
    if as_json:
        print_json(steric_rule_records(rules, reactions))
    else:
        show(*steric_rule_tables(rules, reactions))


@steric_app.command("set-class")
@calls("set_class_steric")
def steric_set_class(
    reaction_class: str = typer.Argument(..., help="Reaction class."),
    value: float = typer.Argument(..., help="Steric factor P.", parser=number),
    uncertainty_factor: float = typer.Option(
        None,
        "--uncertainty-factor",
        help="Uncertainty factor of estimates using this rule.",
        parser=number,
    ),
    source: str = typer.Option(None, "--source", help="Where the value comes from."),
    note: str = typer.Option(None, "--note", help="Free text."),
    expect_version: int = typer.Option(
        None, "--expect-version", help="Refuse if the rule changed since you read this version."
    ),
    definition: str = DEFINITION_OPTION,
) -> None:
    """Set the (local) steric factor of a reaction class.

    Example: ratebank steric set-class h-abstraction 0.05 --source "analogy with OH + C2H6"
    """
    with opened_store() as store:
        rule = store.set_class_steric(
            reaction_class,
            value,
            uncertainty_factor=uncertainty_factor,
            source=source,
            note=note,
            expected_version=expect_version,
            definition=definition,
        )
    say(f"Class {rule.reaction_class}: local P = {rule.steric_factor:g} (version {rule.version}).")


@steric_app.command("clear-class")
@calls("clear_class_steric")
def steric_clear_class(reaction_class: str = typer.Argument(..., help="Reaction class.")) -> None:
    """Remove the steric rule of a reaction class.

    Example: ratebank steric clear-class h-abstraction
    """
    with opened_store() as store:
        store.clear_class_steric(reaction_class)
    say(f"Removed the steric rule of class {reaction_class}.")


@steric_app.command("set-reaction")
@calls("set_reaction_steric")
def steric_set_reaction(
    key: str = typer.Argument(..., help="Reaction key or equation."),
    value: float = typer.Argument(..., help="Steric factor P.", parser=number),
    source: str = typer.Option(None, "--source", help="Where the value comes from."),
    definition: str = DEFINITION_OPTION,
) -> None:
    """Store a (local) steric factor on one reaction (it takes precedence over its class).

    Example: ratebank steric set-reaction ho2-ho2 0.02 --source "analogy"
    """
    with opened_store() as store:
        stored = store.set_reaction_steric(key, value, source=source, definition=definition)
    say(f"Reaction {key}: local P = {stored.steric_factor:g}.")


@steric_app.command("clear-reaction")
@calls("clear_reaction_steric")
def steric_clear_reaction(key: str = typer.Argument(..., help="Reaction key or equation.")) -> None:
    """Remove the steric factor stored on one reaction.

    Example: ratebank steric clear-reaction ho2-ho2
    """
    with opened_store() as store:
        store.clear_reaction_steric(key)
    say(f"Reaction {key}: stored steric factor removed.")


@steric_app.command("derived")
@calls("derived_steric_factors")
def steric_derived(
    collision: str = COLLISION_OPTION,
    reaction_class: str = typer.Option(None, "--class", help="Only this class."),
    as_json: bool = JSON_OPTION,
) -> None:
    """Steric factors implied by measured fits, by class: geometric mean, spread, count.

    Example: ratebank steric derived --collision lennard-jones
    """
    with opened_store() as store:
        groups = store.derived_steric_factors(collision=collision, reaction_class=reaction_class)
    if as_json:
        print_json(derived_records(groups))
    else:
        show(derived_table(groups, collision))


# the group's last command, as its help lists them
steric_app.command("plot")(plot_commands.steric_plot)
