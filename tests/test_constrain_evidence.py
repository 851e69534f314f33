"""Spectral evidence as hard constraints (elucidate.constrain.evidence).

Shifts are literature values recalled from memory (CDCl3) unless a source is
named; the shift regions themselves are common practice (see
elucidate/constrain/data/*.csv).
"""

from __future__ import annotations

import pytest

from elucidate.constrain.evidence import (
    CarbonHCounts,
    CarbonKinds,
    CarbonLineCount,
    CarbonRegions,
    CommonRings,
    Graph,
    ProtonRegions,
    read_evidence,
)
from elucidate.generate import FragmentSpec, Limits, Spec, count, generate
from elucidate.parse import load_problem, parse_formula
from elucidate.solve import explain, solve

ETHYL_ACETATE_H1 = "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"
# Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512, CDCl3 (recalled from memory)
ETHYL_ACETATE_C13 = "171.4, 60.5, 21.0, 14.2"
TOLUENE_C13 = "137.9, 129.1, 128.3, 125.4, 21.5"  # same table, from memory


def lines(text: str) -> tuple[tuple[float, int, int], ...]:
    return tuple((float(x), 1, -1) for x in text.split(","))


# ------------------------------------------------------------ line count


@pytest.mark.parametrize(
    "smiles, n_lines, complete, ok",
    [
        ("Cc1ccccc1", 5, False, True),  # toluene: 5 distinct carbons, 5 lines
        ("C1=CC=CCC=C1", 5, False, False),  # cycloheptatriene has only 4 classes
        ("CC(O)C(C)C", 5, False, True),  # 3-methylbutan-2-ol: diastereotopic methyls show apart (common practice)
        ("CC(=O)C=C(C)C", 6, False, True),  # mesityl oxide: 6 lines, the =C(CH3)2 methyls differ (from memory)
        ("CCN(CC)C(=O)c1cccc(C)c1", 12, False, True),  # DEET: amide rotamers double the N-ethyl lines (from memory)
        ("O=C(C=CC=Cc1ccc2OCOc2c1)N1CCCCC1", 17, False, True),  # piperine: piperidide C2/C6, C3/C5 apart (from memory)
        ("CCOCC", 2, True, True),  # diethyl ether 65.9, 15.2 (Gottlieb 1997, from memory)
        ("CCCOC", 2, True, False),  # methyl propyl ether: 4 distinct carbons, complete list of 2
    ],
)
def test_line_count(smiles: str, n_lines: int, complete: bool, ok: bool) -> None:
    reason = CarbonLineCount(n_lines, complete).reason(Graph.from_smiles(smiles))
    assert (reason is None) == ok
    if not ok:
        assert "distinct carbons" in reason


# ----------------------------------------------------------- shift regions


def test_carbonyl_line_needs_a_carbonyl_carbon() -> None:
    # acetone 207.1, 30.9 (Gottlieb 1997, from memory)
    ev = CarbonRegions(lines("207.1, 30.9"))
    assert ev.reason(Graph.from_smiles("CC(C)=O")) is None
    why = ev.reason(Graph.from_smiles("C=CCO"))  # prop-2-en-1-ol
    assert why is not None and "207.1" in why and "C=O" in why


def test_aromatic_lines_need_unsaturated_carbons() -> None:
    ev = CarbonRegions(lines(TOLUENE_C13))
    assert ev.reason(Graph.from_smiles("Cc1ccccc1")) is None
    assert ev.reason(Graph.from_smiles("C1CC2CC3CC1C23")) is not None  # a saturated C7H10 cage: no sp2 carbon


def test_dept_labels_in_the_matching() -> None:
    # ethyl acetate with DEPT labels: 171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)
    ev = CarbonRegions(((171.4, 1, 0), (60.5, 1, 2), (21.0, 1, 3), (14.2, 1, 3)))
    assert ev.reason(Graph.from_smiles("CCOC(C)=O")) is None
    # 2-methylpropanoic acid has no CH2 for the line labelled CH2
    why = ev.reason(Graph.from_smiles("CC(C)C(=O)O"))
    assert why is not None and "CH2" in why


def test_dept_counts() -> None:
    ev = CarbonHCounts(((3, 2, 2), (2, 1, 1), (1, 0, 0), (0, 1, 1)))
    assert ev.reason(Graph.from_smiles("CCOC(C)=O")) is None
    assert ev.reason(Graph.from_smiles("CCCC(=O)O")) == "DEPT shows 2 CH3 carbons; this structure has 1"


def test_proton_regions() -> None:
    # toluene 7.3-7.1 (m, 5H): H on sp2 carbons (common practice)
    ev = ProtonRegions(((0, 5, (7.2,)),))
    assert ev.reason(Graph.from_smiles("Cc1ccccc1")) is None
    assert ev.reason(Graph.from_smiles("CC1=CCC=CC1")) is not None  # 1-methylcyclohexa-1,4-diene: 3 alkene H
    # benzaldehyde CHO 10.0 needs a carbon doubly bonded to O
    ald = ProtonRegions(((1, 1, (10.0,)),))
    assert ald.reason(Graph.from_smiles("O=Cc1ccccc1")) is None
    assert ald.reason(Graph.from_smiles("C=Cc1ccco1")) is not None


