"""Shared readers for the benchmark shift tables (``tests/benchmarks/data``).

``shifts_1h.csv`` and ``shifts_13c.csv`` have the same columns: one row per
mapped atom of a compound, with its literature shift and source.  The data
checks of both tables read them through these helpers.
"""

from __future__ import annotations

import csv
from collections import defaultdict
from pathlib import Path

from rdkit import Chem

__all__ = ["COLUMNS", "by_compound", "parse_smiles", "read_rows", "symmetry_ranks"]

COLUMNS = ["compound", "smiles", "map", "shift", "class", "solvent", "source"]


def read_rows(path: Path) -> list[dict[str, str]]:
    """The rows of one shift table; its header must be :data:`COLUMNS`."""
    with path.open(newline="", encoding="utf-8") as fh:
        reader = csv.DictReader(fh)
        assert reader.fieldnames == COLUMNS, f"{path.name}: header {reader.fieldnames}"
        return list(reader)


def by_compound(rows: list[dict[str, str]]) -> dict[str, list[dict[str, str]]]:
    """Rows grouped by compound name, in file order."""
    out: dict[str, list[dict[str, str]]] = defaultdict(list)
    for row in rows:
        out[row["compound"]].append(row)
    return dict(out)


def parse_smiles(smiles: str) -> Chem.Mol:
    """RDKit molecule of ``smiles``; a SMILES RDKit cannot read fails the test."""
    found = Chem.MolFromSmiles(smiles)
    assert found is not None, f"RDKit cannot parse SMILES {smiles!r}"
    return found


def symmetry_ranks(molecule: Chem.Mol) -> list[int]:
    """Topological symmetry classes, ignoring the atom-map labels themselves."""
    bare = Chem.Mol(molecule)
    for atom in bare.GetAtoms():
        atom.SetAtomMapNum(0)
    return list(Chem.CanonicalRankAtoms(bare, breakTies=False))
