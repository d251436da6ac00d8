"""Rendering of fit, steric, estimate, check, rate and export results."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from rich.table import Table

from ratebank.report.format import shown, sig, trange
from ratebank.report.layout import ReportTable

if TYPE_CHECKING:  # types only: a report module must stay light to import
    from ratebank.services.checks import CheckReport
    from ratebank.services.estimation import EstimateReport
    from ratebank.services.falloff_fit import PressureFitReport
    from ratebank.services.fitting import FitReport
    from ratebank.services.rates import RateReport
    from ratebank.services.steric import ClassSteric, ReactionStericView, RuleView


def _units(order: int, preset: str) -> tuple[str, str]:
    from ratebank.science.unit_presets import energy_unit_for, rate_unit_for

    return rate_unit_for(preset, order), energy_unit_for(preset)


def _k(value: float | None, order: int, unit: str) -> float | None:
    from ratebank.science.units import rate_from_si

    return None if value is None else float(rate_from_si(value, unit, order))


def _e(value: float | None, unit: str) -> float | None:
    from ratebank.science.units import energy_from_si

    return None if value is None else float(energy_from_si(value, unit))


# --------------------------------------------------------------------------- fit


def fit_records(report: FitReport, preset: str) -> list[dict[str, Any]]:
    records = []
    for r in report.rows:
        k_unit, e_unit = _units(r.order, preset)
        records.append(
            {
                "key": r.key,
                "equation": r.equation,
                "status": r.status,
                "message": r.message,
                "form": r.form,
                "A": _k(r.A, r.order, k_unit),
                "n": r.n,
                "Ea": _e(r.Ea, e_unit),
                "k_units": k_unit,
                "Ea_units": e_unit,
                "T_min_K": r.T_min,
                "T_max_K": r.T_max,
                "points": r.n_points,
                "sets": r.n_sets,
                "reduced_chi_square": r.reduced_chi_square,
                "uncertainty_factor_min": r.uncertainty_factor_min,
                "uncertainty_factor_max": r.uncertainty_factor_max,
                "uncertainty_f298": r.uncertainty_f298,
                "uncertainty_g_K": r.uncertainty_g,
                "steric_factor": r.steric_factor,
                "steric_note": r.steric_note,
                "warnings": r.warnings,
                "expression_id": r.expression_id,
            }
        )
    return records


def fit_table(report: FitReport, preset: str) -> Table:
    records = fit_records(report, preset)
    e_unit = _units(2, preset)[1]
    table = ReportTable(
        title=f"Fits ({report.stored} stored, {report.failed} failed), {preset} units",
        drop=("note", "P", "χ²/dof", "points/sets"),
    )
    for header in (
        "reaction",
        "form",
        "A (k units·K^-n)",
        "n",
        f"Ea ({e_unit})",
        "T (K)",
        "points/sets",
        "χ²/dof",
        "f",
        "P",
        "note",
    ):
        table.add_column(header, overflow="fold")
    records, more = shown(records)
    for r in records:
        f = ""
        if r["uncertainty_factor_min"] is not None:
            f = f"{sig(r['uncertainty_factor_min'], 3)}-{sig(r['uncertainty_factor_max'], 3)}"
        note = r["message"]
        if r["status"] == "unchanged":
            note = "unchanged since the last fit; " + note
        if r["warnings"]:
            note += " " + " ".join(r["warnings"])
        table.add_row(
            r["key"],
            r["form"] or r["status"],
            f"{sig(r['A'])} {r['k_units']}" if r["A"] is not None else "",
            sig(r["n"]),
            sig(r["Ea"]),
            trange(r["T_min_K"], r["T_max_K"]),
            f"{r['points']}/{r['sets']}",
            sig(r["reduced_chi_square"], 3),
            f,
            sig(r["steric_factor"], 3),
            note,
        )
    table.caption = "f: uncertainty factor of k over the fitted range; P: implied steric factor" + (
        f"\n{more}" if more else ""
    )
    return table


def _parameter_unit(name: str, order: int, preset: str) -> tuple[str, int | None, str | None]:
    """(unit shown, k order to convert A with, energy unit to convert Ea with) of a
    parameter of a pressure-dependent fit: k0 has the reaction's order, k_inf one fewer."""
    k_order = {"A0": order, "A_inf": order - 1}.get(name)
    if k_order is not None:
        unit = _units(k_order, preset)[0]
        return f"{unit}·K^-n", k_order, None
    if name.startswith("Ea"):
        e_unit = _units(2, preset)[1]
        return e_unit, None, e_unit
    return ("K" if name in ("T3", "T1", "T2") else "-"), None, None