def test_read_evidence_from_a_problem() -> None:
    p = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13="171.1 (C), 60.4 (CH2), 21.0 (CH3), 14.2 (CH3)")
    ev = {e.key: e for e in read_evidence(p)}
    # four lines for four carbons: every carbon has its own line (c13-kinds)
    assert set(ev) == {"c13-lines", "c13-regions", "dept", "c13-kinds", "rings"}
    assert ev["dept"].group_bounds() == {3: (2, 2), 2: (1, 1), 1: (0, 0), 0: (1, 1)}
    # acetone, 206.6 and 30.8 (Gottlieb et al. 1997, from memory) without "(2C)":
    # the lines do not account for all three carbons, so no c13-kinds
    p = load_problem(formula="C3H6O", h1="2.17 (s, 6H)", c13="206.6, 30.8")
    assert "c13-kinds" not in {e.key for e in read_evidence(p)}


# ------------------------------------------------------------ carbon kinds

# naproxen, CDCl3 (literature spectrum recalled from memory; the case
# "naproxen" of tests/benchmarks/data/unknowns_large.toml)
NAPROXEN_C13 = ("180.6 (C), 157.7 (C), 134.9 (C), 133.8 (C), 129.3 (CH), 128.9 (C), 127.2 (CH), 126.2 (CH), "
                "126.1 (CH), 119.0 (CH), 105.6 (CH), 55.3 (CH3), 45.3 (CH), 18.1 (CH3)")


def test_every_literature_carbon_lies_in_its_kinds_window() -> None:
    """Each row of tests/benchmarks/data/shifts_13c.csv (literature 13C
    shifts, source per row) lies inside the window data/c13_kinds.csv gives
    its carbon's kind: the windows never turn down a measured carbon."""
    import csv
    from pathlib import Path

    from rdkit import Chem

    from elucidate.constrain.evidence import carbon_kind_names, carbon_kinds

    table = carbon_kinds()
    path = Path(__file__).parent / "benchmarks" / "data" / "shifts_13c.csv"
    rows = list(csv.DictReader(path.open(encoding="utf-8")))
    outside = []
    for row in rows:
        mol = Chem.MolFromSmiles(row["smiles"])
        idx = next(a.GetIdx() for a in mol.GetAtoms() if a.GetAtomMapNum() == int(row["map"]))
        for a in mol.GetAtoms():
            a.SetAtomMapNum(0)
        graph = Graph.from_smiles(Chem.MolToSmiles(mol))
        pos = Chem.MolFromSmiles(Chem.MolToSmiles(mol)).GetSubstructMatch(mol)[idx]
        kind = table[carbon_kind_names(graph)[pos]]
        if not kind.lo <= float(row["shift"]) <= kind.hi:
            outside.append((row["compound"], row["shift"], kind.kind))
    assert len(rows) >= 800 and outside == []


@pytest.mark.parametrize(
    "smiles, words",
    [
        ("COc1ccc2cc(ccc2c1)C(C)C(=O)O", None),  # naproxen itself
        # what a search without the rule ranked first (an acyclic enyne-allene):
        # its inner alkyne carbon has no H and no C line lies at 55-110 ppm
        ("C#CC(C(=C=CC)C=CC=O)C(=C=CO)OC", "alkyne carbon"),
        # an isomer with a plain sp3 CH2 where the list has no CH2 line at all
        ("COc1ccc2cc(ccc2c1)CCC(=O)O", "CH2"),
    ],
)
def test_carbon_kinds_on_naproxen(smiles: str, words: str | None) -> None:
    p = load_problem(formula="C14H14O3", h1="3.91 (s, 3H)", c13=NAPROXEN_C13)
    ev = next(e for e in read_evidence(p) if e.key == "c13-kinds")
    got = ev.reason(Graph.from_smiles(smiles))
    assert (got is None) if words is None else (words in got), got


# ------------------------------------------------------------ common rings


