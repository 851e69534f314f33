"""Validate the outside-data sets the benchmarks run on.

``tests/benchmarks/data/shifts_1h.csv`` feeds the 1H prediction accuracy
benchmark (issue 4); ``tests/benchmarks/data/unknowns.toml`` (small unknowns)
and ``tests/benchmarks/data/unknowns_large.toml`` (C10-C20 unknowns with 13C
lists, many with DEPT labels) feed the solver benchmark.  The values themselves are literature / handbook shifts
(source per row, see docs/data.md); these tests check that the files are
well formed and internally consistent: structures parse, formulas and
integrals agree with the structures, every mapped atom carries hydrogen, every
row has a source, and the minimum sizes the issues ask for are met.

Only rdkit and the standard library are used, so the check does not depend on
the project's own parser.
"""

from __future__ import annotations

import re
import tomllib
from collections import Counter, defaultdict
from pathlib import Path
from typing import Any, NamedTuple

import pytest
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors, rdMolDescriptors

from shift_tables import by_compound, parse_smiles, read_rows, symmetry_ranks

RDLogger.DisableLog("rdApp.*")

__all__: list[str] = []

DATA = Path(__file__).parent / "benchmarks" / "data"
SHIFTS = DATA / "shifts_1h.csv"
UNKNOWNS = DATA / "unknowns.toml"
LARGE = DATA / "unknowns_large.toml"

CLASSES = {
    "sp3-one-group",
    "sp3-multi",
    "alkene",
    "aromatic",
    "heteroaromatic",
    "aldehyde",
    "alkyne",
    "exchangeable",
}


class Span(NamedTuple):
    """Plausible 1H shift window (ppm) for one class."""

    low: float
    high: float


# Broad windows per class, common practice (textbook chart of 1H shift regions);
# they catch typing slips such as 72.6 for 7.26 or an aromatic value filed as sp3.
# sp3-multi reaches 7.26 because chloroform (three Cl on one C) belongs there.
SPANS = {
    "sp3-one-group": Span(0.0, 5.2),
    "sp3-multi": Span(1.5, 7.5),
    "alkene": Span(3.5, 8.0),
    "aromatic": Span(6.3, 9.3),
    "heteroaromatic": Span(5.8, 9.0),
    "aldehyde": Span(7.9, 10.6),
    "alkyne": Span(1.7, 3.3),
    "exchangeable": Span(0.5, 13.5),
}

# Minimum sizes asked for by issues 4 and 5 (and the data brief).
MIN_SHIFT_COMPOUNDS = 60
MIN_SHIFT_ROWS = 180
MIN_UNKNOWNS = 45
MIN_ISOMER_GROUPS = 5
MAX_HEAVY_ATOMS = 11
# The large set (data brief): at least 64 cases of C10-C20, at least 24 of
# them C15-C20, a 13C list on every case, DEPT labels on at least 24.
MIN_LARGE = 64
MIN_LARGE_C15_C20 = 24
MIN_LARGE_DEPT = 24
LARGE_CARBONS = (10, 20)

PEAK = re.compile(
    r"(?P<shift>\d+(?:\.\d+)?)(?:\s*[-\u2013]\s*\d+(?:\.\d+)?)?\s*\((?P<body>[^()]*)\)"
)
INTEGRAL = re.compile(r"(\d+)\s*H\b")
C13_VALUE = re.compile(r"^\d+(?:\.\d+)?$")
# One 13C line as papers print it: `128.6`, `128.6 (CH)`, `128.6 (2C, CH)`,
# `29.6 (2C)`.  Labels are DEPT / attached-H classes (common practice).
C13_LINE = re.compile(r"(?P<shift>\d+(?:\.\d+)?)(?:\s*\((?P<labels>[^()]*)\))?")
C13_COUNT = re.compile(r"^(\d+)\s*C$")
DEPT_H = {"C": 0, "CH": 1, "CH2": 2, "CH3": 3}
# Multiplicity labels as journals print them (trade-facts.md, "Reporting NMR data").
MULTIPLICITY = re.compile(r"^(s|br s|m|quint|sext|sept|[dtq]{1,3})$")




