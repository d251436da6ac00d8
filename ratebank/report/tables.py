"""Rich tables and JSON records for the listings.

Each listing has two renderings built from the same service results: a rich
table (3-4 significant digits, units in the column headers) and JSON records
(full precision, unit-suffixed keys).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from rich.table import Table

from ratebank.report.format import sig, trange
from ratebank.report.layout import ReportTable
from ratebank.science.constants import DEBYE, ELECTRONVOLT_MOLAR

if TYPE_CHECKING:  # types only: the overview pulls in the checks, the import summary the
    # validators, the listings the ORM models; a listing should not pay for them
    from ratebank.services.overview import ReactionOverview
    from ratebank.services.validate import ImportSummary
    from ratebank.store.listings import (
        ExpressionSummary,
        HistoryEntry,
        ReactionDetail,
        SetSummary,
        SpeciesDetail,
        SpeciesSummary,
    )
    from ratebank.store.quick_listings import ReactionSummary

#: The one meaning of ★ in every table.
RECOMMENDED_LEGEND = "★ recommended by the curator"
G_PER_KG = 1e3
ANGSTROM_PER_M = 1e10
BAR_PER_PA = 1e-5
CM3_PER_M3 = 1e6


def _opt(value: float | None, factor: float) -> float | None:
    return None if value is None else value * factor


# --------------------------------------------------------------------------- species


def species_records(rows: Sequence[SpeciesSummary]) -> list[dict[str, Any]]:
    return [
        {
            "name": s.name,
            "formula": s.formula,
            "molar_mass_g_per_mol": s.molar_mass * G_PER_KG,
            "molar_mass_source": s.molar_mass_source,
            "diameter_angstrom": _opt(s.diameter, ANGSTROM_PER_M),
            "diameter_kind": s.diameter_kind,
            "diameter_method": s.diameter_method,
            "diameter_estimated": s.diameter_is_estimated,
            "well_depth_K": s.well_depth,
            "critical_temperature_K": s.critical_temperature,
            "critical_pressure_bar": _opt(s.critical_pressure, BAR_PER_PA),
            "acentric_factor": s.acentric_factor,
            "boiling_volume_cm3_per_mol": _opt(s.boiling_volume, CM3_PER_M3),
            "boiling_temperature_K": s.boiling_temperature,
            "dipole_moment_debye": _opt(s.dipole_moment, 1.0 / DEBYE),
            "polarizability_angstrom3": _opt(s.polarizability, ANGSTROM_PER_M**3),
            "ionization_energy_eV": _opt(s.ionization_energy, 1.0 / ELECTRONVOLT_MOLAR),
            "source": s.source,
            "withdrawn": s.withdrawn_reason,
        }
        for s in rows
    ]


def species_table(rows: Sequence[SpeciesSummary]) -> Table:
    table = ReportTable(
        title=f"Species ({len(rows)})", drop=("source", "Pc (bar)", "Tc (K)", "ε/k (K)")
    )
    for header in (
        "name",
        "formula",
        "M (g/mol)",
        "d (Å)",
        "diameter",
        "ε/k (K)",
        "Tc (K)",
        "Pc (bar)",
        "source",
    ):
        table.add_column(header, overflow="fold")
    for s in rows:
        diameter_note = ""
        if s.diameter is not None:
            diameter_note = s.diameter_kind or ""
            if s.diameter_is_estimated:
                diameter_note += f" (estimated: {s.diameter_method})"
        table.add_row(
            s.name + (" (withdrawn)" if s.withdrawn_reason else ""),
            s.formula,
            sig(s.molar_mass * G_PER_KG) + ("" if s.molar_mass_source == "given" else "*"),
            sig(_opt(s.diameter, ANGSTROM_PER_M)),
            diameter_note,
            sig(s.well_depth),
            sig(s.critical_temperature),
            sig(_opt(s.critical_pressure, BAR_PER_PA)),
            s.source or "",
        )
    table.caption = "* molar mass from the formula (IUPAC standard atomic weights)"
    return table


def species_detail_record(detail: SpeciesDetail) -> dict[str, Any]:
    record = species_records([detail.species])[0]
    guess = detail.estimated_diameter
    record["diameter_estimate"] = (
        None
        if guess is None
        else {
            "diameter_angstrom": guess.diameter * ANGSTROM_PER_M,
            "method": guess.method,
            "source": guess.source,
            "stored": False,
        }
    )
    record["reactions"] = [
        {"key": key, "equation": equation, "role": role} for key, equation, role in detail.reactions
    ]
    return record


def species_detail_tables(detail: SpeciesDetail) -> list[Table]:
    record = species_detail_record(detail)
    facts = ReportTable(title=f"Species {detail.species.name}", show_header=False)
    facts.add_column("property")
    facts.add_column("value", overflow="fold")
    labels = {
        "formula": "formula",
        "molar_mass_g_per_mol": "molar mass (g/mol)",
        "molar_mass_source": "molar mass from",
        "diameter_angstrom": "collision diameter (Å)",
        "diameter_kind": "diameter kind",
        "diameter_method": "diameter from",
        "well_depth_K": "well depth ε/k (K)",
        "critical_temperature_K": "critical temperature (K)",
        "critical_pressure_bar": "critical pressure (bar)",
        "acentric_factor": "acentric factor",
        "boiling_volume_cm3_per_mol": "boiling-point molar volume (cm3/mol)",
        "source": "source",
    }
    for key, label in labels.items():
        value = record[key]
        text = sig(value) if isinstance(value, float) else str(value or "")
        if key == "diameter_angstrom" and record["diameter_estimated"]:
            text += " (estimated)"
        guess = record["diameter_estimate"]
        if key == "diameter_angstrom" and guess is not None:
            # what collision theory would use: shown, marked, and not stored
            text = f"{sig(guess['diameter_angstrom'])} (estimated, not stored)"
        if key == "diameter_method" and guess is not None:
            text = f"{guess['method']} ({guess['source']})"
        facts.add_row(label, text)
    reactions = ReportTable(title=f"Reactions of {detail.species.name} ({len(detail.reactions)})")
    for header in ("key", "equation", "role"):
        reactions.add_column(header, overflow="fold")
    for key, equation, role in detail.reactions:
        reactions.add_row(key, equation, role)
    return [facts, reactions]


# --------------------------------------------------------------------------- reactions


def reaction_records(rows: Sequence[ReactionSummary]) -> list[dict[str, Any]]:
    return [
        {
            "key": r.key,
            "equation": r.equation,
            "order": r.order,
            "third_body": r.third_body,
            "class": r.reaction_class,
            "sets": r.sets,
            "points": r.points,
            "expressions": r.expressions,
            "status": r.status,
            "withdrawn": r.withdrawn,
        }
        for r in rows
    ]


def reactions_table(rows: Sequence[ReactionSummary]) -> Table:
    table = ReportTable(
        title=f"Reactions ({len(rows)})", drop=("expressions", "order", "sets", "points")
    )
    for header in ("key", "equation", "order", "class", "sets", "points", "expressions", "status"):
        table.add_column(header, overflow="fold")
    for r in rows:
        table.add_row(
            r.key + (" (withdrawn)" if r.withdrawn else ""),
            r.equation,
            str(r.order),
            r.reaction_class or "",
            str(r.sets),
            str(r.points),
            str(r.expressions),
            r.status,
        )
    return table


# --------------------------------------------------------------------------- sets


def set_records(rows: Sequence[SetSummary]) -> list[dict[str, Any]]:
    return [
        {
            "set": s.name,
            "reaction": s.reaction_key,
            "reference": s.reference,
            "method": s.method,
            "bath_gas": s.bath_gas,
            "points": s.points,
            "T_min_K": s.T_min,
            "T_max_K": s.T_max,
            "k_units_given": s.k_units,
            "pressures": [
                {
                    "pressure_bar": _opt(p.pressure, BAR_PER_PA),
                    "points": p.points,
                    "T_min_K": p.T_min,
                    "T_max_K": p.T_max,
                }
                for p in s.pressures
            ],
            "withdrawn": s.withdrawn,
        }
        for s in rows
    ]


def pressure_group_records(rows: Sequence[SetSummary]) -> list[dict[str, Any]]:
    """The points of the sets grouped by reaction, pressure and bath gas: how many sets and
    points each group holds and over which temperatures (no pressure last)."""
    groups: dict[tuple[str, float | None, str | None], dict[str, Any]] = {}
    for s in rows:
        for p in s.pressures:
            group = groups.setdefault(
                (s.reaction_key, p.pressure, s.bath_gas),
                {
                    "reaction": s.reaction_key,
                    "pressure_bar": _opt(p.pressure, BAR_PER_PA),
                    "bath_gas": s.bath_gas,
                    "sets": [],
                    "points": 0,
                    "T_min_K": p.T_min,
                    "T_max_K": p.T_max,
                },
            )
            group["sets"].append(s.name)
            group["points"] += p.points
            group["T_min_K"] = min(group["T_min_K"], p.T_min)
            group["T_max_K"] = max(group["T_max_K"], p.T_max)
    return [
        groups[key]
        for key in sorted(groups, key=lambda g: (g[0], g[1] is None, g[1] or 0.0, g[2] or ""))
    ]


def pressure_groups_table(rows: Sequence[SetSummary]) -> Table | None:
    """The points by pressure (None when no point states one)."""
    records = pressure_group_records(rows)
    if all(r["pressure_bar"] is None for r in records):
        return None
    table = ReportTable(title="Points by pressure", drop=("sets",))
    for header in ("reaction", "P (bar)", "bath gas", "sets", "points", "T (K)"):
        table.add_column(header, overflow="fold")
    for r in records:
        table.add_row(
            r["reaction"],
            sig(r["pressure_bar"]) if r["pressure_bar"] is not None else "(not given)",
            r["bath_gas"] or "",
            f"{len(r['sets'])}: {', '.join(r['sets'])}",
            str(r["points"]),
            trange(r["T_min_K"], r["T_max_K"]),
        )
    return table


def sets_table(rows: Sequence[SetSummary]) -> Table:
    table = ReportTable(title=f"Measurement sets ({len(rows)})")
    for header in ("set", "reaction", "points", "T (K)", "k given in", "method", "reference"):
        table.add_column(header, overflow="fold")
    for s in rows:
        table.add_row(
            s.name + (" (withdrawn)" if s.withdrawn else ""),
            s.reaction_key,
            str(s.points),
            trange(s.T_min, s.T_max),
            s.k_units,
            s.method or "",
            s.reference or "",
        )
    return table


# --------------------------------------------------------------------------- expressions


def _display_units(order: int, preset: str) -> tuple[str, str]:
    from ratebank.science.unit_presets import energy_unit_for, rate_unit_for

    return rate_unit_for(preset, order), energy_unit_for(preset)


#: Forms whose A, n, Ea are the high-pressure limit, one concentration fewer than the equation.
_LIMIT_FORMS = ("falloff", "activated")


def expression_records(rows: Sequence[ExpressionSummary], preset: str) -> list[dict[str, Any]]:
    from ratebank.science.units import energy_from_si, rate_from_si

    records = []
    for e in rows:
        order = e.reaction_order - 1 if e.form in _LIMIT_FORMS else e.reaction_order
        k_units, e_units = _display_units(order, preset)
        record = {
            "id": e.id,
            "reaction": e.reaction_key,
            "origin": e.origin,
            "form": e.form,
            "A": None if e.A is None else float(rate_from_si(e.A, k_units, order)),
            "n": e.n,
            "Ea": float(energy_from_si(e.Ea, e_units)),
            "k_units": k_units,
            "Ea_units": e_units,
            "T_min_K": e.T_min,
            "T_max_K": e.T_max,
            "uncertainty_factor": e.uncertainty_factor,
            "uncertainty_g_K": e.uncertainty_g,
            "reference": e.reference,
            "recommended": e.recommended,
            "version": e.version,
            "created_at": e.created_at.isoformat() if e.created_at else None,
            "created_by": e.created_by,
            "provenance": e.provenance,
            "withdrawn": e.withdrawn,
        }
        if e.low is not None:
            low_units, _ = _display_units(e.reaction_order, preset)
            record["A_low"] = float(rate_from_si(e.low[0], low_units, e.reaction_order))
            record["n_low"] = e.low[1]
            record["Ea_low"] = float(energy_from_si(e.low[2], e_units))
            record["k_low_units"] = low_units
            record["broadening"] = e.broadening
        if e.terms:
            record["terms"] = [
                {
                    "term": term,
                    "A": float(rate_from_si(A, k_units, order)),
                    "n": n,
                    "Ea": float(energy_from_si(Ea, e_units)),
                    "T_min_K": t_min,
                    "T_max_K": t_max,
                }
                for term, A, n, Ea, t_min, t_max in e.terms
            ]
        records.append(record)
    return records


def _form_text(r: dict[str, Any]) -> str:
    """The form cell: its name, and what the A, n, Ea columns do not show."""
    if "A_low" in r:
        b = r["broadening"] or {"kind": "none"}
        shown = ", ".join(f"{k} {sig(v)}" for k, v in b.items() if k != "kind")
        return (
            f"{r['form']} (A,n,Ea: k∞); k0 {sig(r['A_low'])} {r['k_low_units']}, "
            f"n {sig(r['n_low'])}, Ea {sig(r['Ea_low'])}; F {b['kind']}"
            + (f" ({shown})" if shown else "")
        )
    if "terms" in r:
        more = "; ".join(
            f"+ {sig(t['A'])} T^{sig(t['n'])} Ea {sig(t['Ea'])} "
            f"{trange(t['T_min_K'], t['T_max_K'])}"
            for t in r["terms"]
        )
        return f"sum: {more}"
    return r["form"]


def expressions_table(rows: Sequence[ExpressionSummary], preset: str) -> Table:
    records = expression_records(rows, preset)
    e_units = records[0]["Ea_units"] if records else ""
    table = ReportTable(
        title=f"Expressions ({len(rows)}), k = A T^n exp(-Ea/RT), {preset} units",
        drop=("v", "reference", "f", "T (K)", "origin", "form"),
    )
    for header in (
        "id",
        "reaction",
        "origin",
        "form",
        "A",
        "k units (A: ×K^-n)",
        "n",
        f"Ea ({e_units})",
        "T (K)",
        "f",
        "reference",
        "v",
    ):
        table.add_column(header, overflow="fold")
    for r in records:
        table.add_row(
            str(r["id"])
            + (" ★" if r["recommended"] else "")
            + (" (withdrawn)" if r["withdrawn"] else ""),
            r["reaction"],
            r["origin"],
            _form_text(r),
            sig(r["A"]) if r["A"] is not None else "(to estimate)",
            r["k_units"],
            sig(r["n"]),
            sig(r["Ea"]),
            trange(r["T_min_K"], r["T_max_K"]),
            sig(r["uncertainty_factor"], 3),
            r["reference"] or "",
            str(r["version"]),
        )
    legend = [RECOMMENDED_LEGEND] if any(r["recommended"] for r in records) else []
    table.caption = "; ".join([*legend, "v: version (for edits with --expect-version)"])
    return table


# --------------------------------------------------------------------------- reaction detail


def reaction_detail_record(detail: ReactionDetail, preset: str) -> dict[str, Any]:
    return {
        "key": detail.key,
        "equation": detail.equation,
        "order": detail.order,
        "third_body": detail.third_body,
        "class": detail.reaction_class,
        "notes": detail.notes,
        "steric_factor": detail.steric_factor,
        "steric_source": detail.steric_source,
        "participants": [
            {"role": p.role, "coefficient": p.coefficient, **species_records([p.species])[0]}
            for p in detail.participants
        ],
        "sets": set_records(detail.sets),
        "points_by_pressure": pressure_group_records(detail.sets),
        "expressions": expression_records(detail.expressions, preset),
        "efficiencies": [
            {"species": species, "efficiency": value, "source": source}
            for species, value, source in detail.efficiencies
        ],
        "history": history_records(detail.history),
    }


def reaction_detail_tables(detail: ReactionDetail, preset: str) -> list[Table]:
    facts = ReportTable(title=f"Reaction {detail.key}", show_header=False)
    facts.add_column("property")
    facts.add_column("value", overflow="fold")
    facts.add_row("equation", detail.equation)
    kind = {1: "unimolecular", 2: "bimolecular", 3: "termolecular"}.get(detail.order, "")
    if detail.third_body:
        kind += " (third body M)"
    facts.add_row("order", f"{detail.order} ({kind})")
    facts.add_row("class", detail.reaction_class or "")
    if detail.steric_factor is not None:
        facts.add_row(
            "stored steric factor", f"{sig(detail.steric_factor)} ({detail.steric_source})"
        )
    if detail.notes:
        facts.add_row("notes", detail.notes)
    participants = ReportTable(title="Participants")
    for header in ("role", "species", "coefficient", "M (g/mol)", "d (Å)", "ε/k (K)"):
        participants.add_column(header)
    for p in detail.participants:
        d = sig(_opt(p.species.diameter, ANGSTROM_PER_M))
        if p.species.diameter_is_estimated:
            d += f" (estimated: {p.species.diameter_method})"
        participants.add_row(
            p.role,
            p.species.name,
            str(p.coefficient),
            sig(p.species.molar_mass * G_PER_KG),
            d or "(none)",
            sig(p.species.well_depth),
        )
    tables = [facts, participants, sets_table(detail.sets)]
    if (by_pressure := pressure_groups_table(detail.sets)) is not None:
        tables.append(by_pressure)
    tables.append(expressions_table(detail.expressions, preset))
    if detail.third_body or detail.efficiencies:
        tables.append(_reaction_efficiencies_table(detail))
    if detail.history:
        tables.append(history_table(detail.history, title="Recent history"))
    return tables


def _reaction_efficiencies_table(detail: ReactionDetail) -> Table:
    table = ReportTable(
        title=f"Third-body efficiencies ({len(detail.efficiencies)}); "
        "a species not listed counts 1",
        drop=("source",),
    )
    for header in ("species", "efficiency", "source"):
        table.add_column(header)
    for species, value, source in detail.efficiencies:
        table.add_row(species, f"{value:g}", source or "")
    return table


# --------------------------------------------------------------------------- history


def history_records(rows: Sequence[HistoryEntry]) -> list[dict[str, Any]]:
    return [
        {
            "at": h.at.isoformat() if h.at else None,
            "author": h.author,
            "action": h.action,
            "target": h.target,
            "detail": h.detail,
        }
        for h in rows
    ]


def _change_text(changed: dict[str, Any]) -> str:
    """``A 1e-12 -> 2e-12 cm3/molecule/s`` for each field of an edit."""
    parts = []
    for name, change in changed.items():
        if not isinstance(change, dict):
            parts.append(f"{name} {change}")
            continue
        unit = f" {change['unit']}" if change.get("unit") else ""
        parts.append(f"{name} {change.get('before')} -> {change.get('after')}{unit}")
    return ", ".join(parts)


def _detail_text(detail: dict[str, Any]) -> str:
    parts = []
    for key, value in detail.items():
        if key == "changed" and isinstance(value, dict):
            parts.append(_change_text(value))
            continue
        if isinstance(value, list):
            shown = ", ".join(str(v) for v in value[:5])
            value = shown + (", ..." if len(value) > 5 else "")
        parts.append(f"{key}={value}")
    return "; ".join(parts)


def history_table(rows: Sequence[HistoryEntry], title: str = "History") -> Table:
    table = ReportTable(title=f"{title} ({len(rows)}, newest first)")
    for header in ("when", "who", "what", "target", "detail"):
        table.add_column(header, overflow="fold")
    for h in rows:
        when = h.at.strftime("%Y-%m-%d %H:%M:%S %Z") if h.at else ""
        table.add_row(when, h.author, h.action, h.target or "", _detail_text(h.detail))
    return table


# --------------------------------------------------------------------------- imports


def _update_message(summary: ImportSummary, noun: str) -> str:
    """An import that updates: how many records were added, changed and left unchanged."""
    counts = f"{summary.added} added, {summary.changed} changed, {summary.unchanged} unchanged"
    if summary.kind == "measurements":
        noun = "sets"
        counts += f" ({summary.details.get('points', 0)} points read)"
    if summary.dry_run:
        return f"{summary.source}: valid; would update {noun}: {counts} (dry run, nothing written)"
    return f"{summary.source}: updated {noun}: {counts}"


def import_message(summary: ImportSummary) -> str:
    noun = {
        "species": "species",
        "reactions": "reactions",
        "measurements": "points",
        "expressions": "expressions",
        "efficiencies": "efficiencies",
    }[summary.kind]
    if summary.update:
        return _update_message(summary, noun)
    extra = ""
    if summary.kind == "measurements":
        extra = f" in {summary.details.get('sets', 0)} sets"
        filled = summary.details.get("sets_with_filled_uncertainties", 0)
        if filled:
            verb = "would fill" if summary.dry_run else "filled"
            extra += f"; {verb} the missing uncertainties of {filled} sets with the set's median"
    elif summary.kind == "expressions":
        extra = (
            f" ({summary.details.get('complete', 0)} complete, "
            f"{summary.details.get('activation_energy_only', 0)} with only an activation energy)"
        )
    if summary.dry_run:
        return (
            f"{summary.source}: valid; would import {summary.added} {noun}{extra} "
            "(dry run, nothing written)"
        )
    return f"{summary.source}: imported {summary.added} {noun}{extra}"


# --------------------------------------------------------------------------- reaction overview


def reaction_overview_record(overview: ReactionOverview, preset: str) -> dict[str, Any]:
    from ratebank.science.unit_presets import rate_unit_for
    from ratebank.science.units import rate_from_si

    detail = overview.detail
    record = reaction_detail_record(detail, preset)
    unit = rate_unit_for(preset, detail.order)
    record["chosen_expression"] = {"id": overview.chosen_id, "rule": overview.chosen_rule}
    record["rates"] = {
        "T_K": overview.temperatures,
        "k_units": unit,
        "by_expression": {
            str(eid): [float(rate_from_si(k, unit, detail.order)) for k in values]
            for eid, values in overview.rates.items()
        },
    }
    record["steric_factors"] = [
        {"expression_id": eid, "origin": origin, "steric_factor": p}
        for eid, origin, p in overview.steric_factors
    ]
    record["flags"] = [
        {"code": f.code, "message": f.message, "expression_id": f.expression_id}
        for f in overview.flags
    ]
    return record


def reaction_overview_tables(overview: ReactionOverview, preset: str) -> list[Table]:
    from ratebank.science.unit_presets import rate_unit_for
    from ratebank.science.units import rate_from_si

    detail = overview.detail
    tables = reaction_detail_tables(detail, preset)
    history = tables.pop() if detail.history else None
    unit = rate_unit_for(preset, detail.order)
    origin = {e.id: e.origin for e in detail.expressions}
    recommended = {e.id for e in detail.expressions if e.recommended}
    rates = ReportTable(title=f"k at a temperature grid ({unit})")
    rates.add_column("T (K)")
    ids = list(overview.rates)
    for eid in ids:
        # ★ means recommended by the curator here too; the exported one is named
        mark = (" ★" if eid in recommended else "") + (
            " (exported)" if eid == overview.chosen_id else ""
        )
        rates.add_column(f"{eid} {origin[eid]}{mark}")
    for i, t in enumerate(overview.temperatures):
        rates.add_row(
            sig(t),
            *[sig(float(rate_from_si(overview.rates[eid][i], unit, detail.order))) for eid in ids],
        )
    legend = [RECOMMENDED_LEGEND] if recommended & set(ids) else []
    if overview.chosen_id is not None:
        legend.append(f"exported: the expression the export uses ({overview.chosen_rule})")
    if any(e.form in _LIMIT_FORMS for e in detail.expressions if e.id in overview.rates):
        legend.append("fall-off forms at 1 bar, every collider counting 1 (see ratebank rate -P)")
    if legend:
        rates.caption = "; ".join(legend)
    tables.append(rates)
    if overview.steric_factors:
        steric = ReportTable(title="Steric factors")
        for header in ("expression", "origin", "P"):
            steric.add_column(header)
        for eid, kind, p in overview.steric_factors:
            steric.add_row(str(eid), kind, sig(p, 3))
        tables.append(steric)
    flags = ReportTable(title=f"Check flags ({len(overview.flags)})")
    flags.add_column("check")
    flags.add_column("finding", overflow="fold")
    for f in overview.flags:
        flags.add_row(f.code, f.message)
    tables.append(flags)
    if history is not None:
        tables.append(history)
    return tables


# --------------------------------------------------------------------------- efficiencies


def efficiency_records(rows: Sequence[Any]) -> list[dict[str, Any]]:
    return [
        {
            "reaction": r.reaction_key,
            "species": r.species,
            "efficiency": r.efficiency,
            "source": r.source,
        }
        for r in rows
    ]


def efficiencies_table(rows: Sequence[Any]) -> ReportTable:
    table = ReportTable(
        title=f"Third-body efficiencies ({len(rows)}); a species not listed counts 1",
        drop=("source",),
    )
    for header in ("reaction", "species", "efficiency", "source"):
        table.add_column(header, justify="right" if header == "efficiency" else "left")
    for r in rows:
        table.add_row(r.reaction_key, r.species, f"{r.efficiency:g}", r.source or "")
    return table