@pytest.mark.parametrize(
    "smiles, words",
    [
        ("c1ccc2ccccc2c1", None),  # naphthalene: two 6-rings
        ("C1=CC=CC=CC=C1", None),  # cyclooctatetraene: an 8-ring is still common
        ("C1CC2CCC1C2", None),  # norbornane: bridged, every bond on a 5- or 6-ring
        ("O=C1CCCCCCCCCCCCCC1", "15-membered ring"),  # a macrocyclic musk ketone
        ("C1CCC#CC1", "triple bond in a 6-membered ring"),
        ("C1CCCCCCC#CCC1", "triple bond"),  # even in a large ring it is left out
        ("C1=C=CCCC1", "cumulated double bonds"),  # cyclic allene
        ("C=C=CC1CCCCC1", None),  # an allene outside the ring is not this rule's business
        # fused and peri-fused aromatics join ring atoms ortho only (common practice)
        ("c1cc2ccc3cccc4ccc(c1)c2c34", None),  # pyrene
        ("c1cc2cccc3c2c(c1)CC3", None),  # acenaphthene
        ("c1ccc-2c(c1)-c1cccc3cccc-2c13", None),  # fluoranthene
        ("COc1ccc2ccc(=O)oc2c1", None),  # herniarin (7-methoxycoumarin)
        # a para-bridged 7-methoxycoumarin isomer a search ranked above herniarin
        ("COc1cc2ccc1C(=O)OC=C2", "para positions"),
        ("C1CCc2cccc(c2)C1", "meta positions"),  # [5]metacyclophane
        ("C1=CC2=CC=C1CC2", "para positions"),  # [2]paracyclophane
        ("COC(=O)C=Cc1ccc2c(c1)O2", "three-membered ring fused"),  # a benzoxirene ranked above herniarin
        ("c1ccc2c(c1)CC2", None),  # benzocyclobutene: a real, stable compound
    ],
)
def test_common_rings(smiles: str, words: str | None) -> None:
    """Ring strain and ring size, common practice: cyclooctyne is the
    smallest isolable cycloalkyne; rings above 8 atoms are rare in unknowns."""
    got = CommonRings().reason(Graph.from_smiles(smiles))
    assert (got is None) if words is None else (got is not None and words in got)


@pytest.mark.parametrize(
    "formula, fragments",
    [
        ("C9H14", ()),  # 9-rings, cyclononyne, cyclic allenes all occur
        ("C9H12", ("*C#C*",)),  # a two-port fragment: the unit-graph ring bound must stay sound
    ],
)
def test_common_rings_in_the_generator_match_a_plain_filter(formula: str, fragments: tuple[str, ...]) -> None:
    frags = tuple(FragmentSpec(s) for s in fragments)
    plain = list(generate(Spec(parse_formula(formula), fragments=frags)))
    expected = sorted(s for s in plain if CommonRings().admits_smiles(s))
    got = sorted(generate(Spec(parse_formula(formula), fragments=frags, checks=(CommonRings(),))))
    assert got == expected
    assert len(expected) < len(plain)


# ------------------------------------------------ generator with the checks


@pytest.mark.parametrize(
    "formula, c13",
    [
        ("C7H8", TOLUENE_C13),  # needs 5 unsaturated carbons: caps the rings
        ("C4H8O2", ETHYL_ACETATE_C13),  # needs one C=O carbon
        ("C5H10O", "212.0, 44.5, 35.5, 17.5, 13.8"),  # pentan-2-one-like pattern (from memory)
    ],
)
def test_generator_checks_match_a_plain_filter(formula: str, c13: str) -> None:
    """Checks (and the ring cap they imply) remove exactly the structures
    that fail them: compared with filtering the plain stream by hand."""
    f = parse_formula(formula)
    ev = (CarbonLineCount(len(c13.split(",")), False), CarbonRegions(lines(c13)), CarbonKinds(lines(c13)))
    plain = list(generate(Spec(f)))
    expected = sorted(s for s in plain if all(e.admits_smiles(s) for e in ev))
    got = sorted(generate(Spec(f, checks=ev)))
    assert got == expected
    assert count(Spec(f, checks=ev)) == len(expected)
    assert len(expected) < len(plain)


# ------------------------------------------------------------ solve/explain


def test_dept_cuts_hypotheses_and_keeps_the_answer() -> None:
    p = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13="171.1 (C), 60.4 (CH2), 21.0 (CH3), 14.2 (CH3)")
    r = solve(p, time_limit_s=60)
    assert r.candidates[0].smiles == "CCOC(C)=O"
    assert r.complete and not r.relaxed


def test_a_wrong_13c_line_is_relaxed_not_fatal() -> None:
    """An extra line (say an impurity left in the list) breaks the hard 13C
    rules; the solver relaxes them, says so, and still finds the ester."""
    p = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13=ETHYL_ACETATE_C13 + ", 128.0")
    r = solve(p, time_limit_s=60)
    assert "CCOC(C)=O" in [c.smiles for c in r.candidates[:3]]
    assert any("13C" in step for step in r.relaxed)


def test_explain_names_the_13c_rule() -> None:
    p = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13="171.1 (C), 60.4 (CH2), 21.0 (CH3), 14.2 (CH3)")
    good = explain(p, "CCOC(C)=O", time_limit_s=60)
    assert not any("hard rule" in r for r in good.reasons)
    bad = explain(p, "CCCC(=O)O", time_limit_s=60)
    assert any("DEPT" in r for r in bad.reasons)


def test_explain_names_the_ring_prior() -> None:
    """Cyclodecane (C10H20, one 1H singlet, from memory ~1.5 ppm) is a
    real compound outside the first levels: explain says which rule, and
    the solver still reaches it once the ladder drops the prior."""
    p = load_problem(formula="C10H20", h1="1.50 (s, 20H)")
    why = explain(p, "C1CCCCCCCCC1", time_limit_s=60)
    assert any("10-membered ring" in r for r in why.reasons)
    r = solve(p, time_limit_s=60)
    assert "C1CCCCCCCCC1" in [c.smiles for c in r.candidates]
    assert any("common-ring" in step for step in r.relaxed)