def pressure_fit_records(report: PressureFitReport, preset: str) -> dict[str, Any]:
    """The fit as one JSON record: each parameter in the preset's units with its sigma
    (of ln X for A0, A_inf, N, T3, T1, T2), and how it was obtained."""
    parameters = []
    for name, value in report.parameters.items():
        unit, k_order, e_unit = _parameter_unit(name, report.order, preset)
        shown_value = value
        if k_order is not None:
            shown_value = _k(value, k_order, unit.split("·")[0])
        elif e_unit is not None:
            shown_value = _e(value, e_unit)
        log_name = f"ln_{name}"
        sigma = report.sigmas.get(log_name, report.sigmas.get(name))
        if sigma is not None and e_unit is not None:
            sigma = _e(sigma, e_unit)
        parameters.append(
            {
                "name": name,
                "value": shown_value,
                "unit": unit,
                "free": name in report.free,
                "sigma": sigma,
                "sigma_of": log_name if log_name in report.sigmas else name,
            }
        )
    return {
        "key": report.key,
        "equation": report.equation,
        "status": report.status,
        "form": report.form,
        "broadening": report.broadening,
        "parameters": parameters,
        "points": report.n_points,
        "sets": report.n_sets,
        "temperatures": report.n_temperatures,
        "pressures": report.n_pressures,
        "T_min_K": report.T_min,
        "T_max_K": report.T_max,
        "P_min_bar": report.P_min / 1e5,
        "P_max_bar": report.P_max / 1e5,
        "weighted": report.weighted,
        "reduced_chi_square": report.reduced_chi_square,
        "uncertainty_f298": report.uncertainty_f298,
        "uncertainty_g_K": report.uncertainty_g,
        "warnings": report.warnings,
        "expression_id": report.expression_id,
    }


def pressure_fit_table(report: PressureFitReport, preset: str) -> Table:
    record = pressure_fit_records(report, preset)
    table = ReportTable(
        title=f"{report.key}: {report.form} fit, broadening {report.broadening}, {preset} units",
        drop=("σ of",),
    )
    for header in ("parameter", "value", "unit", "σ", "σ of"):
        table.add_column(header, overflow="fold")
    for p in record["parameters"]:
        table.add_row(
            p["name"],
            sig(p["value"]),
            p["unit"],
            sig(p["sigma"], 3) if p["free"] else "fixed",
            p["sigma_of"] if p["free"] else "",
        )
    chi = sig(record["reduced_chi_square"], 3) or "undefined"
    lines = [
        f"{record['points']} points in {record['sets']} sets at {record['temperatures']} "
        f"temperatures ({trange(record['T_min_K'], record['T_max_K'])} K) and "
        f"{record['pressures']} pressures ({sig(record['P_min_bar'], 3)}-"
        f"{sig(record['P_max_bar'], 3)} bar); χ²/dof {chi}; f(298 K) "
        f"{sig(record['uncertainty_f298'], 3)}, g {sig(record['uncertainty_g_K'], 3)} K",
        *record["warnings"],
    ]
    if not record["weighted"]:
        lines.append("not every point states an uncertainty: the fit is unweighted")
    table.caption = "\n".join(lines)
    return table


# --------------------------------------------------------------------------- steric


def steric_rule_records(
    rules: Sequence[RuleView], reactions: Sequence[ReactionStericView]
) -> dict[str, Any]:
    return {
        "class_rules": [
            {
                "class": r.reaction_class,
                "steric_factor": r.steric_factor,
                "uncertainty_factor": r.uncertainty_factor,
                "source": r.source,
                "note": r.note,
                "version": r.version,
                "updated_at": r.updated_at.isoformat() if r.updated_at else None,  # type: ignore[attr-defined]
                "updated_by": r.updated_by,
            }
            for r in rules
        ],
        "reaction_values": [
            {
                "key": r.key,
                "class": r.reaction_class,
                "steric_factor": r.steric_factor,
                "source": r.source,
            }
            for r in reactions
        ],
    }


