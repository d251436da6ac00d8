"""A small store with thermochemistry, for the thermochemistry, reverse and Evans-Polanyi tests.

Species thermochemistry is fitted by ratebank to the NIST-JANAF tables (Chase 1998) of
the janaf package (the tables named in JANAF_TABLES). Lennard-Jones diameters and well
depths: H2, O2 and H2O from Poling et al. (2001) App. B (Svehla 1962) via the chemicals
package; H, O and OH are Svehla's values from memory; HO2 is taken as O2's (an assumption
of the tests). Rate numbers in the tests are synthetic.
"""

from __future__ import annotations

import functools
from pathlib import Path

import janaf
import numpy as np

from helpers.cli import run, write

SPECIES_CSV = """name,formula,diameter_angstrom,diameter_kind,well_depth_K,source
H,H,2.708,lennard-jones,37.0,Svehla 1962 (from memory)
O,O,3.050,lennard-jones,106.7,Svehla 1962 (from memory)
OH,HO,3.147,lennard-jones,79.8,Svehla 1962 (from memory)
O2,O2,3.467,lennard-jones,106.7,Poling App. B
H2,H2,2.827,lennard-jones,59.7,Poling App. B
H2O,H2O,2.641,lennard-jones,809.1,Poling App. B
HO2,HO2,3.467,lennard-jones,106.7,assumed like O2 for the tests
"""
JANAF_TABLES = {
    "H": "H-001",
    "O": "O-001",
    "OH": "H-038",
    "O2": "O-029",
    "H2": "H-050",
    "H2O": "H-064",
    "HO2": "H-043",
}


@functools.cache
def janaf_row(species: str, T: float) -> dict[str, float]:
    """One row of a NIST-JANAF table in SI (Cp, S [J/(mol K)], H - H298 and dfH [J/mol])."""
    frame = janaf.Table(JANAF_TABLES[species]).df
    temperatures = frame["T(K)"].to_numpy()
    (index,) = np.flatnonzero(np.isclose(temperatures, T, rtol=0, atol=1e-6))
    return {
        "Cp": float(frame["Cp"][int(index)]),
        "S": float(frame["S"][int(index)]),
        "H_minus_H298": 1e3 * float(frame["H-H(Tr)"][int(index)]),
        "dfH": 1e3 * float(frame["delta-f H"][int(index)]),
        "logKf": float(frame["log Kf"][int(index)]),
    }


def janaf_reaction_enthalpy(nu: dict[str, int]) -> float:
    """ΔrH°(298.15 K) [J/mol] as the sum of the tables' ΔfH°(298.15 K)."""
    return sum(n * janaf_row(name, 298.15)["dfH"] for name, n in nu.items())


def thermo_store(
    db: str,
    folder: Path,
    reactions_csv: str,
    expressions_csv: str | None = None,
    species: tuple[str, ...] = tuple(JANAF_TABLES),
) -> str:
    """``db`` initialised with SPECIES_CSV, the reactions, JANAF thermochemistry of
    ``species`` and, if given, the expressions."""
    assert run(db, "init").exit_code == 0
    steps = [
        ("species", "import", str(write(folder / "species.csv", SPECIES_CSV))),
        ("reactions", "import", str(write(folder / "reactions.csv", reactions_csv))),
    ]
    if species:
        steps.append(("thermo", "janaf", *(f"{name}={JANAF_TABLES[name]}" for name in species)))
    if expressions_csv:
        steps.append(("expressions", "import", str(write(folder / "e.csv", expressions_csv))))
    for step in steps:
        outcome = run(db, *step)
        assert outcome.exit_code == 0, (step, outcome.stdout, outcome.stderr)
    return db
