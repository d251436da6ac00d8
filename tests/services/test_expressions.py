"""Expression services, called directly: import (one write path), list, edit.

Unit factors from ``scipy.constants``: 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1, Ea in K
means Ea/R; the thermochemical calorie is 4.184 J (exact).
"""

from __future__ import annotations

import csv
import io

import pytest
from helpers.cli import run, write
from helpers.data import EXPRESSIONS_CSV, REACTIONS_CSV, SPECIES_CSV
from scipy import constants

from ratebank.errors import (
    BadInputError,
    ImportValidationError,
    NotFoundError,
    RefusedError,
    StaleEditError,
)
from ratebank.services import validate
from ratebank.services.expressions import edit_expression, import_expressions, list_expressions
from ratebank.services.fitting import fit_reactions
from ratebank.services.reactions import import_reactions
from ratebank.services.species import import_species
from ratebank.services.store_access import init_store
from ratebank.store.listings import history
from ratebank.store.queries import expression, expressions_of, find_reaction

PER_MOLECULE = constants.N_A * 1e-6


def _rows(text: str) -> list[tuple[int, dict[str, str]]]:
    return list(enumerate(csv.DictReader(io.StringIO(text)), start=2))


@pytest.fixture
def curated(db_url):
    store, _ = init_store(db_url, author="tester")
    with store.session(write=True) as session:
        import_species(session, _rows(SPECIES_CSV), source="species.csv")
        import_reactions(session, _rows(REACTIONS_CSV), source="reactions.csv")
    yield store
    store.close()


def _of(session, key):
    return expressions_of(session, [find_reaction(session, key).id])[find_reaction(session, key).id]


def _literature_id(session, key):
    return next(e.id for e in _of(session, key) if e.origin == "literature")


# --------------------------------------------------------------------------- import


def test_import_writes_si_values_with_their_provenance(curated):
    with curated.session(write=True) as session:
        summary = import_expressions(session, _rows(EXPRESSIONS_CSV), source="e.csv")
    assert (summary.kind, summary.added, summary.details) == (
        "expressions",
        3,
        {"complete": 2, "activation_energy_only": 1},
    )
    with curated.session() as session:
        (oh,) = _of(session, "oh-ch4")
        (ho2,) = _of(session, "ho2-ho2")
        entries = history(session, limit=2)
    assert (oh.origin, oh.version, oh.recommended, oh.created_by) == (
        "literature",
        1,
        False,
        "tester",
    )
    assert oh.A == pytest.approx(1.85e-20 * PER_MOLECULE, rel=1e-12)
    assert (oh.n, oh.T_min, oh.T_max, oh.uncertainty_factor) == (2.82, 200.0, 2000.0, 1.2)
    assert oh.Ea == pytest.approx(987 * constants.R, rel=1e-12)
    assert oh.uncertainty_g in (None, 0.0)  # a factor given without g: the same at every T
    assert oh.provenance == {
        "source_file": "e.csv",
        "line": 4,
        "given_units": {"Ea_units": "K", "k_units": "cm3/molecule/s"},
    }
    assert (ho2.A, ho2.n, ho2.uncertainty_factor, ho2.uncertainty_g) == (None, 0.0, None, None)
    assert ho2.Ea == pytest.approx(-4900.0)
    # one entry for the file, none per expression
    assert [(e.action, e.target, e.detail) for e in entries] == [
        ("expressions.import", "e.csv", {"count": 3}),
        ("reactions.add", "reactions.csv", entries[1].detail),
    ]


def test_an_import_with_a_problem_writes_nothing(curated):
    rows = [*_rows(EXPRESSIONS_CSV), (5, {"reaction": "oh-ch4", "A": "1", "Ea": "1"})]
    with curated.session(write=True) as session:
        with pytest.raises(ImportValidationError) as raised:
            import_expressions(session, rows, source="e.csv")
        assert list_expressions(session) == []
    assert raised.value.problems == [
        "e.csv:5: Ea_units: is empty; Ea needs its unit (e.g. kJ/mol or K)",
        "e.csv:5: k_units: is empty; A needs its unit (e.g. cm3/molecule/s)",
    ]


def test_a_dry_run_writes_nothing(curated):
    with curated.session(write=True) as session:
        summary = import_expressions(session, _rows(EXPRESSIONS_CSV), source="e", dry_run=True)
        assert (summary.added, summary.dry_run) == (3, True)
        assert list_expressions(session) == []


# moved from tests/services/test_lookups.py
def _filled(db_url, tmp_path):
    assert run(db_url, "init").exit_code == 0
    for command, name, text in (
        ("species", "species.csv", SPECIES_CSV),
        ("reactions", "reactions.csv", REACTIONS_CSV),
    ):
        assert run(db_url, command, "import", str(write(tmp_path / name, text))).exit_code == 0
    return db_url


def _count_prefetches(monkeypatch) -> list[int]:
    sizes: list[int] = []
    original = validate.LazyReactionResolver.prefetch

    def counting(self, texts):  # type: ignore[no-untyped-def]
        texts = list(texts)
        sizes.append(len(texts))
        return original(self, texts)

    monkeypatch.setattr(validate.LazyReactionResolver, "prefetch", counting)
    return sizes


