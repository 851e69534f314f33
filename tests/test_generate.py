"""Tests of the structure generator against published counts and a reference enumerator.

Check values: the design notes' list of check values (shared/reference/trade-facts.md) ("Isomer counts").
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

import pytest
from rdkit import Chem

from elucidate.errors import InputError, LimitReached
from elucidate.generate import AtomSpec, FragmentSpec, Limits, Options, Spec, Stats, count, generate
from elucidate.model import Formula

sys.path.insert(0, str(Path(__file__).parent))
from _reference_isomers import reference_isomers, satisfies_atoms  # noqa: E402


def F(text: str) -> Formula:
    counts: dict[str, int] = {}
    for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", text):
        counts[el] = counts.get(el, 0) + (int(n) if n else 1)
    order = ["C", "H"] + sorted(el for el in counts if el not in ("C", "H"))
    return Formula(tuple((el, counts[el]) for el in order if el in counts))


# Alkanes CnH2n+2, n = 1..16: OEIS A000602 (number of n-node unrooted quartic trees).
ALKANES = [1, 1, 1, 2, 3, 5, 9, 18, 35, 75, 159, 355, 802, 1858, 4347, 10359]


@pytest.mark.parametrize("n, expected", list(enumerate(ALKANES, start=1)))
def test_alkanes_match_oeis_a000602(n: int, expected: int) -> None:
    assert count(Spec(F(f"C{n}H{2 * n + 2}"))) == expected  # OEIS A000602


# Alcohols CnH2n+1OH, n = 1..10: OEIS A000598 (rooted quartic trees), offset 1.
ALCOHOLS = [1, 1, 2, 4, 8, 17, 39, 89, 211, 507]


@pytest.mark.parametrize("n, expected", list(enumerate(ALCOHOLS, start=1)))
def test_alcohols_match_oeis_a000598(n: int, expected: int) -> None:
    spec = Spec(F(f"C{n}H{2 * n + 2}O"), require=("[OX2H1][CX4]",))
    assert count(spec) == expected  # OEIS A000598


# Independent exhaustive counts, trade-facts.md (Kekulé forms counted once).
COUNTS = [
    ("C2H4O", 3),
    ("C3H6O", 9),
    ("C3H6O2", 34),
    ("C4H8O", 26),
    ("C4H8O2", 122),  # also named in issue 3
    ("C5H10O", 74),  # also named in issue 3
    ("C3H9N", 4),
    ("C4H11N", 8),
    ("C3H7Cl", 2),
    ("C2H6O", 2),
    ("C3H8O", 3),
    ("C4H10O", 7),
    ("C5H12O", 14),
    ("C4H8", 5),
    ("C5H10", 10),
    ("C6H6", 217),  # widely quoted; trade-facts.md
    ("C7H8", 1031),
    ("C8H16", 139),
    ("C6H12O2", 1313),
    ("C8H10", 4678),  # 4679 bond-order graphs; o-xylene's two Kekulé forms are one
    ("C8H8", 7427),
    ("C6H4O2", 12087),
    ("C7H6O", 15781),  # 15804 bond-order graphs
    ("C7H9N", 24306),
    ("C8H8O", 112380),  # trade-facts.md, counted by one fast method; this is a second
]


@pytest.mark.parametrize("formula, expected", COUNTS)
def test_published_isomer_counts(formula: str, expected: int) -> None:
    assert count(Spec(F(formula))) == expected  # trade-facts.md, independent exhaustive counts


def test_kekule_forms_are_one_structure() -> None:
    # C8H10: 4679 bond-order graphs but 4678 compounds (trade-facts.md)
    stats = Stats()
    smiles = list(generate(Spec(F("C8H10")), stats=stats))
    assert len(smiles) == len(set(smiles)) == 4678
    assert "Cc1ccccc1C" in smiles  # o-xylene once


# Reference enumerator (tests/_reference_isomers.py) on many small formulas.
SMALL = [
    "CH4", "CH2O", "CH2O2", "C2H2", "C2H4", "C2H3N", "C2H4O2", "C3H4", "C3H4O", "C3H3N",
    "C3H6O", "C3H7NO", "C4H4O", "C4H6", "C4H5N", "C4H8O", "C2H5Cl", "C2H2Cl2", "C2H6S",
    "CH5N3", "C2H4N2", "C3H6O2", "C5H6", "C2HF3", "CH3NO", "C2H6Si", "CH3P", "C6H6",
]


@pytest.mark.parametrize("formula", SMALL)
def test_agrees_with_reference_enumerator(formula: str) -> None:
    got = list(generate(Spec(F(formula))))
    assert len(got) == len(set(got))
    assert set(got) == reference_isomers(F(formula).as_dict())


def _rings_through(mol: Chem.Mol, bond: Chem.Bond) -> int:
    """Size of the smallest ring through a bond (0 if none), by breadth-first search."""
    u, v = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
    dist = {u: 0}
    todo = [u]
    for a in todo:
        for b in mol.GetAtomWithIdx(a).GetNeighbors():
            w = b.GetIdx()
            if (a, w) in ((u, v), (v, u)) or w in dist:
                continue
            dist[w] = dist[a] + 1
            todo.append(w)
    return dist[v] + 1 if v in dist else 0


def _kekule(smiles: str) -> Chem.Mol:
    m = Chem.MolFromSmiles(smiles)
    Chem.Kekulize(m, clearAromaticFlags=True)
    return m


FILTERS = [
    # (formula, options, predicate a structure must satisfy)
    ("C5H8", Options(no_small_rings=True),
     lambda s: not _kekule(s).HasSubstructMatch(Chem.MolFromSmarts("*1~*~*1"))
     and not _kekule(s).HasSubstructMatch(Chem.MolFromSmarts("*1~*~*~*1"))),
    ("C5H8", Options(no_cumulenes=True),
     lambda s: not _kekule(s).HasSubstructMatch(Chem.MolFromSmarts("[#6](=*)=*"))),
    ("C3H6N2O", Options(no_hetero_hetero=True),
     lambda s: not _kekule(s).HasSubstructMatch(Chem.MolFromSmarts("[!#6]-[!#6]"))),
    ("C6H8", Options(min_ring_triple=8),
     lambda s: not any(b.GetBondTypeAsDouble() == 3 and _rings_through(_kekule(s), b)
                       for b in _kekule(s).GetBonds())),
    ("C6H10", Options(max_ring_size=5),
     lambda s: all(_rings_through(_kekule(s), b) <= 5 for b in _kekule(s).GetBonds())),
]


@pytest.mark.parametrize("formula, options, keep", FILTERS)
def test_filters_agree_with_reference(formula, options, keep) -> None:  # type: ignore[no-untyped-def]
    got = list(generate(Spec(F(formula), options=options)))
    assert len(got) == len(set(got))
    want = {s for s in reference_isomers(F(formula).as_dict()) if keep(s)}
    assert set(got) == want
    assert 0 < len(want) < len(reference_isomers(F(formula).as_dict()))


# Fixed atoms with H counts and neighbour-H sets, checked by brute force on the
# reference set.  Isobutyl propanoate's proton groups (DESIGN.md worked example).
ATOM_CASES = [
    # isobutyl acetate-like groups: CH3 s, CH2 d, CH m, 2 x CH3 d, C, O, O
    ("C6H12O2", [("C", 3, frozenset({0})), ("C", 2, frozenset({1})), ("C", 1, None),
                 ("C", 3, frozenset({1})), ("C", 3, frozenset({1})),
                 ("C", 0, None), ("O", 0, None), ("O", 0, None)]),
    ("C4H8O2", [("C", 3, None), ("C", 3, None), ("C", 2, None), ("C", 0, None),
                ("O", 0, None), ("O", 0, None)]),
    ("C4H8O2", [("C", 3, frozenset({0})), ("C", 3, frozenset({2})), ("C", 2, frozenset({3})),
                ("C", 0, None), ("O", 0, None), ("O", 0, None)]),
    ("C5H10O", [("C", 3, frozenset({2})), ("C", 3, frozenset({2, 1})), ("C", 2, None),
                ("C", 2, None), ("C", 0, None), ("O", 0, None)]),
    ("C4H6O", [("C", 1, None), ("C", 1, None), ("C", 1, None), ("C", 3, None), ("O", 0, None)]),
]


@pytest.mark.parametrize("formula, atoms", ATOM_CASES)
def test_atom_specs_agree_with_reference(formula: str, atoms: list) -> None:  # type: ignore[type-arg]
    spec = Spec(F(formula), atoms=tuple(AtomSpec(el, h, nh) for el, h, nh in atoms))
    got = list(generate(spec))
    assert len(got) == len(set(got))
    want = {s for s in reference_isomers(F(formula).as_dict()) if satisfies_atoms(s, atoms)}
    assert set(got) == want
    assert want


# DESIGN.md worked example (isobutyl propanoate, values from memory): the
# proton groups and n+1 neighbour counts leave a handful of joinings, among
# them isobutyl propanoate and ethyl 3-methylbutanoate.
ISOBUTYL_PROPANOATE = (
    AtomSpec("C", 2, frozenset({1})),  # 3.87 d 2H
    AtomSpec("C", 2, frozenset({3})),  # 2.33 q 2H
    AtomSpec("C", 1),  # 1.92 m 1H
    AtomSpec("C", 3, frozenset({2})),  # 1.14 t 3H
    AtomSpec("C", 3, frozenset({1})),  # 0.93 d 6H
    AtomSpec("C", 3, frozenset({1})),
    AtomSpec("C", 0),
    AtomSpec("O", 0),
    AtomSpec("O", 0),
)


def test_design_worked_example() -> None:
    got = list(generate(Spec(F("C7H14O2"), atoms=ISOBUTYL_PROPANOATE)))
    assert len(got) == len(set(got)) and len(got) <= 10
    assert "CCC(=O)OCC(C)C" in got and "CCOC(=O)CC(C)C" in got
    for s in got:
        assert satisfies_atoms(s, [(a.element, a.h_count, a.neighbour_h) for a in ISOBUTYL_PROPANOATE])


def test_constraints_prune_during_construction() -> None:
    free, fixed = Stats(), Stats()
    f = F("C7H14O2")
    count(Spec(f), stats=free)
    count(Spec(f, atoms=ISOBUTYL_PROPANOATE), stats=fixed)
    assert fixed.visited * 4 < free.visited
    assert fixed.colourings * 100 < free.colourings
    assert 0 < fixed.emitted < free.emitted


def test_parts_are_disjoint_and_complete() -> None:
    spec = Spec(F("C6H8O"))
    whole = list(generate(spec))
    parts = [list(generate(spec, part=(i, 5))) for i in range(5)]
    joined = [s for p in parts for s in p]
    assert joined == whole  # contiguous blocks: same order as an unsplit run
    assert count(spec, workers=2) == len(whole)


def test_limits_stop_and_say_so() -> None:
    stats = Stats()
    got: list[str] = []
    with pytest.raises(LimitReached):
        for s in generate(Spec(F("C7H8")), limits=Limits(max_structures=10), stats=stats):
            got.append(s)
    assert len(got) == 10 and stats.stopped_by == "max_structures"
    st2 = Stats()
    assert count(Spec(F("C7H8")), limits=Limits(max_structures=10), stats=st2) == 10
    assert st2.stopped_by == "max_structures"


# A fixed-H spec with 12 heavy atoms whose full search takes about a minute:
# CH3, seven CH, two C, CH2 and one O (C11H12O).
BIG_FIXED = Spec(
    F("C11H12O"),
    atoms=(AtomSpec("C", 3), *[AtomSpec("C", 1)] * 7, AtomSpec("C", 0), AtomSpec("C", 0),
           AtomSpec("C", 2), AtomSpec("O", 0)),
)


def test_time_limit_stops_a_big_search_and_says_so() -> None:
    from elucidate.generate import isomers

    isomers._skeleton_list.cache_clear()  # skeleton enumeration itself must see the limit
    st = Stats()
    n = count(BIG_FIXED, limits=Limits(time_limit_s=0.5), stats=st)
    assert st.stopped_by == "time_limit" and 0 <= n == st.emitted
    st2 = Stats()
    got: list[str] = []
    with pytest.raises(LimitReached, match="time limit"):
        for s in generate(BIG_FIXED, limits=Limits(time_limit_s=0.5), stats=st2):
            got.append(s)
    assert st2.stopped_by == "time_limit" and len(got) == st2.emitted
    st3 = Stats()
    count(BIG_FIXED, limits=Limits(time_limit_s=0.5), workers=2, stats=st3)
    assert st3.stopped_by == "time_limit"


def test_stopped_search_leaves_no_partial_skeleton_list() -> None:
    from elucidate.generate import isomers

    isomers._skeleton_list.cache_clear()
    st = Stats()
    count(Spec(F("C8H10")), limits=Limits(time_limit_s=0.001), stats=st)
    assert st.stopped_by == "time_limit"
    assert count(Spec(F("C8H10"))) == 4678  # trade-facts.md, as in COUNTS


def test_output_is_deterministic() -> None:
    assert list(generate(Spec(F("C5H8O")))) == list(generate(Spec(F("C5H8O"))))


# Options that widen the space: examples named in common practice.
@pytest.mark.parametrize(
    "formula, options, member",
    [
        ("CH3NO2", Options(charge_separated=True), "C[N+](=O)[O-]"),  # nitromethane
        ("C5H5NO", Options(charge_separated=True), "[O-][n+]1ccccc1"),  # pyridine N-oxide
        ("C2H6OS", Options(hypervalent_s=True), "CS(C)=O"),  # DMSO
        ("C2H6O2S", Options(hypervalent_s=True), "CS(C)(=O)=O"),  # dimethyl sulfone
        ("C3H9O4P", Options(pentavalent_p=True), "COP(=O)(OC)OC"),  # trimethyl phosphate
    ],
)
def test_options_widen_the_space(formula: str, options: Options, member: str) -> None:
    plain = set(generate(Spec(F(formula))))
    wide = list(generate(Spec(F(formula), options=options)))
    assert len(wide) == len(set(wide))
    assert plain < set(wide)
    assert Chem.CanonSmiles(member) in wide and Chem.CanonSmiles(member) not in plain
    for s in wide:
        assert Chem.GetFormalCharge(Chem.MolFromSmiles(s)) == 0


def test_bad_inputs_raise_input_error() -> None:
    with pytest.raises(InputError, match="SMARTS"):
        list(generate(Spec(F("C2H6O"), forbid=("[C",))))
    with pytest.raises(InputError, match="add up"):
        list(generate(Spec(F("C2H6O"), atoms=(AtomSpec("C", 3),))))
    with pytest.raises(InputError, match="part"):
        list(generate(Spec(F("C2H6O")), part=(3, 2)))


def _placed(smiles: str, smarts: str, copies: int, aromatic: bool) -> bool:
    """Does the molecule hold ``copies`` disjoint matches of a hand-written SMARTS?"""
    from itertools import combinations

    m = Chem.MolFromSmiles(smiles)
    if not aromatic:
        Chem.Kekulize(m, clearAromaticFlags=True)
    sets = [frozenset(x) for x in m.GetSubstructMatches(Chem.MolFromSmarts(smarts))]
    return any(
        all(not (a & b) for a, b in combinations(c, 2)) for c in combinations(sets, copies)
    )


# Fragments as super-atoms against the reference set filtered by a SMARTS that
# spells out the fragment exactly (its H and its number of heavy neighbours).
ESTER = "[#6;H0;D3](=[#8;D1])-[#8;D2]"
PHENYL = "[c;H0;D3]1[cH1][cH1][cH1][cH1][cH1]1"
FRAGMENT_CASES = [
    ("C5H10O2", ("*C(=O)O*",), ESTER, 1, False),
    ("C4H6O4", ("*C(=O)O*", "*C(=O)O*"), ESTER, 2, False),
    ("C8H18", ("*C(C)(C)C",), "[CH0;D4]([CH3])([CH3])[CH3]", 1, False),
    ("C6H12O", ("*C=O",), "[#6;H1;D2]=[#8;D1]", 1, False),
    ("C5H8O", ("*C=C*",), "[#6;H1;D2]=[#6;H1;D2]", 1, False),
    ("C6H8", ("*C=C*",), "[#6;H1;D2]=[#6;H1;D2]", 1, False),
    ("C7H8", ("*c1ccccc1",), PHENYL, 1, True),
]

# Larger aromatic cases against the plain generator's output (itself checked
# against the published counts above) filtered by the same SMARTS.
FRAGMENT_PLAIN_CASES = [
    ("C7H8O", ("*c1ccccc1",), PHENYL, 1, True),
    ("C8H10", ("*c1ccc(*)cc1",), "[c;H0;D3]1[cH1][cH1][c;H0;D3][cH1][cH1]1", 1, True),
    ("C8H10", ("*C=C*",), "[#6;H1;D2]=[#6;H1;D2]", 1, False),
    ("C7H6O", ("*c1ccccc1", "*C=O"), PHENYL, 1, True),
]


@pytest.mark.parametrize("formula, frags, smarts, copies, aromatic", FRAGMENT_PLAIN_CASES)
def test_fragments_agree_with_plain_run(formula, frags, smarts, copies, aromatic) -> None:  # type: ignore[no-untyped-def]
    spec = Spec(F(formula), fragments=tuple(FragmentSpec(s) for s in frags))
    got = list(generate(spec))
    assert len(got) == len(set(got))
    want = {s for s in generate(Spec(F(formula))) if _placed(s, smarts, copies, aromatic)}
    if len(frags) == 2:  # phenyl and an aldehyde group
        want = {s for s in want if _placed(s, "[#6;H1;D2]=[#8;D1]", 1, False)}
    assert set(got) == want and want


@pytest.mark.parametrize("formula, frags, smarts, copies, aromatic", FRAGMENT_CASES)
def test_fragments_agree_with_reference(formula, frags, smarts, copies, aromatic) -> None:  # type: ignore[no-untyped-def]
    spec = Spec(F(formula), fragments=tuple(FragmentSpec(s) for s in frags))
    got = list(generate(spec))
    assert len(got) == len(set(got))
    want = {s for s in reference_isomers(F(formula).as_dict()) if _placed(s, smarts, copies, aromatic)}
    assert set(got) == want and want


def test_solver_style_spec() -> None:
    # C9H10O2 with a monosubstituted benzene ring and fixed H per carbon
    # (CH2, CH3, C, O, O outside the ring): the phenyl-containing esters and
    # their isomers; cross-checked against the plain run filtered by brute force.
    atoms = (AtomSpec("C", 2), AtomSpec("C", 3), AtomSpec("C", 0), AtomSpec("O", 0), AtomSpec("O", 0))
    spec = Spec(F("C9H10O2"), atoms=atoms, fragments=(FragmentSpec("*c1ccccc1"),))
    free, fixed = Stats(), Stats()
    got = list(generate(spec, stats=fixed))
    assert len(got) == len(set(got))
    for s in ("CCOC(=O)c1ccccc1", "CC(=O)OCc1ccccc1", "COC(=O)Cc1ccccc1", "CCC(=O)Oc1ccccc1"):
        assert s in got
    ester = list(generate(Spec(F("C9H10O2"), atoms=atoms[:2], fragments=(FragmentSpec("*c1ccccc1"), FragmentSpec("*C(=O)O*")))))
    assert sorted(ester) == sorted(s for s in got if _placed(s, ESTER, 1, False))
    assert fixed.visited < 2000


def test_atom_specs_with_options_match_plain_run() -> None:
    # Same structures whether the H distribution is given up front or the
    # plain (option-widened) run is filtered by it afterwards.
    cases = [
        ("C5H5NO", [("C", 1)] * 5 + [("N", 0), ("O", 0)], Options(charge_separated=True)),
        ("C2H6O2S", [("C", 3), ("C", 3), ("S", 0), ("O", 0), ("O", 0)], Options(hypervalent_s=True)),
    ]
    for formula, atoms, options in cases:
        spec = Spec(F(formula), atoms=tuple(AtomSpec(el, h) for el, h in atoms), options=options)
        got = list(generate(spec))
        want = {
            s for s in generate(Spec(F(formula), options=options))
            if sorted((a.GetSymbol(), a.GetTotalNumHs()) for a in Chem.MolFromSmiles(s).GetAtoms())
            == sorted(atoms)
        }
        assert len(got) == len(set(got)) and set(got) == want and want


def test_neighbour_rule_counts_h_on_a_fragment_port_anchor():
    # construction: but-2-ene, each CH3 a doublet (n+1 rule: its neighbour
    # carbon carries 1 H), that carbon being a CH of the fragment *[CH]=[CH]*
    from elucidate.generate import AtomSpec, FragmentSpec, Spec, generate
    from elucidate.parse import parse_formula

    spec = Spec(
        parse_formula("C4H8"),
        (AtomSpec("C", 3, frozenset({1})), AtomSpec("C", 3, frozenset({1}))),
        (FragmentSpec("*[CH]=[CH]*"),),
    )
    assert list(generate(spec)) == ["CC=CC"]


def test_two_ring_fragments_keep_every_link() -> None:
    # a meta ring, a phenyl, a CH3, a C and an O: 3-acetylbiphenyl and
    # 3-methylbenzophenone are both built (a port symmetry taken from the
    # aromatic rather than the Kekulé graph once lost the first)
    spec = Spec(F("C14H12O"), atoms=(AtomSpec("C", 3), AtomSpec("C", 0), AtomSpec("O", 0)),
                fragments=(FragmentSpec("*c1cccc(*)c1"), FragmentSpec("*c1ccccc1")))
    got = set(generate(spec))
    assert {"CC(=O)c1cccc(-c2ccccc2)c1", "Cc1cccc(C(=O)c2ccccc2)c1"} <= got
