"""Third-body collision efficiencies: import them and list them.

An efficiencies file has the columns ``reaction`` (a key or any spelling of
the equation), ``species``, ``efficiency`` (eps >= 0) and optionally
``source``. eps says how strongly a collider counts in the effective
third-body concentration [M]_eff = sum_i eps_i [X_i] of that reaction
(Troe, J. Phys. Chem. 1979, 83, 114); a species without a stated efficiency
counts 1. A pair stated again replaces the earlier value, with the change in
the history. All or nothing, as every import.
"""

from __future__ import annotations

from collections.abc import Mapping

from sqlalchemy.orm import Session

from ratebank.services.validate import (
    ImportSummary,
    LazyReactionResolver,
    Problems,
    Row,
    cell,
    parse_number,
    resolved_reaction,
)
from ratebank.store import audit
from ratebank.store.efficiencies import (
    DEFAULT_EFFICIENCY,
    EfficiencyRow,
    NewEfficiency,
    efficiencies,
    stated_pairs,
    write_efficiencies,
)
from ratebank.store.queries import find_reaction, species_by_name

EFFICIENCY_COLUMNS = ("reaction", "species", "efficiency", "source")
EFFICIENCY_REQUIRED = ("reaction", "species", "efficiency")

__all__ = ["DEFAULT_EFFICIENCY", "import_efficiencies", "list_efficiencies"]


def import_efficiencies(
    session: Session, rows: list[Row], *, source: str, dry_run: bool = False
) -> ImportSummary:
    """Validate and store third-body efficiencies; all or nothing."""
    problems = Problems()
    resolver = LazyReactionResolver(session)
    resolver.prefetch({t for _, row in rows if (t := cell(row, "reaction")) is not None})
    known = species_by_name(session, {t for _, row in rows if (t := cell(row, "species"))})
    seen: dict[tuple[int, int], int | None] = {}
    new: list[NewEfficiency] = []
    for line, row in rows:
        found = _valid_row(problems, line, row, resolver, known, seen)
        if found is not None:
            new.append(found)
    problems.raise_if_any(source)
    before = stated_pairs(session, [e.reaction_id for e in new])
    replaced = sum(1 for e in new if (e.reaction_id, e.species_id) in before)
    if not dry_run and new:
        write_efficiencies(session, new)
        changes = [
            {"reaction": e.reaction_id, "species": e.species_id, "before": before[pair]}
            for e in new
            if (pair := (e.reaction_id, e.species_id)) in before and before[pair] != e.efficiency
        ]
        audit.record(
            session,
            "efficiencies.import",
            source,
            count=len(new),
            replaced=replaced,
            changes=changes[:50],
        )
    return ImportSummary(
        "efficiencies", source, len(rows), len(new), dry_run, {"replaced": replaced}
    )


def _valid_row(
    problems: Problems,
    line: int | None,
    row: Mapping[str, str | None],
    resolver: LazyReactionResolver,
    known: Mapping[str, object],
    seen: dict[tuple[int, int], int | None],
) -> NewEfficiency | None:
    before = problems.total
    reaction = resolved_reaction(problems, line, cell(row, "reaction"), resolver)
    name = cell(row, "species")
    species = known.get(name) if name else None
    if name is None:
        problems.add(line, "species", "is empty; expected a species name")
    elif species is None:
        problems.add(line, "species", f"species {name!r} is not in the store; import it first")
    text = cell(row, "efficiency")
    value = None
    if text is None:
        problems.add(line, "efficiency", "is empty; expected an efficiency of at least 0")
    else:
        try:
            value = parse_number(text, minimum=0.0, what="an efficiency of at least 0")
        except ValueError as exc:
            problems.add(line, "efficiency", str(exc))
    if problems.total > before or reaction is None or species is None or value is None:
        return None
    pair = (reaction.id, species.id)  # type: ignore[attr-defined]
    if pair in seen:
        problems.add(
            line,
            "species",
            f"{name!r} in {reaction.key!r} is already given on line {seen[pair]}",
        )
        return None
    seen[pair] = line
    return NewEfficiency(reaction.id, species.id, value, cell(row, "source"))  # type: ignore[attr-defined]


def list_efficiencies(session: Session, *, reaction: str | None = None) -> list[EfficiencyRow]:
    """The stated efficiencies, by reaction key and species; those of ``reaction`` (a key or
    any spelling of the equation) when given."""
    if reaction is None:
        return efficiencies(session)
    return efficiencies(session, [find_reaction(session, reaction).id])
