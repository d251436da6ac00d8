"""Rendering of thermochemistry: imports, species properties, reaction properties, reverse
rates and Evans-Polanyi relations."""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from rich.table import Table

from ratebank.report.format import shown, sig, trange

if TYPE_CHECKING:  # types only: a report module must stay light to import
    from ratebank.services.evans_polanyi import ClassRelation
    from ratebank.services.reverse import ReverseRateReport
    from ratebank.services.thermo import (
        ReactionThermoReport,
        SpeciesThermoView,
        ThermoImportReport,
    )
    from ratebank.store.evans_polanyi import EvansPolanyiRuleRow
    from ratebank.store.thermo import ThermoRow

KJ = 1e3


def _energy(value: float | None, unit: str) -> float | None:
    from ratebank.science.units import energy_from_si

    return None if value is None else float(energy_from_si(value, unit))


# --------------------------------------------------------------------------- import and list


def import_records(report: ThermoImportReport) -> dict[str, Any]:
    return {
        "source": report.source,
        "layout": report.layout,
        "dry_run": report.dry_run,
        "stored": [
            {
                "species": s.species,
                "method": s.method,
                "source": s.source,
                "T_low_K": s.T_low,
                "T_mid_K": s.T_mid,
                "T_high_K": s.T_high,
                "max_cp_relative_deviation": s.max_cp_deviation,
                "max_H_deviation_J_per_mol": s.max_H_deviation,
                "max_S_deviation_J_per_mol_K": s.max_S_deviation,
                "fit_points": s.fit_points,
                "replaced": s.replaced,
            }
            for s in report.stored
        ],
    }


def import_message(report: ThermoImportReport) -> str:
    count = len(report.stored)
    replaced = sum(1 for s in report.stored if s.replaced)
    extra = f", replacing {replaced}" if replaced else ""
    if report.unchanged:
        extra += f"; {len(report.unchanged)} unchanged"
    if report.dry_run:
        return (
            f"{report.source}: valid; would store the thermochemistry of {count} species{extra} "
            "(dry run, nothing written)"
        )
    return f"{report.source}: stored the thermochemistry of {count} species{extra}"


def _deviation_text(cp: float | None, h: float | None, s: float | None) -> str:
    parts = []
    if cp is not None:
        parts.append(f"Cp {sig(100 * cp, 2)}%")
    if h is not None:
        parts.append(f"H {sig(h / KJ, 2)} kJ/mol")
    if s is not None:
        parts.append(f"S {sig(s, 2)} J/(mol K)")
    return ", ".join(parts)


def import_table(report: ThermoImportReport) -> Table:
    table = Table(title=f"Thermochemistry ({len(report.stored)} species, {report.layout} layout)")
    for header in ("species", "T range (K)", "T_mid (K)", "method", "largest fit deviation"):
        table.add_column(header, overflow="fold")
    for s in report.stored:
        table.add_row(
            s.species + (" (replaced)" if s.replaced else ""),
            trange(s.T_low, s.T_high),
            sig(s.T_mid),
            s.method,
            _deviation_text(s.max_cp_deviation, s.max_H_deviation, s.max_S_deviation),
        )
    return table


def thermo_records(rows: Sequence[ThermoRow]) -> list[dict[str, Any]]:
    return [
        {
            "species": r.species,
            "T_low_K": r.T_low,
            "T_mid_K": r.T_mid,
            "T_high_K": r.T_high,
            "low": list(r.low),
            "high": list(r.high),
            "method": r.method,
            "source": r.source,
            "max_cp_relative_deviation": r.max_cp_deviation,
            "max_H_deviation_J_per_mol": r.max_H_deviation,
            "max_S_deviation_J_per_mol_K": r.max_S_deviation,
            "fit_points": r.fit_points,
            "updated_by": r.updated_by,
        }
        for r in rows
    ]


def thermo_table(rows: Sequence[ThermoRow]) -> Table:
    table = Table(title=f"Species thermochemistry ({len(rows)})")
    for header in ("species", "T range (K)", "T_mid (K)", "method", "largest fit deviation"):
        table.add_column(header, overflow="fold")
    drawn, more = shown(list(rows))
    for r in drawn:
        table.add_row(
            r.species,
            trange(r.T_low, r.T_high),
            sig(r.T_mid),
            r.method,
            _deviation_text(r.max_cp_deviation, r.max_H_deviation, r.max_S_deviation),
        )
    if more:
        table.caption = more
    return table


# --------------------------------------------------------------------------- species show


