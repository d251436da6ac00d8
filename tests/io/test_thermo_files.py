"""Thermochemistry files and the NIST-JANAF tables, read."""

from __future__ import annotations

import pytest
from helpers.cli import write
from helpers.thermo import janaf_row

from ratebank.errors import NotFoundError
from ratebank.io.csv_import import CsvFileError
from ratebank.io.thermo_files import file_layout, read_janaf_table
from ratebank.services.thermo_validation import layout_of


@pytest.mark.parametrize(
    ("header", "layout"),
    [
        ("species,T_low_K,T_mid_K,T_high_K,low_1", "coefficients"),
        ("species,T_K,Cp_J_per_mol_K", "table"),
        ("species,Hf298_kJ_per_mol,S298_J_per_mol_K,T_K,Cp_J_per_mol_K,source", "table"),
        ("species,source", None),
        ("species,T_K,low_1", None),
    ],
)
def test_the_header_tells_the_layout(header, layout):
    assert layout_of(header.split(",")) == layout


def test_a_file_header_of_both_layouts_is_refused(tmp_path):
    path = write(tmp_path / "t.csv", "species,T_K,low_1\nH,300,2.5\n")
    with pytest.raises(CsvFileError, match="does not say which layout"):
        file_layout(path)
    unknown = write(tmp_path / "u.csv", "species,T_K,Cp\nH,300,20\n")
    with pytest.raises(Exception, match="Cp: unknown column"):
        file_layout(unknown)


def test_a_janaf_table_is_read_in_si():
    """NIST-JANAF table H-064 (water): H - H298 and ΔfH are printed in kJ/mol."""
    table = read_janaf_table("H-064")
    assert (table.title, table.formula) == ("Water (H2O)", "H2O1(g)")
    (i,) = [i for i, T in enumerate(table.T) if T == 1000.0]
    row = janaf_row("H2O", 1000.0)
    assert table.Cp[i] == row["Cp"]
    assert table.H_minus_H298[i] == row["H_minus_H298"]
    assert table.delta_f_H[i] == row["dfH"]
    assert "table H-064" in table.source
    with pytest.raises(NotFoundError, match="no NIST-JANAF table 'X-1'"):
        read_janaf_table("X-1")
