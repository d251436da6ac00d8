"""Third-body collision efficiencies: import them and list them.

An efficiencies file has the columns ``reaction`` (a key or any spelling of
the equation), ``species``, ``efficiency`` (eps >= 0) and optionally
``source``. eps says how strongly a collider counts in the effective
third-body concentration [M]_eff = sum_i eps_i [X_i] of that reaction
(Troe, J. Phys. Chem. 1979, 83, 114); a species without a stated efficiency
counts 1. A pair stated again is refused, unless the import updates: then a
changed value replaces the earlier one, with the change in the history. All or
nothing, as every import.
"""

from __future__ import annotations

from collections.abc import Mapping

from sqlalchemy.orm import Session

from ratebank.services.updates import UpdatePlan, changed_fields, record_changes
from ratebank.services.validate import (
    ImportSummary,
    LazyReactionResolver,
    Problems,
    ReactionRef,
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
    write_efficiencies,
)
from ratebank.store.queries import find_reaction, species_by_name
from ratebank.store.updates import stated_efficiencies

EFFICIENCY_COLUMNS = ("reaction", "species", "efficiency", "source")
EFFICIENCY_REQUIRED = ("reaction", "species", "efficiency")

__all__ = ["DEFAULT_EFFICIENCY", "import_efficiencies", "list_efficiencies"]


def import_efficiencies(
    session: Session,
    rows: list[Row],
    *,
    source: str,
    dry_run: bool = False,
    update: bool = False,
) -> ImportSummary:
    """Validate and store third-body efficiencies; all or nothing.

    A pair (reaction, species) already stated is refused as already in the store unless
    ``update``: then a changed efficiency or source replaces the stored one (the history
    keeps before and after) and an identical one is left alone.
    """
    problems = Problems()
    resolver = LazyReactionResolver(session)
    resolver.prefetch({t for _, row in rows if (t := cell(row, "reaction")) is not None})
    known = species_by_name(session, {t for _, row in rows if (t := cell(row, "species"))})
    seen: dict[tuple[int, int], int | None] = {}
    found: list[tuple[int | None, tuple[str, str], NewEfficiency]] = []
    for line, row in rows:
        valid = _valid_row(problems, line, row, resolver, known, seen)
        if valid is not None:
            reaction = resolver.resolve(cell(row, "reaction") or "")
            key = reaction.key if isinstance(reaction, ReactionRef) else ""
            found.append((line, (str(cell(row, "species")), key), valid))
    problems.raise_if_any(source)
    stored = stated_efficiencies(session, [e.reaction_id for _, _, e in found])
    plan, writes = _efficiency_plan(found, stored, problems, update=update)
    problems.raise_if_any(source)
    if not dry_run and writes:
        write_efficiencies(session, writes)
        audit.record(session, "efficiencies.import", source, count=len(writes))
        record_changes(session, "efficiency.update", source, plan.changes)
    return ImportSummary(
        "efficiencies",
        source,
        len(rows),
        plan.added,
        dry_run,
        update=update,
        changed=plan.changed,
        unchanged=plan.unchanged,
    )


def _efficiency_plan(
    found: list[tuple[int | None, tuple[str, str], NewEfficiency]],
    stored: dict[tuple[int, int], tuple[float, str | None]],
    problems: Problems,
    *,
    update: bool,
) -> tuple[UpdatePlan, list[NewEfficiency]]:
    """New, changed and unchanged pairs, and the efficiencies to write."""
    plan = UpdatePlan()
    writes: list[NewEfficiency] = []
    for line, (species, key), new in found:
        what = f"{species} in {key!r}"
        before = stored.get((new.reaction_id, new.species_id))
        if before is None:
            plan.added += 1
            writes.append(new)
            continue
        if not update:
            problems.add(
                line,
                "species",
                f"the efficiency of {what} is already in the store ({before[0]!r}); an import "
                "that updates changes it",
            )
            continue
        values, texts = changed_fields(
            {"efficiency": before[0], "source": before[1]},
            {"efficiency": new.efficiency, "source": new.source},
            {"efficiency": ("efficiency", 1.0, ""), "source": ("source", None, "")},
        )
        if values:
            plan.changes.append((key, [f"species {species}", *texts]))
            writes.append(new)
        else:
            plan.unchanged += 1
    return plan, writes


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