def species_thermo_record(view: SpeciesThermoView | None) -> dict[str, Any] | None:
    """Cp°, H° and S° of a species for ``species show --json`` (None: no thermochemistry)."""
    if view is None:
        return None
    record = thermo_records([view.thermo])[0]
    del record["species"]
    record["standard_state"] = "ideal gas at 1 bar"
    record["values"] = [
        {
            "T_K": r.T,
            "Cp_J_per_mol_K": r.Cp,
            "H_kJ_per_mol": None if r.H is None else r.H / KJ,
            "S_J_per_mol_K": r.S,
            "in_range": r.in_range,
        }
        for r in view.rows
    ]
    return record


def species_thermo_table(name: str, view: SpeciesThermoView | None) -> Table:
    """Cp°, H° and S° of a species, for ``species show``."""
    if view is None:
        table = Table(title=f"Thermochemistry of {name}: none stored", show_header=False)
        table.add_column("note")
        table.add_row("import it with `ratebank thermo import` or `ratebank thermo janaf`")
        return table
    t = view.thermo
    table = Table(
        title=f"Thermochemistry of {name} (1 bar; {t.method}; valid {trange(t.T_low, t.T_high)} K)"
    )
    for header in ("T (K)", "Cp° (J/(mol K))", "H° (kJ/mol)", "S° (J/(mol K))"):
        table.add_column(header)
    for r in view.rows:
        if not r.in_range:
            table.add_row(sig(r.T), "outside the range", "", "")
            continue
        table.add_row(sig(r.T), sig(r.Cp), sig(None if r.H is None else r.H / KJ), sig(r.S))
    table.caption = "H° is the absolute enthalpy: H°(298.15 K) = ΔfH°(298.15 K)" + (
        f"; source: {t.source}" if t.source else ""
    )
    return table


# --------------------------------------------------------------------------- reactions


def reaction_thermo_records(report: ReactionThermoReport, preset: str) -> dict[str, Any]:
    from ratebank.science.unit_presets import kc_unit  # as in _energy: listings skip units

    unit, factor = kc_unit(preset, report.delta_n)
    return {
        "key": report.key,
        "equation": report.equation,
        "delta_n": report.delta_n,
        "species": [{"species": name, "nu": nu} for name, nu in report.species],
        "T_range_K": [report.T_low, report.T_high],
        "standard_state": "ideal gas at 1 bar",
        "Kc_units": unit,
        "values": [
            {
                "T_K": r.T,
                "delta_H_kJ_per_mol": r.delta_H / KJ,
                "delta_S_J_per_mol_K": r.delta_S,
                "delta_G_kJ_per_mol": r.delta_G / KJ,
                "Kp": r.Kp,
                "ln_Kp": r.ln_Kp,
                "Kc": r.Kc / factor,
                "ln_Kc_SI": r.ln_Kc,
            }
            for r in report.rows
        ],
    }


def reaction_thermo_table(report: ReactionThermoReport, preset: str) -> Table:
    data = reaction_thermo_records(report, preset)
    table = Table(
        title=f"{report.key}: {report.equation} (Δn = {report.delta_n}, standard state 1 bar)"
    )
    for header in (
        "T (K)",
        "ΔrH° (kJ/mol)",
        "ΔrS° (J/(mol K))",
        "ΔrG° (kJ/mol)",
        "Kp",
        "Kc (dimensionless)" if data["Kc_units"] == "1" else f"Kc ({data['Kc_units']})",
    ):
        table.add_column(header)
    for r in data["values"]:
        table.add_row(
            sig(r["T_K"]),
            sig(r["delta_H_kJ_per_mol"]),
            sig(r["delta_S_J_per_mol_K"]),
            sig(r["delta_G_kJ_per_mol"]),
            sig(r["Kp"]),
            sig(r["Kc"]),
        )
    table.caption = (
        f"Kp = exp(-ΔrG°/RT); Kc = Kp (p°/RT)^Δn, p° = 1 bar; valid "
        f"{trange(report.T_low, report.T_high)} K"
    )
    return table


# --------------------------------------------------------------------------- rate --reverse


def reverse_rate_records(report: ReverseRateReport) -> dict[str, Any]:
    return {
        "key": report.key,
        "equation": report.equation,
        "reverse_equation": report.reverse_equation,
        "declared_reverse": report.declared,
        "rule": "k_r = k_f / Kc",
        "origin": report.origin,
        "expression_id": report.expression_id,
        "chosen_by": report.chosen_by,
        "order": report.order,
        "delta_n": report.delta_n,
        "k_units": report.k_units,
        "Kc_units": report.Kc_units,
        "T_min_K": report.T_min,
        "T_max_K": report.T_max,
        "rates": [
            {
                "T_K": r.T,
                "k_reverse": r.k_reverse,
                "Kc": r.Kc,
                "k_forward_SI": r.k_forward_si,
                "Kc_SI": r.Kc_si,
                "k_reverse_SI": r.k_reverse_si,
                "in_range": r.in_range,
            }
            for r in report.rows
        ],
    }