def _peaks(h1: str) -> list[tuple[float, str, int]]:
    """(shift, multiplicity, integral) per signal of a paper-style 1H list."""
    found = [
        (float(m["shift"]), m["body"].split(",")[0].strip(), m["body"])
        for m in PEAK.finditer(h1)
    ]
    out = []
    for shift, mult, body in found:
        counts = INTEGRAL.findall(body)
        assert len(counts) == 1, f"signal at {shift} needs exactly one integral: {body!r}"
        out.append((shift, mult, int(counts[0])))
    return out


# ------------------------------------------------------------------ shifts_1h.csv


@pytest.fixture(scope="module")
def shift_rows() -> list[dict[str, str]]:
    return read_rows(SHIFTS)


@pytest.fixture(scope="module")
def shift_compounds(shift_rows: list[dict[str, str]]) -> dict[str, list[dict[str, str]]]:
    return by_compound(shift_rows)


def test_shift_table_size(shift_compounds: dict[str, list[dict[str, str]]]) -> None:
    rows = sum(len(v) for v in shift_compounds.values())
    assert len(shift_compounds) >= MIN_SHIFT_COMPOUNDS
    assert rows >= MIN_SHIFT_ROWS


def test_shift_rows_well_formed(shift_rows: list[dict[str, str]]) -> None:
    for row in shift_rows:
        where = f"{row['compound']} map {row['map']}"
        assert row["class"] in CLASSES, where
        assert row["source"].strip(), where
        assert row["solvent"].strip(), where
        span = SPANS[row["class"]]
        assert span.low <= float(row["shift"]) <= span.high, where


def test_shift_smiles_and_maps(shift_compounds: dict[str, list[dict[str, str]]]) -> None:
    for name, rows in shift_compounds.items():
        smiles = {r["smiles"] for r in rows}
        assert len(smiles) == 1, f"{name}: one SMILES per compound"
        mol = parse_smiles(smiles.pop())
        assert Descriptors.NumRadicalElectrons(mol) == 0, f"{name}: bracket H count wrong"
        mapped = {a.GetAtomMapNum(): a for a in mol.GetAtoms() if a.GetAtomMapNum()}
        uses = Counter(int(r["map"]) for r in rows)
        assert set(uses) == set(mapped), f"{name}: map numbers in rows vs SMILES"
        ranks = symmetry_ranks(mol)
        classes = Counter(ranks[a.GetIdx()] for a in mapped.values())
        assert max(classes.values()) == 1, f"{name}: two maps on symmetry-equivalent atoms"
        for number, atom in mapped.items():
            assert atom.GetTotalNumHs() > 0, f"{name}: mapped atom {number} carries no H"
            # two rows on one map = one environment observed as two signals
            # (=CH2 protons, amide N-methyls); never more
            assert uses[number] <= 2, f"{name}: map {number} used {uses[number]} times"
            if uses[number] == 2 and atom.GetTotalNumHs() == 2:
                # the two H of one CH2 are two 1H signals: they must differ
                shifts = {r["shift"] for r in rows if int(r["map"]) == number}
                assert len(shifts) == 2, f"{name}: map {number} repeated with one shift"


def test_shift_table_covers_required_kinds(
    shift_rows: list[dict[str, str]], shift_compounds: dict[str, list[dict[str, str]]]
) -> None:
    per_class = Counter(r["class"] for r in shift_rows)
    assert set(per_class) == CLASSES
    # the sp3 target (one functional group) needs a real sample
    assert per_class["sp3-one-group"] >= 60
    for name in ("pyridine", "pyrrole", "furan", "thiophene", "benzene", "ethyl acetate"):
        assert name in shift_compounds


# ---------------------------------------------------------------- unknowns.toml


@pytest.fixture(scope="module")
def cases() -> list[dict[str, Any]]:
    with UNKNOWNS.open("rb") as fh:
        return tomllib.load(fh)["case"]