def test_expressions_import_looks_up_every_reaction_in_one_batch(db_url, tmp_path, monkeypatch):
    db = _filled(db_url, tmp_path)
    sizes = _count_prefetches(monkeypatch)
    outcome = run(db, "expressions", "import", str(write(tmp_path / "e.csv", EXPRESSIONS_CSV)))
    assert outcome.exit_code == 0, outcome.stderr
    rows = EXPRESSIONS_CSV.strip().count("\n")  # data rows under the header
    assert rows > 2
    # one batch with every distinct reaction of the file; resolving then asks nothing more
    assert len(sizes) == 1 and 1 < sizes[0] <= rows


# --------------------------------------------------------------------------- list


def test_listing_by_reaction_and_origin(store):
    with store.session() as session:
        every = list_expressions(session)
        of_one = list_expressions(session, reaction="CH4 + OH -> H2O + CH3")
        literature = list_expressions(session, origin="literature")
        manual = list_expressions(session, origin="manual")
        with pytest.raises(BadInputError) as raised:
            list_expressions(session, origin="guess")
        with pytest.raises(NotFoundError):
            list_expressions(session, reaction="nope")
    assert [e.reaction_key for e in every] == ["h2o2-dec", "ho2-ho2", "oh-ch4"]
    assert [(e.reaction_key, e.reaction_order) for e in of_one] == [("oh-ch4", 2)]
    assert literature == every and manual == []
    assert raised.value.argument == "origin"
    assert str(raised.value).startswith("unknown origin 'guess'; expected one of measured-fit")


# --------------------------------------------------------------------------- edit


def test_an_edit_converts_to_si_bumps_the_version_and_is_recorded(store):
    with store.session(write=True) as session:
        expression_id = _literature_id(session, "h2o2-dec")
        result = edit_expression(
            session,
            expression_id,
            expected_version=1,
            A=3.5e13,
            k_units="s-1",
            Ea=48,
            Ea_units="kcal/mol",
            T_max=1600,
            reference="  second review ",
        )
    assert (result.id, result.reaction_key, result.origin, result.version) == (
        expression_id,
        "h2o2-dec",
        "literature",
        2,
    )
    assert list(result.changed) == ["A", "Ea", "T_max", "reference"]
    assert result.changed["Ea"] == (200_000.0, pytest.approx(48 * 4184.0, rel=1e-12))
    with store.session() as session:
        row = expression(session, expression_id)
        entry = history(session, limit=1)[0]
    assert (row.A, row.T_max, row.reference, row.version) == (3.5e13, 1600.0, "second review", 2)
    assert row.provenance["given_units"] == {"Ea_units": "kcal/mol", "k_units": "s-1"}
    assert row.provenance["edited"]["by"] == "tester"
    assert row.provenance["edited"]["fields"] == ["A", "Ea", "T_max", "reference"]
    assert (entry.action, entry.target, entry.detail["version"]) == (
        "expression.edit",
        "h2o2-dec",
        2,
    )


def test_the_same_values_change_nothing(store):
    with store.session(write=True) as session:
        expression_id = _literature_id(session, "h2o2-dec")
        result = edit_expression(session, expression_id, expected_version=1, T_min=800.0)
        assert (result.version, result.changed) == (1, {})
        assert expression(session, expression_id).version == 1


def test_a_factor_given_to_an_expression_without_one_gets_g_zero(store):
    with store.session(write=True) as session:
        ea_only = _literature_id(session, "ho2-ho2")
        edit_expression(session, ea_only, expected_version=1, uncertainty_factor=3.0)
        row = expression(session, ea_only)
    assert (row.uncertainty_factor, row.uncertainty_g) == (3.0, 0.0)


def test_refusals(store):
    with store.session(write=True) as session:
        fit_reactions(session, ["oh-ch4"], form="arrhenius")
        fit = next(e.id for e in _of(session, "oh-ch4") if e.origin == "measured-fit")
        literature = _literature_id(session, "h2o2-dec")
        with pytest.raises(NotFoundError, match=r"^no expression 9999 in the store$"):
            edit_expression(session, 9999, expected_version=1, n=1.0)
        with pytest.raises(RefusedError, match="regenerated by a new fit of its measurements"):
            edit_expression(session, fit, expected_version=1, n=1.0)
        with pytest.raises(
            StaleEditError,
            match=r"version 7 never existed; expression .* is at version 1; nothing was written",
        ):
            edit_expression(session, literature, expected_version=7, n=1.0)
        with pytest.raises(BadInputError, match="nothing to change in expression"):
            edit_expression(session, literature, expected_version=1)


def test_every_problem_of_an_edit_is_named_at_once(store):
    with store.session(write=True) as session:
        literature = _literature_id(session, "h2o2-dec")
        with pytest.raises(BadInputError) as raised:
            edit_expression(
                session, literature, expected_version=1, A=1e13, Ea_units="K", T_max=500
            )
        assert expression(session, literature).version == 1
    assert str(raised.value) == (
        f"expression {literature}: k_units: is empty; A needs its unit (e.g. cm3/molecule/s); "
        "Ea_units: is given without Ea; give the Ea it is the unit of; T_max: 500 K is below "
        "T_min 800 K; nothing was written"
    )
    assert raised.value.argument == "k_units"