def steric_rule_tables(
    rules: Sequence[RuleView], reactions: Sequence[ReactionStericView]
) -> list[Table]:
    first = ReportTable(title=f"Steric factors by class ({len(rules)})")
    for header in ("class", "P", "f", "source", "note", "version", "changed by"):
        first.add_column(header, overflow="fold")
    for r in rules:
        first.add_row(
            r.reaction_class,
            sig(r.steric_factor, 3),
            sig(r.uncertainty_factor, 3),
            r.source or "",
            r.note or "",
            str(r.version),
            r.updated_by or "",
        )
    second = ReportTable(title=f"Steric factors stored on reactions ({len(reactions)})")
    for header in ("reaction", "class", "P", "source"):
        second.add_column(header, overflow="fold")
    for r in reactions:
        second.add_row(r.key, r.reaction_class or "", sig(r.steric_factor, 3), r.source or "")
    return [first, second]


def derived_records(groups: Sequence[ClassSteric]) -> list[dict[str, Any]]:
    return [
        {
            "class": g.reaction_class,
            "count": g.count,
            "geometric_mean": g.geometric_mean,
            "spread_factor": g.spread_factor,
            "minimum": g.minimum,
            "maximum": g.maximum,
            "reactions": [
                {
                    "key": s.key,
                    "steric_factor": s.steric_factor,
                    "T_K": s.temperature,
                    "expression_id": s.expression_id,
                    "uses_estimated_diameter": s.uses_estimated_diameter,
                }
                for s in g.samples
            ],
        }
        for g in groups
    ]


#: Members of a class named in the derived-P table; ``--json`` gives all of them.
MEMBERS_SHOWN = 12


def derived_table(groups: Sequence[ClassSteric], model: str) -> Table:
    table = ReportTable(title=f"Steric factors implied by measured fits ({model} collision rate)")
    for header in ("class", "reactions", "geometric mean P", "spread (×/÷)", "range", "members"):
        table.add_column(header, overflow="fold")
    for g in groups:
        # a class of a large mechanism can hold thousands of reactions: name the first few
        members = ", ".join(
            f"{s.key} {sig(s.steric_factor, 3)}" + ("*" if s.uses_estimated_diameter else "")
            for s in g.samples[:MEMBERS_SHOWN]
        )
        if g.count > MEMBERS_SHOWN:
            members += f", … and {g.count - MEMBERS_SHOWN} more (--json lists all)"
        table.add_row(
            g.reaction_class or "(no class)",
            str(g.count),
            sig(g.geometric_mean, 3),
            sig(g.spread_factor, 3),
            f"{sig(g.minimum, 3)}-{sig(g.maximum, 3)}",
            members,
        )
    table.caption = "* uses an estimated diameter"
    return table


# --------------------------------------------------------------------------- estimate


def estimate_records(report: EstimateReport, preset: str) -> dict[str, Any]:
    rows = []
    for r in report.rows:
        k_unit, e_unit = _units(2, preset)
        rows.append(
            {
                "key": r.key,
                "equation": r.equation,
                "A": _k(r.A, 2, k_unit),
                "n": r.n,
                "Ea": _e(r.Ea, e_unit),
                "k_units": k_unit,
                "Ea_units": e_unit,
                "activation_energy": _e(r.activation_energy, e_unit),
                "T_ref_K": r.T_ref,
                "T_min_K": r.T_min,
                "T_max_K": r.T_max,
                "steric_factor": r.steric_factor,
                "steric_rule": r.steric_rule,
                "uncertainty_factor": r.uncertainty_factor,
                "collision_model": r.collision_model,
                "collision_rate_at_T_ref": _k(r.collision_rate_at_T_ref, 2, k_unit),
                "estimated_diameters": r.estimated_diameters,
                "threshold_energy_held_at_zero": r.threshold_shortfall > 0,
                "activation_energy_below_collision_rate": _e(r.threshold_shortfall, e_unit),
                "max_fit_deviation": r.max_fit_deviation,
                "expression_id": r.expression_id,
                "replaced": r.replaced,
                "activation_energy_from": r.activation_energy_rule or "stored expression",
            }
        )
    return {
        "written": report.written,
        "estimated": rows,
        "not_estimated": [{"key": s.key, "reason": s.reason} for s in report.skipped],
    }