def test_unknowns_size(cases: list[dict[str, Any]]) -> None:
    assert len(cases) >= MIN_UNKNOWNS
    groups = Counter(c["group"] for c in cases)
    assert sum(1 for n in groups.values() if n > 1) >= MIN_ISOMER_GROUPS


def test_unknowns_keys(cases: list[dict[str, Any]]) -> None:
    allowed = {"name", "formula", "h1", "c13", "solvent", "smiles", "group", "source"}
    names = Counter(c["name"] for c in cases)
    assert max(names.values()) == 1, "case names must be unique"
    for case in cases:
        assert set(case) <= allowed, case["name"]
        for key in ("name", "formula", "h1", "smiles", "group", "source"):
            assert str(case.get(key, "")).strip(), f"{case.get('name')}: missing {key}"


def test_unknowns_structures_unique(cases: list[dict[str, Any]]) -> None:
    canon = Counter(Chem.MolToSmiles(parse_smiles(c["smiles"])) for c in cases)
    assert max(canon.values()) == 1


class C13Line(NamedTuple):
    """One 13C line: shift, number of carbons it stands for, attached H (None = unlabelled)."""

    shift: float
    carbons: int
    attached_h: int | None


def _c13_lines(text: str) -> list[C13Line]:
    """Read a paper-style 13C list; every character must belong to a line or a separator."""
    lines = []
    rest = C13_LINE.sub("", text)
    assert not rest.replace(",", "").strip(), f"unread text in 13C list: {rest!r}"
    for m in C13_LINE.finditer(text):
        carbons, attached = 1, None
        for label in filter(None, (t.strip() for t in (m["labels"] or "").split(","))):
            count = C13_COUNT.match(label)
            if count:
                carbons = int(count[1])
                assert carbons >= 2, f"13C line {m['shift']}: count label {label!r}"
            else:
                assert label in DEPT_H, f"13C line {m['shift']}: unknown label {label!r}"
                attached = DEPT_H[label]
        out = C13Line(float(m["shift"]), carbons, attached)
        lines.append(out)
    return lines


def _carbon_classes(mol: Chem.Mol) -> list[tuple[int, int]]:
    """(attached H, size) per topological symmetry class of the carbons."""
    ranks = symmetry_ranks(mol)
    sizes: Counter[tuple[int, int]] = Counter()
    for atom in mol.GetAtoms():
        if atom.GetSymbol() == "C":
            sizes[(ranks[atom.GetIdx()], atom.GetTotalNumHs())] += 1
    return [(h, n) for (_, h), n in sizes.items()]


def _check_c13(name: str, text: str, mol: Chem.Mol) -> list[C13Line]:
    """The 13C checks shared by both unknowns files; returns the lines read."""
    lines = _c13_lines(text)
    assert lines, f"{name}: empty 13C list"
    shifts = [line.shift for line in lines]
    assert all(0.0 <= v <= 230.0 for v in shifts), name
    assert shifts == sorted(shifts, reverse=True), f"{name}: 13C lines high -> low"
    carbons = [a for a in mol.GetAtoms() if a.GetSymbol() == "C"]
    n_c = len(carbons)
    assert len(lines) <= n_c, f"{name}: more 13C lines than carbons"
    listed = sum(line.carbons for line in lines)
    assert listed <= n_c, f"{name}: (nC) counts add up to more than {n_c} carbons"
    if any(line.carbons > 1 for line in lines):
        # a paper that marks equivalences gives the full inventory
        assert listed == n_c, f"{name}: (nC) counts add up to {listed}, formula has {n_c} C"
    per_h = Counter(a.GetTotalNumHs() for a in carbons)
    labelled = [line for line in lines if line.attached_h is not None]
    if labelled:
        assert len(labelled) == len(lines), f"{name}: DEPT labels on some lines only"
        assert listed == n_c, f"{name}: DEPT-labelled list must account for all {n_c} carbons"
        seen = Counter()
        for line in lines:
            seen[line.attached_h] += line.carbons
        assert seen == per_h, f"{name}: DEPT labels {dict(seen)} vs structure {dict(per_h)}"
    classes = _carbon_classes(mol)
    for line in lines:
        if line.carbons < 2:
            continue
        # an (nC) line needs carbons that can coincide: at least one
        # symmetry-equivalent set among them (of the labelled H count), and
        # enough carbons of that kind in all
        fits = [n for h, n in classes if line.attached_h in (None, h)]
        assert max(fits, default=0) >= 2, f"{name}: {line.shift} ({line.carbons}C) has no equivalent carbons"
        assert sum(fits) >= line.carbons, f"{name}: {line.shift} ({line.carbons}C) exceeds such carbons"
    return lines