def reverse_rate_table(report: ReverseRateReport) -> Table:
    table = Table(
        title=f"{report.key} reversed: {report.reverse_equation} (k_r = k_f / Kc; forward "
        f"{report.origin}, expression {report.expression_id}, {report.chosen_by})"
    )
    kc = "Kc (dimensionless)" if report.Kc_units == "1" else f"Kc ({report.Kc_units})"
    for header in ("T (K)", f"k_r ({report.k_units})", kc, "range"):
        table.add_column(header)
    for r in report.rows:
        where = "" if r.in_range is None else ("inside" if r.in_range else "extrapolated")
        table.add_row(sig(r.T), sig(r.k_reverse), sig(r.Kc), where)
    if report.declared == "none":
        table.caption = "the reaction is not declared reversible; this is its detailed balance"
    return table


# --------------------------------------------------------------------------- Evans-Polanyi


def relation_records(groups: Sequence[ClassRelation], e_unit: str) -> list[dict[str, Any]]:
    records = []
    for g in groups:
        fit = g.fit
        records.append(
            {
                "class": g.reaction_class,
                "count": g.count,
                "E0": _energy(fit.E0, e_unit) if fit else None,
                "alpha": fit.alpha if fit else None,
                "spread": _energy(fit.residual_sd, e_unit) if fit else None,
                "energy_units": e_unit,
                "weighted": fit.absolute_sigma if fit else None,
                "covariance_E0_J_alpha": fit.covariance.tolist() if fit else None,
                "reason": g.reason,
                "reactions": [
                    {
                        "key": m.key,
                        "expression_id": m.expression_id,
                        "origin": m.origin,
                        "delta_H_298": _energy(m.delta_H, e_unit),
                        "Ea": _energy(m.Ea, e_unit),
                        "Ea_T_K": m.T_ref,
                        "sigma_Ea": _energy(m.sigma_Ea, e_unit),
                    }
                    for m in g.members
                ],
            }
        )
    return records


#: Members of a class named in the derived table; ``--json`` gives all of them.
MEMBERS_SHOWN = 12


def relation_table(groups: Sequence[ClassRelation], e_unit: str) -> Table:
    table = Table(title="Evans-Polanyi relations derived from measured and literature reactions")
    for header in ("class", "reactions", f"E0 ({e_unit})", "α", f"spread ({e_unit})", "members"):
        table.add_column(header, overflow="fold")
    for g, record in zip(groups, relation_records(groups, e_unit), strict=True):
        members = ", ".join(
            f"{m['key']} (ΔrH° {sig(m['delta_H_298'], 3)}, Ea {sig(m['Ea'], 3)})"
            for m in record["reactions"][:MEMBERS_SHOWN]
        )
        if g.count > MEMBERS_SHOWN:
            members += f", … and {g.count - MEMBERS_SHOWN} more (--json lists all)"
        table.add_row(
            g.reaction_class,
            str(g.count),
            sig(record["E0"], 4) if g.fit else g.reason or "",
            sig(record["alpha"], 3),
            sig(record["spread"], 3),
            members,
        )
    table.caption = (
        "Ea = E0 + α ΔrH°(298.15 K); spread: one standard deviation of Ea about the line"
    )
    return table


def rule_records(rules: Sequence[EvansPolanyiRuleRow], e_unit: str) -> list[dict[str, Any]]:
    return [
        {
            "class": r.reaction_class,
            "E0": _energy(r.E0, e_unit),
            "alpha": r.alpha,
            "spread": _energy(r.spread, e_unit),
            "energy_units": e_unit,
            "source": r.source,
            "version": r.version,
            "updated_by": r.updated_by,
        }
        for r in rules
    ]


def rule_table(rules: Sequence[EvansPolanyiRuleRow], e_unit: str) -> Table:
    table = Table(title=f"Evans-Polanyi relations set by class ({len(rules)})")
    for header in ("class", f"E0 ({e_unit})", "α", f"spread ({e_unit})", "source", "version"):
        table.add_column(header, overflow="fold")
    for r in rule_records(rules, e_unit):
        table.add_row(
            r["class"],
            sig(r["E0"]),
            sig(r["alpha"], 3),
            sig(r["spread"], 3),
            r["source"] or "",
            str(r["version"]),
        )
    return table
