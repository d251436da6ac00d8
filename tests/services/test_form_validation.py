"""The form columns of the expressions file: every form stored as given, every misuse refused
with its line and column and nothing written.

Unit factors from scipy.constants: 1 cm3 molecule-1 s-1 = N_A 1e-6 m3 mol-1 s-1 and
1 cm6 molecule-2 s-1 = N_A^2 1e-12 m6 mol-2 s-1.
"""

from __future__ import annotations

import pytest
from helpers.cli import csv_rows
from helpers.data import FORMS_EXPRESSIONS_CSV
from scipy import constants

from ratebank.errors import ImportValidationError
from ratebank.services.expressions import import_expressions
from ratebank.store.queries import expressions_of, find_reaction

HEADER = FORMS_EXPRESSIONS_CSV.splitlines()[0]


def _stored(store, key):
    with store.session() as session:
        reaction = find_reaction(session, key)
        return expressions_of(session, [reaction.id])[reaction.id]


def test_every_form_is_stored_in_si_as_given(forms_store):
    with forms_store.session(write=True) as session:
        summary = import_expressions(session, csv_rows(FORMS_EXPRESSIONS_CSV), source="x.csv")
    assert summary.added == 4  # the two rows of the sum are one expression
    (troe,) = _stored(forms_store, "h-o2-m")
    assert (troe.form, troe.broadening) == ("falloff", "troe")
    assert troe.A == pytest.approx(4.65e12 * 1e-6, rel=1e-15)  # k_inf: cm3/mol/s
    assert troe.A_low == pytest.approx(6.37e20 * 1e-12, rel=1e-15)  # k0: cm6/mol2/s
    assert (troe.n_low, troe.Ea_low) == (-1.72, pytest.approx(2190.0))
    assert (troe.troe_alpha, troe.troe_T3, troe.troe_T1, troe.troe_T2) == (0.5, 30.0, 9e4, 9e4)
    (summed,) = _stored(forms_store, "oh-co")
    per_molecule = constants.N_A * 1e-6
    assert summed.form == "sum"
    assert summed.A == pytest.approx(1.5e-13 * per_molecule, rel=1e-15)
    assert [(t.term, t.T_min, t.T_max) for t in summed.terms] == [(2, 300.0, 2000.0)]
    assert summed.terms[0].A == pytest.approx(2.0e-12 * per_molecule, rel=1e-15)
    (fixed,) = _stored(forms_store, "c2h5-m")
    assert (fixed.broadening, fixed.Fc, fixed.N) == ("fixed-fc", 0.6, None)
    assert fixed.A == 1.1e13  # s-1
    assert fixed.A_low == pytest.approx(1.7e-6 * per_molecule, rel=1e-15)
    (third,) = _stored(forms_store, "oh-oh-m")
    assert third.form is None  # the plain form of a reaction written with M: third-body
    assert third.A == pytest.approx(6.9e-31 * constants.N_A**2 * 1e-12, rel=1e-15)


def test_k_low_units_default_to_one_concentration_more_than_k_units(forms_store):
    text = (
        "reaction,form,A,n,Ea,Ea_units,k_units,A_low\n"
        "h-o2-m,falloff,7.5e-11,0,0,K,cm3/molecule/s,5e-32\n"
    )
    with forms_store.session(write=True) as session:
        import_expressions(session, csv_rows(text), source="x.csv")
    (stored,) = _stored(forms_store, "h-o2-m")
    assert stored.A_low == pytest.approx(5e-32 * constants.N_A**2 * 1e-12, rel=1e-15)
    assert stored.provenance["given_units"]["k_low_units"] == "cm6/molecule2/s"
    assert stored.broadening == "none"


@pytest.mark.parametrize(
    ("row", "column", "message"),
    [
        ("oh-co,catalytic,,1e-12,0,0,K,cm3/molecule/s", "form", "'catalytic' is not one of"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s", "A_low", "needs k0 (A_low)"),
        ("oh-co,falloff,,1e-12,0,0,K,cm3/molecule/s,1e-30", "form", "write the equation with M"),
        ("h-o2-m,activated,,1e2,0,0,K,s-1,1e-12", "form", "written without M"),
        ("h-o2-m,arrhenius,,1e-32,0,0,K,cm6/molecule2/s", "form", "takes third-body"),
        ("oh-co,arrhenius,,1e-12,0,0,K,cm3/molecule/s,1e-30", "A_low", "no low-pressure limit"),
        ("oh-co,arrhenius,2,1e-12,0,0,K,cm3/molecule/s", "term", "term 2 is for sum"),
        ("c2h5-m,falloff,,1e13,0,0,K,s-1,1e-6", "k_low_units", "does not say the volume"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,5e-32,,,,fixed-fc,1.5", "Fc", "outside"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,5e-32,,,,troe,,,0.5", "troe_T3_K", "needs"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,5e-32,,,,none,0.6", "Fc", "does not use"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,5e-32,,,,spread", "broadening", "not one"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,-5e-32", "A_low", "greater than zero"),
        ("h-o2-m,falloff,,7.5e-11,0,0,K,cm3/molecule/s,5e-32,,,cm3/molecule/s", "k_low_units", "3"),
        ("oh-co,sum,1,1e-12,0,0,K,cm3/molecule/s", "term", "at least two"),
    ],
)
def test_misused_form_columns_are_refused_with_line_and_column(forms_store, row, column, message):
    header = "reaction,form,term,A,n,Ea,Ea_units,k_units,A_low,n_low,Ea_low,k_low_units,broadening,Fc,N,troe_alpha"
    good = "oh-oh-m,third-body,,6.9e-31,-0.8,0,kJ/mol,cm6/molecule2/s"
    text = f"{header}\n{good}\n{row}\n"
    with forms_store.session(write=True) as session, pytest.raises(ImportValidationError) as e:
        import_expressions(session, csv_rows(text), source="bad.csv")
    found = [p for p in e.value.problems if p.startswith(f"bad.csv:3: {column}: ")]
    assert found, e.value.problems
    assert message in found[0]
    assert _stored(forms_store, "oh-oh-m") == []  # nothing written


def test_a_sum_with_a_gap_in_its_terms_is_refused(forms_store):
    text = (
        "reaction,form,term,A,n,Ea,Ea_units,k_units,reference\n"
        "oh-co,sum,1,1e-12,0,0,K,cm3/molecule/s,r\n"
        "oh-co,sum,3,1e-12,0,0,K,cm3/molecule/s,r\n"
    )
    with forms_store.session(write=True) as session, pytest.raises(ImportValidationError) as e:
        import_expressions(session, csv_rows(text), source="gap.csv")
    assert "has terms 1, 3; expected 1, 2, ..." in e.value.problems[0]


def test_an_edit_of_a_falloff_takes_k_inf_in_its_own_order(forms_store):
    from ratebank.services.expressions import edit_expression

    with forms_store.session(write=True) as session:
        import_expressions(session, csv_rows(FORMS_EXPRESSIONS_CSV), source="x.csv")
    (troe,) = _stored(forms_store, "h-o2-m")
    with forms_store.session(write=True) as session:
        edit_expression(session, troe.id, expected_version=1, A=5.0e-11, k_units="cm3/molecule/s")
    (edited,) = _stored(forms_store, "h-o2-m")
    assert edited.A == pytest.approx(5.0e-11 * constants.N_A * 1e-6, rel=1e-15)
    assert edited.A_low == troe.A_low  # k0 untouched
