"""``data show``: one measurement set as tables and as a JSON record."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from rich.table import Table

from ratebank.report.format import shown, sig
from ratebank.report.layout import ReportTable

if TYPE_CHECKING:
    from ratebank.services.set_detail import SetDetail

#: bar per Pa
BAR_PER_PA = 1e-5


def _number(value: float) -> float | None:
    return None if value != value else float(value)


def _preset_k(detail: SetDetail, preset: str) -> tuple[str, list[float]]:
    from ratebank.science.unit_presets import rate_unit_for
    from ratebank.science.units import rate_from_si

    stored = detail.stored
    unit = rate_unit_for(preset, stored.order)
    return unit, rate_from_si(stored.points.rate_constant, unit, stored.order).tolist()


def set_detail_record(detail: SetDetail, preset: str) -> dict[str, Any]:
    """The set as JSON: metadata, points (T, k in the set's unit and the preset's,
    uncertainty, pressure), the fits that used it, and what in it is withdrawn."""
    stored = detail.stored
    points = stored.points
    unit, k_preset = _preset_k(detail, preset)
    return {
        "set": stored.name,
        "id": stored.id,
        "reaction": stored.reaction_key,
        "equation": stored.equation,
        "reference": stored.reference,
        "method": stored.method,
        "bath_gas": stored.bath_gas,
        "pressures_bar": [p * BAR_PER_PA for p in detail.pressures],
        "systematic_uncertainty": stored.systematic_uncertainty,
        "k_units_given": stored.original_k_units,
        "k_units_preset": unit,
        "source_file": stored.source_file,
        "created_at": stored.created_at.isoformat() if stored.created_at else None,
        "withdrawn": stored.withdrawn,
        "withdrawn_points": stored.withdrawn_points,
        "points": [
            {
                "id": point_id,
                "T_K": float(T),
                "k_given_units": _number(k_given),
                "k_preset_units": _number(k),
                "relative_uncertainty": _number(u),
                "pressure_bar": None if p != p else float(p) * BAR_PER_PA,
            }
            for point_id, T, k_given, k, u, p in zip(
                stored.point_ids,
                points.temperature.tolist(),
                detail.k_set_units.tolist(),
                k_preset,
                points.relative_uncertainty.tolist(),
                points.pressure.tolist(),
                strict=True,
            )
        ],
        "fits": [
            {
                "expression": f.id,
                "origin": f.origin,
                "form": f.form,
                "version": f.version,
                "recommended": f.recommended,
                "n_points": f.n_points,
            }
            for f in stored.fits
        ],
    }


def set_detail_tables(detail: SetDetail, preset: str) -> list[Table]:
    """The set's metadata, its points and the fits that used it."""
    record = set_detail_record(detail, preset)
    about = ReportTable(title=f"Measurement set {detail.name}", show_header=False)
    about.add_column("field")
    about.add_column("value", overflow="fold")
    pressures = ", ".join(sig(p) for p in record["pressures_bar"])
    withdrawn = "yes" if detail.stored.withdrawn else "no"
    if detail.stored.withdrawn_points:
        withdrawn += f" ({detail.stored.withdrawn_points} points withdrawn)"
    for field, value in (
        ("reaction", f"{record['reaction']}  {record['equation']}"),
        ("reference", record["reference"] or ""),
        ("method", record["method"] or ""),
        ("bath gas", record["bath_gas"] or ""),
        ("pressures (bar)", pressures or "not given"),
        ("systematic uncertainty", sig(record["systematic_uncertainty"])),
        ("k given in", record["k_units_given"]),
        ("imported from", record["source_file"] or ""),
        ("withdrawn", withdrawn),
    ):
        about.add_row(field, value)
    rows, note = shown(record["points"])
    points = ReportTable(title=f"Points ({len(record['points'])})", caption=note or None)
    for header in (
        "point",
        "T (K)",
        f"k ({record['k_units_given']})",
        f"k ({record['k_units_preset']})",
        "uncertainty (rel.)",
        "P (bar)",
    ):
        points.add_column(header, justify="right")
    for p in rows:
        points.add_row(
            str(p["id"]),
            sig(p["T_K"], 6),
            sig(p["k_given_units"]),
            sig(p["k_preset_units"]),
            sig(p["relative_uncertainty"]),
            sig(p["pressure_bar"]),
        )
    fits = ReportTable(title=f"Fits that used it ({len(record['fits'])})")
    for header in ("expression", "origin", "form", "version", "recommended"):
        fits.add_column(header)
    for f in record["fits"]:
        fits.add_row(
            str(f["expression"]),
            f["origin"],
            f["form"] or "plain",
            str(f["version"]),
            "yes" if f["recommended"] else "",
        )
    return [about, points, fits]