def estimate_tables(report: EstimateReport, preset: str) -> list[Table]:
    data = estimate_records(report, preset)
    k_unit, e_unit = _units(2, preset)
    done = ReportTable(
        title=f"Estimates ({len(data['estimated'])}), {preset} units",
        drop=("estimated d", "T_ref (K)", "P from"),
    )
    for header in (
        "reaction",
        "A (k units·K^-n)",
        "n",
        f"Ea ({e_unit})",
        f"z(T_ref) ({k_unit})",
        "P",
        "P from",
        "f",
        "T_ref (K)",
        "estimated d",
    ):
        done.add_column(header, overflow="fold")
    estimated, more = shown(data["estimated"])
    held = [r["key"] for r in data["estimated"] if r["threshold_energy_held_at_zero"]]
    unranged = [r["key"] for r in data["estimated"] if r["T_min_K"] is None]
    notes = [more] if more else []
    if unranged:
        notes.append(
            f"No valid range stated for {', '.join(unranged[:10])}"
            f"{' ...' if len(unranged) > 10 else ''}: give the activation energy a range"
        )
    if held:
        notes.append(
            f"E0 held at 0 for {', '.join(held[:10])}{' ...' if len(held) > 10 else ''}: "
            "the given Ea is below the collision rate's own, so the estimate is P z(T)"
        )
    related = [
        r["key"] for r in data["estimated"] if r["activation_energy_from"] != "stored expression"
    ]
    if related:
        notes.append(f"Ea from an Evans-Polanyi relation for {', '.join(related[:10])}")
    if notes:
        done.caption = "\n".join(notes)
    for r in estimated:
        done.add_row(
            r["key"],
            sig(r["A"]),
            sig(r["n"]),
            sig(r["Ea"]),
            sig(r["collision_rate_at_T_ref"]),
            sig(r["steric_factor"], 3),
            r["steric_rule"],
            sig(r["uncertainty_factor"], 3),
            sig(r["T_ref_K"]),
            ", ".join(r["estimated_diameters"]),
        )
    tables = [done]
    if data["not_estimated"]:
        missing = ReportTable(title=f"Not estimated ({len(data['not_estimated'])})")
        missing.add_column("reaction")
        missing.add_column("reason", overflow="fold")
        not_estimated, more_missing = shown(data["not_estimated"])
        if more_missing:
            missing.caption = more_missing
        for s in not_estimated:
            missing.add_row(s["key"], s["reason"])
        tables.append(missing)
    return tables


def low_pressure_records(report: Any, preset: str) -> dict[str, Any]:
    """The low-pressure (Hinshelwood) estimates: k0 has the reaction's order, 2."""
    k_unit, e_unit = _units(2, preset)
    return {
        "written": report.written,
        "guidance": "order of magnitude (Hinshelwood, strong collisions)",
        "estimated": [
            {
                "key": r.key,
                "equation": r.equation,
                "form": "third-body",
                "A": _k(r.A, 2, k_unit),
                "n": r.n,
                "Ea": _e(r.Ea, e_unit),
                "k_units": k_unit,
                "Ea_units": e_unit,
                "T_min_K": r.T_min,
                "T_max_K": r.T_max,
                "threshold_energy": _e(r.threshold_energy, e_unit),
                "threshold_energy_from": r.threshold_from,
                "oscillators": r.oscillators,
                "collision_efficiency": r.collision_efficiency,
                "bath_gas": r.bath,
                "uncertainty_factor": r.uncertainty_factor,
                "k0_at_T_middle": _k(r.k0_at_middle, 2, k_unit),
                "T_middle_K": r.T_middle,
                "max_fit_deviation": r.max_fit_deviation,
                "estimated_diameters": r.estimated_diameters,
                "expression_id": r.expression_id,
                "replaced": r.replaced,
            }
            for r in report.rows
        ],
    }


def low_pressure_table(report: Any, preset: str) -> Table:
    data = low_pressure_records(report, preset)
    k_unit, e_unit = _units(2, preset)
    table = ReportTable(
        title=f"Low-pressure k0 estimates ({len(data['estimated'])}), {preset} units",
        drop=("E0 from", "T range (K)"),
    )
    for header in (
        "reaction",
        f"k0 A ({k_unit}·K^-n)",
        "n",
        f"Ea ({e_unit})",
        f"E0 ({e_unit})",
        "E0 from",
        "s",
        "beta_c",
        "bath",
        "f",
        "T range (K)",
    ):
        table.add_column(header, overflow="fold")
    for r in data["estimated"]:
        table.add_row(
            r["key"],
            sig(r["A"]),
            sig(r["n"]),
            sig(r["Ea"]),
            sig(r["threshold_energy"]),
            r["threshold_energy_from"],
            sig(r["oscillators"], 3),
            sig(r["collision_efficiency"], 3),
            r["bath_gas"],
            sig(r["uncertainty_factor"], 3),
            trange(r["T_min_K"], r["T_max_K"]),
        )
    table.caption = "Order-of-magnitude guidance: Hinshelwood's strong-collision k0."
    return table