def _check_case(case: dict[str, Any]) -> Chem.Mol:
    """Checks shared by both unknowns files: structure, formula, 1H text, 13C text."""
    name = case["name"]
    mol = parse_smiles(case["smiles"])
    assert Descriptors.NumRadicalElectrons(mol) == 0, f"{name}: bracket H count wrong"
    assert rdMolDescriptors.CalcMolFormula(mol) == case["formula"], name
    n_h = sum(a.GetTotalNumHs() for a in mol.GetAtoms())
    peaks = _peaks(case["h1"])
    # every signal of the text was read (a stray token would shift the count)
    assert len(peaks) == case["h1"].count("("), name
    assert sum(p[2] for p in peaks) == n_h, f"{name}: integrals vs H count"
    shifts = [p[0] for p in peaks]
    assert shifts == sorted(shifts, reverse=True), f"{name}: signals high -> low"
    for shift, mult, _ in peaks:
        assert MULTIPLICITY.match(mult), f"{name}: multiplicity {mult!r} at {shift}"
    if "c13" in case:
        _check_c13(name, case["c13"], mol)
    return mol


@pytest.mark.parametrize("index", range(len(tomllib.loads(UNKNOWNS.read_text("utf-8"))["case"])))
def test_unknown_case_consistent(cases: list[dict[str, Any]], index: int) -> None:
    case = cases[index]
    mol = _check_case(case)
    assert mol.GetNumHeavyAtoms() <= MAX_HEAVY_ATOMS, case["name"]
    if "c13" in case:
        # the small set's lists are plain shifts
        values = [v.strip() for v in case["c13"].split(",")]
        assert all(C13_VALUE.match(v) for v in values), case["name"]


def test_isomer_groups_share_formula(cases: list[dict[str, Any]]) -> None:
    formulas: dict[str, set[str]] = defaultdict(set)
    for case in cases:
        formulas[case["group"]].add(case["formula"])
    assert all(len(f) == 1 for f in formulas.values())


# ---------------------------------------------------------- unknowns_large.toml


@pytest.fixture(scope="module")
def large_cases() -> list[dict[str, Any]]:
    with LARGE.open("rb") as fh:
        return tomllib.load(fh)["case"]


def _n_carbons(case: dict[str, Any]) -> int:
    return sum(1 for a in parse_smiles(case["smiles"]).GetAtoms() if a.GetSymbol() == "C")


def test_large_size(large_cases: list[dict[str, Any]]) -> None:
    assert len(large_cases) >= MIN_LARGE
    sizes = [_n_carbons(c) for c in large_cases]
    assert all(LARGE_CARBONS[0] <= n <= LARGE_CARBONS[1] for n in sizes)
    assert sum(n >= 15 for n in sizes) >= MIN_LARGE_C15_C20
    dept = [c for c in large_cases if any(x.attached_h is not None for x in _c13_lines(c["c13"]))]
    assert len(dept) >= MIN_LARGE_DEPT
    groups = Counter(c["group"] for c in large_cases)
    assert sum(1 for n in groups.values() if n > 1) >= MIN_ISOMER_GROUPS


