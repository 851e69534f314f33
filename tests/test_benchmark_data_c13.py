"""Validate ``tests/benchmarks/data/shifts_13c.csv``, the 13C benchmark data.

The shifts are literature values recalled from memory (source on every row,
see DEVELOPERS.md, "Benchmark data").  These tests check that the file is
well formed: structures parse, every map sits on a carbon, no two mapped
carbons are symmetry-equivalent, every map number has a row, shifts fall in
broad windows per class, and the minimum sizes of the data brief are met.
Only rdkit and the standard library are used.
"""

from __future__ import annotations

from collections import Counter
from pathlib import Path
from typing import NamedTuple

import pytest
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors

from shift_tables import by_compound, parse_smiles, read_rows, symmetry_ranks

RDLogger.DisableLog("rdApp.*")

__all__: list[str] = []

SHIFTS = Path(__file__).parent / "benchmarks" / "data" / "shifts_13c.csv"


class Span(NamedTuple):
    """Plausible 13C shift window (ppm) for one class."""

    low: float
    high: float


# Broad windows per class, common practice (textbook chart of 13C shift
# regions); they catch typing slips (12.8 for 128.0) and misfiled classes.
SPANS = {
    "sp3-CH3": Span(0.0, 35.0),
    "sp3-CH2": Span(5.0, 55.0),
    "sp3-CH": Span(15.0, 60.0),
    "sp3-C": Span(25.0, 65.0),
    "sp3-O/N-bearing": Span(10.0, 110.0),
    "sp3-halogen-bearing": Span(-10.0, 100.0),
    "alkene": Span(80.0, 165.0),
    "benzene-CH": Span(95.0, 140.0),
    "benzene-C": Span(90.0, 170.0),
    "fused-aromatic": Span(100.0, 160.0),
    "heteroaromatic": Span(95.0, 165.0),
    "C=O ketone/aldehyde": Span(175.0, 225.0),
    "C=O acid/ester/amide": Span(155.0, 186.0),
    "nitrile": Span(105.0, 125.0),
    "alkyne": Span(60.0, 100.0),
    "other": Span(0.0, 230.0),
}

MIN_COMPOUNDS = 90
MIN_ROWS = 330




@pytest.fixture(scope="module")
def rows() -> list[dict[str, str]]:
    return read_rows(SHIFTS)


@pytest.fixture(scope="module")
def compounds(rows: list[dict[str, str]]) -> dict[str, list[dict[str, str]]]:
    return by_compound(rows)


def test_size(rows: list[dict[str, str]], compounds: dict[str, list[dict[str, str]]]) -> None:
    assert len(compounds) >= MIN_COMPOUNDS
    assert len(rows) >= MIN_ROWS


def test_rows_well_formed(rows: list[dict[str, str]]) -> None:
    for row in rows:
        where = f"{row['compound']} map {row['map']}"
        assert row["class"] in SPANS, where
        assert row["source"].strip(), where
        assert row["solvent"] == "CDCl3", where
        shift = float(row["shift"])
        assert row["shift"] == f"{shift:.1f}", f"{where}: one decimal"
        span = SPANS[row["class"]]
        assert span.low <= shift <= span.high, f"{where}: {shift} outside {span}"


def test_smiles_and_maps(compounds: dict[str, list[dict[str, str]]]) -> None:
    canon = Counter()
    for name, rs in compounds.items():
        smiles = {r["smiles"] for r in rs}
        assert len(smiles) == 1, f"{name}: one SMILES per compound"
        mol = parse_smiles(smiles.pop())
        assert Descriptors.NumRadicalElectrons(mol) == 0, f"{name}: bracket H count wrong"
        mapped = {a.GetAtomMapNum(): a for a in mol.GetAtoms() if a.GetAtomMapNum()}
        uses = Counter(int(r["map"]) for r in rs)
        assert set(uses) == set(mapped), f"{name}: map numbers in rows vs SMILES"
        for number, atom in mapped.items():
            assert atom.GetSymbol() == "C", f"{name}: map {number} is not on a carbon"
            # two rows on one map: two equivalent-by-graph carbons seen as two lines
            # (the E/Z methyls of a Me2C= group, the N-methyls of an amide); never more
            assert uses[number] <= 2, f"{name}: map {number} used {uses[number]} times"
            if uses[number] == 2:
                values = {r["shift"] for r in rs if int(r["map"]) == number}
                assert len(values) == 2, f"{name}: map {number} repeated with one shift"
                assert len(atom.GetNeighbors()) and _has_equivalent_partner(mol, atom), name
        ranks = symmetry_ranks(mol)
        classes = Counter(ranks[a.GetIdx()] for a in mapped.values())
        assert max(classes.values()) == 1, f"{name}: two maps on symmetry-equivalent atoms"
        bare = Chem.Mol(mol)
        for a in bare.GetAtoms():
            a.SetAtomMapNum(0)
        canon[Chem.MolToSmiles(bare)] += 1
    assert max(canon.values()) == 1, "a structure is listed twice"


def _has_equivalent_partner(mol: Chem.Mol, atom: Chem.Atom) -> bool:
    ranks = symmetry_ranks(mol)
    return sum(1 for r in ranks if r == ranks[atom.GetIdx()]) >= 2


def test_covers_required_kinds(rows: list[dict[str, str]], compounds: dict[str, list[dict[str, str]]]) -> None:
    per_class = Counter(r["class"] for r in rows)
    for klass in ("sp3-CH3", "sp3-CH2", "sp3-CH", "sp3-C", "sp3-O/N-bearing", "alkene",
                  "benzene-CH", "benzene-C", "heteroaromatic", "C=O ketone/aldehyde",
                  "C=O acid/ester/amide", "nitrile", "alkyne"):
        assert per_class[klass] >= 5, klass
    assert per_class["benzene-CH"] + per_class["benzene-C"] >= 150
    for name in ("anisole", "phenol", "aniline", "acetanilide", "methyl benzoate", "acetophenone",
                 "benzaldehyde", "nitrobenzene", "pyridine", "furan", "thiophene", "indole",
                 "naphthalene", "menthol", "geraniol", "limonene", "cyclohexanone", "benzonitrile"):
        assert name in compounds, name