# --------------------------------------------------------------------------- check


def check_records(report: CheckReport) -> dict[str, Any]:
    return {
        "clean": report.clean,
        "reactions": report.reactions,
        "expressions": report.expressions,
        "t_range_K": list(report.t_range) if report.t_range else None,
        "ignored": report.ignored,
        "collision_model": report.collision,
        "unchecked": [
            {"key": u.key, "expression_id": u.expression_id, "reason": u.reason}
            for u in report.unchecked
        ],
        "flags": [
            {
                "key": f.key,
                "code": f.code,
                "message": f.message,
                "expression_id": f.expression_id,
                "value": f.value,
                "T_K": f.temperature,
            }
            for f in report.flags
        ],
        "notes": [{"key": n.key, "code": n.code, "message": n.message} for n in report.notes],
    }


def check_table(report: CheckReport) -> Table:
    table = ReportTable(
        title=f"Check: {len(report.flags)} flag(s) over {report.reactions} reactions"
    )
    for header in ("reaction", "check", "finding"):
        table.add_column(header, overflow="fold")
    flags, more = shown(report.flags)
    if more:
        table.caption = more
    for f in flags:
        table.add_row(f.key, f.code, f.message)
    for u in report.unchecked:
        table.add_row(u.key, "unchecked", u.reason)
    for n in report.notes:
        table.add_row(n.key, f"note: {n.code}", n.message)
    return table


# --------------------------------------------------------------------------- rate


def rate_records(report: RateReport) -> dict[str, Any]:
    return {
        "key": report.key,
        "equation": report.equation,
        "origin": report.origin,
        "expression_id": report.expression_id,
        "chosen_by": report.chosen_by,
        "form": report.form,
        "k_units": report.k_units,
        "T_min_K": report.T_min,
        "T_max_K": report.T_max,
        **_rate_conditions(report),
        "rates": [
            {
                "T_K": r.T,
                "k": r.k,
                "uncertainty_factor": r.uncertainty_factor,
                "in_range": r.in_range,
                **({"k0": r.k0, "k_inf": r.k_inf, "Pr": r.Pr, "F": r.F} if report.k0_units else {}),
            }
            for r in report.rows
        ],
    }


def _rate_conditions(report: RateReport) -> dict[str, Any]:
    found: dict[str, Any] = {}
    if report.conditions is not None:
        c = report.conditions
        found["pressure"] = c.pressure
        found["pressure_units"] = c.pressure_units
        found["colliders"] = [
            {"species": name, "mole_fraction": x, "efficiency": eps} for name, x, eps in c.colliders
        ]
    if report.k0_units:
        found["k0_units"] = report.k0_units
        found["k_inf_units"] = report.k_inf_units
    return found


def rate_table(report: RateReport) -> Table:
    table = ReportTable(
        title=f"{report.key}: {report.equation} ({report.origin}, expression "
        f"{report.expression_id}, {report.chosen_by})"
    )
    parts = ("k0", "k∞", "Pr", "F") if report.k0_units else ()
    headers = ["T (K)", f"k ({report.k_units})", "f", "range"]
    if parts:
        headers[2:2] = [f"k0 ({report.k0_units})", f"k∞ ({report.k_inf_units})", "Pr", "F"]
    for header in headers:
        table.add_column(header)
    for r in report.rows:
        where = "" if r.in_range is None else ("inside" if r.in_range else "extrapolated")
        extra = [sig(r.k0), sig(r.k_inf), sig(r.Pr, 4), sig(r.F, 4)] if parts else []
        table.add_row(sig(r.T), sig(r.k), *extra, sig(r.uncertainty_factor, 3), where)
    if report.conditions is not None:
        c = report.conditions
        colliders = ", ".join(
            f"{name} {x:.4g} (ε {eps:g})" if name[0] != "(" else name
            for name, x, eps in c.colliders
        )
        table.caption = (
            f"{report.form} at {c.pressure:g} {c.pressure_units}; colliders: {colliders}"
        )
    elif report.form != "arrhenius":
        table.caption = f"{report.form} expression" + (
            ": the coefficient k0 of k = k0 [M]_eff (give a pressure for k)"
            if report.form == "third-body"
            else ""
        )
    return table