def test_large_keys(large_cases: list[dict[str, Any]], cases: list[dict[str, Any]]) -> None:
    allowed = {"name", "formula", "h1", "c13", "solvent", "smiles", "group", "source"}
    names = Counter(c["name"] for c in large_cases + cases)
    assert max(names.values()) == 1, "case names must be unique across both files"
    for case in large_cases:
        assert set(case) == allowed, f"{case['name']}: keys (c13 is required here)"
        for key in allowed:
            assert str(case[key]).strip(), f"{case['name']}: empty {key}"
        assert case["group"] == case["formula"], case["name"]
        assert "from memory" in case["source"] or "recalled" in case["source"], case["name"]


def test_large_structures_new(large_cases: list[dict[str, Any]], cases: list[dict[str, Any]]) -> None:
    canon = Counter(Chem.MolToSmiles(parse_smiles(c["smiles"])) for c in large_cases + cases)
    assert max(canon.values()) == 1, "a structure appears twice (or is already in unknowns.toml)"


@pytest.mark.parametrize("index", range(len(tomllib.loads(LARGE.read_text("utf-8"))["case"])))
def test_large_case_consistent(large_cases: list[dict[str, Any]], index: int) -> None:
    _check_case(large_cases[index])


# Worked check values for the 13C line reader and its consistency rules
# (common practice notation; structures as named).
C13_CASES = [
    ("171.1 (C), 128.6 (2C, CH), 21.0 (CH3)", [(171.1, 1, 0), (128.6, 2, 1), (21.0, 1, 3)]),
    ("129.3 (CH, 2C), 29.6 (2C), 14.1", [(129.3, 2, 1), (29.6, 2, None), (14.1, 1, None)]),
]


@pytest.mark.parametrize(("text", "expected"), C13_CASES)
def test_c13_reader(text: str, expected: list[tuple[float, int, int | None]]) -> None:
    assert [tuple(x) for x in _c13_lines(text)] == expected


# Lists that must be refused.  Toluene (C7H8: CH3, ipso C, 2x2 + 1 CH); its
# shifts 137.9, 129.1, 128.3, 125.4, 21.5 are from memory (literature spectrum,
# CDCl3), the faults are made on purpose.
C13_BAD = [
    ("toluene, missing (2C)", "137.9 (C), 129.1 (CH), 128.3 (CH), 125.4 (CH), 21.5 (CH3)"),
    ("toluene, ipso labelled CH", "137.9 (CH), 129.1 (2C, CH), 128.3 (2C, CH), 125.4 (CH), 21.5 (CH3)"),
    ("toluene, (2C) on the unique CH3", "137.9 (C), 129.1 (2C, CH), 128.3 (CH), 125.4 (CH), 21.5 (2C, CH3)"),
    ("toluene, low -> high", "21.5 (CH3), 125.4 (CH), 128.3 (2C, CH), 129.1 (2C, CH), 137.9 (C)"),
    ("toluene, stray text", "137.9 (C), 129.1 (2C, CH), 128.3 (2C, CH), 125.4 (CH), 21.5 (CH3) ppm"),
]


@pytest.mark.parametrize(("label", "text"), C13_BAD)
def test_c13_checks_refuse(label: str, text: str) -> None:
    with pytest.raises(AssertionError):
        _check_c13(label, text, parse_smiles("Cc1ccccc1"))


def test_c13_checks_accept_toluene() -> None:
    text = "137.9 (C), 129.1 (2C, CH), 128.3 (2C, CH), 125.4 (CH), 21.5 (CH3)"
    assert len(_check_c13("toluene", text, parse_smiles("Cc1ccccc1"))) == 5


# Worked check values for the peak reader itself (common practice notation).
PEAK_CASES = [
    ("4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H)", [(4.12, "q", 2), (2.05, "s", 3)]),
    ("7.38-7.29 (m, 5H), 1.90 (br s, 1H)", [(7.38, "m", 5), (1.90, "br s", 1)]),
]


@pytest.mark.parametrize(("text", "expected"), PEAK_CASES)
def test_peak_reader(text: str, expected: list[tuple[float, str, int]]) -> None:
    assert _peaks(text) == expected
