"""Spectral evidence as hard constraints (elucidate.constrain.evidence).

Shifts are literature values recalled from memory (CDCl3) unless a source is
named; the shift regions themselves are common practice (see
elucidate/constrain/data/*.csv).
"""

from __future__ import annotations

import pytest

from elucidate.constrain.evidence import (
    CarbonHCounts,
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
    assert set(ev) == {"c13-lines", "c13-regions", "dept", "rings"}
    assert ev["dept"].group_bounds() == {3: (2, 2), 2: (1, 1), 1: (0, 0), 0: (1, 1)}


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
    ev = (CarbonLineCount(len(c13.split(",")), False), CarbonRegions(lines(c13)))
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
