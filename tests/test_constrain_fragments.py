"""constrain.fragments: the fragment library and the patterns that imply it."""

import pytest

from elucidate.constrain.fragments import fragment_atoms, load_fragments, match_fragments
from elucidate.model import Formula, H1Signal, Problem


def sig(shift, mult, h, j=(), broad=False):
    return H1Signal(shift, shift, shift, mult, tuple(j), h, h, broad=broad)


def formula(**counts):
    order = ("C", "H", "Br", "Cl", "F", "I", "N", "O", "P", "S", "Si")
    return Formula(tuple((el, counts[el]) for el in order if counts.get(el)))


def keys(problem):
    return sorted(m.rule.key for m in match_fragments(problem))


def test_library_loads_with_sources_and_valid_smiles():
    from rdkit import Chem

    rules = load_fragments()
    assert len(rules) >= 8
    for r in rules:
        assert r.strength in ("hard", "soft")
        assert r.source.strip()
        mol = Chem.MolFromSmiles(r.smiles)
        assert mol is not None and any(a.GetAtomicNum() == 0 for a in mol.GetAtoms())


def test_fragment_atoms():
    assert fragment_atoms("*C(C)(C)C") == (("C", 0), ("C", 3), ("C", 3), ("C", 3))
    assert [h for _, h in fragment_atoms("*c1ccccc1")] == [0, 1, 1, 1, 1, 1]


CASES = [
    # (name, problem, expected rule keys, source of the data)
    (
        "ethyl acetate",  # Gottlieb et al., J. Org. Chem. 1997, 62, 7512
        Problem(formula(C=4, H=8, O=2),
                (sig(4.12, "q", 2, [7.1]), sig(2.05, "s", 3), sig(1.26, "t", 3, [7.1]))),
        ["ethyl"],
    ),
    (
        "toluene",  # Gottlieb et al. 1997: 7.25-7.17 (m, 5H), 2.36 (s, 3H)
        Problem(formula(C=7, H=8), (H1Signal(7.21, 7.17, 7.25, "m", (), 5, 5), sig(2.36, "s", 3))),
        ["benzene_mono"],
    ),
    (
        "tert-butyl methyl ether",  # Gottlieb et al. 1997: 3.22 (s, 3H), 1.19 (s, 9H)
        Problem(formula(C=5, H=12, O=1), (sig(3.22, "s", 3), sig(1.19, "s", 9))),
        ["methoxy", "tert_butyl"],
    ),
    (
        "4-methylanisole",  # from memory: 7.09 (d, 8.5), 6.81 (d, 8.5), 3.78, 2.29
        Problem(formula(C=8, H=10, O=1),
                (sig(7.09, "d", 2, [8.5]), sig(6.81, "d", 2, [8.5]), sig(3.78, "s", 3), sig(2.29, "s", 3))),
        ["benzene_para", "methoxy"],
    ),
    (
        "isobutyraldehyde",  # from memory: 9.62 (d, 1.2), 2.43 (m), 1.11 (d, 7.1, 6H)
        Problem(formula(C=4, H=8, O=1),
                (sig(9.62, "d", 1, [1.2]), sig(2.43, "m", 1), sig(1.11, "d", 6, [7.1]))),
        ["aldehyde"],
    ),
    (
        "no aldehyde without O",  # construction: same 9.6 ppm line, hydrocarbon formula
        Problem(formula(C=4, H=8), (sig(9.62, "d", 1, [1.2]), sig(1.11, "d", 7, [7.1]))),
        [],
    ),
]


@pytest.mark.parametrize("name, problem, expected", CASES, ids=[c[0] for c in CASES])
def test_matches(name, problem, expected):
    assert keys(problem) == expected


def test_isopropyl_needs_shared_j():
    # common practice: the 6H doublet and the septet share J (about 7 Hz)
    f = formula(C=5, H=10, O=1)
    same = Problem(f, (sig(2.60, "sept", 1, [6.9]), sig(2.14, "s", 3), sig(1.10, "d", 6, [6.9])))
    other = Problem(f, (sig(2.60, "sept", 1, [6.9]), sig(2.14, "s", 3), sig(1.10, "d", 6, [5.6])))
    assert "isopropyl" in keys(same)
    assert "isopropyl" not in keys(other)


# ------------------------------------------------- ring and alkene patterns
# Peak lists (CDCl3) are literature spectra recalled from memory unless a
# source says otherwise; J classes are handbook values (common practice:
# J(ortho) 6-10, J(meta) 1-3, J(para) 0-1 Hz; pyridine J(2,3) 4-6 Hz; alkene
# J(trans) 12-18, J(cis) 6-12 Hz).

from elucidate.constrain.fragments import describe_evidence, hard_alternatives  # noqa: E402
from elucidate.parse import load_problem  # noqa: E402

RING = {"benzene_ortho", "benzene_meta", "benzene_para", "benzene_123", "benzene_124", "benzene_135",
        "benzene_1235", "benzene_1245", "pyridine_2", "pyridine_3", "pyridine_4", "pyridine_25", "pyridine_26",
        "benzene_mono", "alkene_trans", "alkene_cis"}

RING_CASES = [
    # (name, formula, 1H list, expected ring/alkene rules, source)
    ("2'-hydroxyacetophenone", "C8H8O2",  # from memory
     "12.25 (s, 1H), 7.73 (dd, J = 8.0, 1.6 Hz, 1H), 7.47 (ddd, J = 8.5, 7.2, 1.6 Hz, 1H), "
     "6.98 (dd, J = 8.4, 1.0 Hz, 1H), 6.89 (ddd, J = 8.2, 7.2, 1.1 Hz, 1H), 2.62 (s, 3H)",
     ["benzene_ortho"]),
    ("methyl salicylate", "C8H8O3",  # benchmark data (from memory)
     "10.76 (s, 1H), 7.84 (dd, J = 8.0, 1.7 Hz, 1H), 7.45 (ddd, J = 8.6, 7.2, 1.8 Hz, 1H), "
     "6.98 (d, J = 8.4 Hz, 1H), 6.88 (t, J = 7.6 Hz, 1H), 3.95 (s, 3H)",
     ["benzene_ortho"]),
    ("2-nitrotoluene", "C7H7NO2",  # benchmark data (from memory): two H overlap
     "7.95 (d, J = 8.1 Hz, 1H), 7.48 (t, J = 7.5 Hz, 1H), 7.36-7.29 (m, 2H), 2.60 (s, 3H)",
     ["benzene_meta", "benzene_ortho"]),
    ("methyl 3-nitrobenzoate", "C8H7NO4",  # from memory
     "8.87 (t, J = 1.9 Hz, 1H), 8.42 (ddd, J = 8.2, 2.3, 1.1 Hz, 1H), 8.37 (dt, J = 7.7, 1.3 Hz, 1H), "
     "7.66 (t, J = 8.0 Hz, 1H), 3.99 (s, 3H)",
     ["benzene_meta"]),
    ("o-xylene", "C8H10",  # benchmark data (from memory): one 4H multiplet fits o, m, p
     "7.15-7.08 (m, 4H), 2.27 (s, 6H)",
     ["benzene_meta", "benzene_ortho", "benzene_para"]),
    ("m-xylene", "C8H10",  # benchmark data (from memory): the 7.5 Hz triplet rules para out
     "7.15 (t, J = 7.5 Hz, 1H), 7.00-6.95 (m, 3H), 2.31 (s, 6H)",
     ["benzene_meta", "benzene_ortho"]),
    ("4-methylanisole", "C8H10O",  # from memory
     "7.09 (d, J = 8.5 Hz, 2H), 6.81 (d, J = 8.5 Hz, 2H), 3.78 (s, 3H), 2.29 (s, 3H)",
     ["benzene_para"]),
    ("3,4-dimethoxybenzaldehyde", "C9H10O3",  # from memory
     "9.85 (s, 1H), 7.46 (dd, J = 8.2, 1.9 Hz, 1H), 7.41 (d, J = 1.9 Hz, 1H), 6.98 (d, J = 8.2 Hz, 1H), "
     "3.96 (s, 3H), 3.94 (s, 3H)",
     ["benzene_124"]),
    ("eugenol", "C10H12O2",  # from memory: two ring H overlap, so 1,2,3 stays possible
     "6.86 (d, J = 8.5 Hz, 1H), 6.70-6.67 (m, 2H), 5.95 (ddt, J = 16.9, 10.1, 6.7 Hz, 1H), 5.53 (s, 1H), "
     "5.10-5.04 (m, 2H), 3.87 (s, 3H), 3.32 (d, J = 6.7 Hz, 2H)",
     ["benzene_123", "benzene_124"]),
    ("mesitylene", "C9H12",  # from memory
     "6.78 (s, 3H), 2.27 (s, 9H)",
     ["benzene_123", "benzene_124", "benzene_135"]),
    ("2-methylpyridine", "C6H7N",  # benchmark data (from memory)
     "8.49 (d, J = 4.8 Hz, 1H), 7.55 (td, J = 7.7, 1.9 Hz, 1H), 7.13 (d, J = 7.8 Hz, 1H), "
     "7.07 (dd, J = 7.5, 4.9 Hz, 1H), 2.55 (s, 3H)",
     ["pyridine_2"]),
    ("ethyl nicotinate", "C8H9NO2",  # from memory
     "9.23 (d, J = 1.6 Hz, 1H), 8.77 (dd, J = 4.9, 1.7 Hz, 1H), 8.30 (dt, J = 7.9, 1.9 Hz, 1H), "
     "7.39 (dd, J = 7.9, 4.9 Hz, 1H), 4.42 (q, J = 7.1 Hz, 2H), 1.42 (t, J = 7.1 Hz, 3H)",
     ["pyridine_3"]),
    ("4-methylpyridine", "C6H7N",  # benchmark data (from memory)
     "8.46 (d, J = 5.0 Hz, 2H), 7.10 (d, J = 5.0 Hz, 2H), 2.35 (s, 3H)",
     ["pyridine_4"]),
    ("pyridine", "C5H5N",  # benchmark data (from memory): five ring H, no substituted pattern
     "8.62 (m, 2H), 7.68 (tt, J = 7.7, 1.8 Hz, 1H), 7.29 (m, 2H)",
     []),
    ("ethyl cinnamate", "C11H12O2",  # from memory
     "7.69 (d, J = 16.0 Hz, 1H), 7.55-7.50 (m, 2H), 7.40-7.36 (m, 3H), 6.44 (d, J = 16.0 Hz, 1H), "
     "4.27 (q, J = 7.1 Hz, 2H), 1.34 (t, J = 7.1 Hz, 3H)",
     ["alkene_trans", "benzene_mono"]),  # the two 16 Hz alkene H are no ring H
    ("trans-anethole", "C10H12O",  # from memory: the alkene H at 6.36 is no ring H
     "7.27 (d, J = 8.7 Hz, 2H), 6.84 (d, J = 8.7 Hz, 2H), 6.36 (dq, J = 15.7, 1.6 Hz, 1H), "
     "6.10 (dq, J = 15.7, 6.6 Hz, 1H), 3.80 (s, 3H), 1.86 (dd, J = 6.6, 1.6 Hz, 3H)",
     ["alkene_trans", "benzene_para"]),
    ("ethyl (E)-but-2-enoate", "C6H10O2",  # benchmark data (from memory)
     "6.97 (dq, J = 15.6, 6.9 Hz, 1H), 5.84 (dq, J = 15.6, 1.7 Hz, 1H), 4.18 (q, J = 7.1 Hz, 2H), "
     "1.88 (dd, J = 6.9, 1.7 Hz, 3H), 1.28 (t, J = 7.1 Hz, 3H)",
     ["alkene_trans"]),
    ("cyclohex-2-en-1-one", "C6H8O",  # from memory: ring cis CH=CH, J 10.1 Hz
     "7.00 (dt, J = 10.1, 4.0 Hz, 1H), 6.02 (dt, J = 10.1, 2.0 Hz, 1H), 2.42-2.33 (m, 4H), 2.06-1.98 (m, 2H)",
     ["alkene_cis"]),
    # vinyl groups share their trans/cis J with a third alkene H: no CH=CH pair
    ("ethyl acrylate", "C5H8O2",  # benchmark data (from memory)
     "6.40 (dd, J = 17.3, 1.5 Hz, 1H), 6.12 (dd, J = 17.3, 10.4 Hz, 1H), 5.81 (dd, J = 10.4, 1.5 Hz, 1H), "
     "4.21 (q, J = 7.1 Hz, 2H), 1.30 (t, J = 7.1 Hz, 3H)",
     []),
    ("hex-1-ene", "C6H12",  # benchmark data (from memory)
     "5.81 (ddt, J = 17.0, 10.2, 6.7 Hz, 1H), 4.99 (dq, J = 17.1, 1.7 Hz, 1H), "
     "4.93 (ddt, J = 10.2, 2.2, 1.2 Hz, 1H), 2.05 (q, J = 7.0 Hz, 2H), 1.42-1.29 (m, 4H), 0.90 (t, J = 7.1 Hz, 3H)",
     []),
    ("styrene", "C8H8",  # benchmark data (from memory); the 17.6/10.9 Hz vinyl H at 6.72 is no ring H
     "7.41 (d, J = 7.4 Hz, 2H), 7.33 (t, J = 7.5 Hz, 2H), 7.26 (t, J = 7.2 Hz, 1H), "
     "6.72 (dd, J = 17.6, 10.9 Hz, 1H), 5.75 (d, J = 17.6 Hz, 1H), 5.24 (d, J = 10.9 Hz, 1H)",
     ["benzene_mono"]),
    # construction: a 1H singlet among five ring H has no ortho partner, so
    # the five are no single ring; read as a non-ring H (an indole H-2) it
    # leaves four H of a 1,2-disubstituted (benzo) ring
    ("indole-type 1H singlet", "C8H7N",
     "7.65 (d, J = 7.9 Hz, 1H), 7.38 (d, J = 8.1 Hz, 1H), 7.20 (t, J = 7.6 Hz, 1H), 7.12 (t, J = 7.5 Hz, 1H), "
     "7.05 (s, 1H), 6.55 (br s, 1H), 2.20 (s, 1H)",
     ["benzene_ortho"]),
]


@pytest.mark.parametrize("name, f, h1, expected", RING_CASES, ids=[c[0] for c in RING_CASES])
def test_ring_and_alkene_patterns(name, f, h1, expected):
    got = sorted(k for k in keys(load_problem(formula=f, h1=h1)) if k in RING)
    assert got == expected


def test_family_with_a_soft_member_is_soft():
    # mesitylene's 3H singlet fits 1,2,3-, 1,2,4- and 1,3,5-substitution; the
    # 1,3,5 fragment cannot be placed (soft), so none of them may prune
    ms = match_fragments(load_problem(formula="C9H12", h1="6.78 (s, 3H), 2.27 (s, 9H)"))
    assert {m.rule.strength for m in ms if m.rule.family} == {"soft"}


def test_fluorine_rules_ring_patterns_out():
    # 4-fluoroacetophenone (from memory): H-F couplings (8.6, 5.4 Hz) would
    # read as ring H-H couplings
    p = load_problem(formula="C8H7FO", h1="7.98 (dd, J = 8.9, 5.4 Hz, 2H), 7.13 (t, J = 8.6 Hz, 2H), 2.59 (s, 3H)")
    assert not [k for k in keys(p) if k in RING]


def test_hard_alternatives_product_over_families():
    # 2-nitrotoluene: the ring family has two alternatives -> two choices
    p = load_problem(formula="C7H7NO2", h1="7.95 (d, J = 8.1 Hz, 1H), 7.48 (t, J = 7.5 Hz, 1H), "
                     "7.36-7.29 (m, 2H), 2.60 (s, 3H)")
    hard = [m for m in match_fragments(p) if m.rule.strength == "hard"]
    choices = hard_alternatives(hard)
    assert sorted(tuple(m.rule.key for m in c) for c in choices) == [("benzene_meta",), ("benzene_ortho",)]
    assert describe_evidence(hard[0], p) == "7.95 d 8.1, 7.48 t 7.5, 7.36-7.29 m"


def test_ring_file_errors_name_the_file(tmp_path, monkeypatch):
    from elucidate.constrain import fragments as fr
    from elucidate.errors import InputError

    bad = {"name": "x", "smiles": "*c1ccccc1*", "strength": "hard", "source": "s",
           "ring": {"window": [6, 9], "h": 4, "classes": {"o": [7, 9]}, "positions": ["o", "oo", "x", "o"]}}
    with pytest.raises(InputError, match="bad.toml: \\[ring\\] positions"):
        fr._rule("bad", bad)


# ------------------------------------------------ several rings in one window


def ring_sets(formula_text, h1):
    ms = match_fragments(load_problem(formula=formula_text, h1=h1))
    return [m for m in ms if "(ring" in m.rule.family]


def test_two_phenyls_from_one_multiplet():
    # benzyl (E)-cinnamate, CDCl3 (literature spectrum recalled from memory;
    # case of tests/benchmarks/data/unknowns_large.toml): ten ring H in one
    # multiplet, the alkene H (J 16 Hz) are no ring H; 16 carbons hold two
    # benzene rings but not three, so the ten H are two phenyls
    got = ring_sets("C16H14O2", "7.72 (d, J = 16.0 Hz, 1H), 7.55-7.30 (m, 10H), "
                    "6.49 (d, J = 16.0 Hz, 1H), 5.26 (s, 2H)")
    assert [(m.rule.key, m.rule.strength) for m in got] == [("benzene_mono", "hard")] * 2
    assert len({m.rule.family for m in got}) == 2  # two copies, not alternatives of each other


def test_phenyl_and_a_second_ring_share_a_multiplet():
    # 4-chlorobenzophenone, CDCl3 (from memory): 4H + 1H + 4H; one phenyl and
    # a 4H ring whose pattern the multiplets leave open (ortho, meta, para)
    got = ring_sets("C13H9ClO", "7.78-7.73 (m, 4H), 7.59 (tt, J = 7.4, 1.3 Hz, 1H), 7.51-7.43 (m, 4H)")
    other = sorted(m.rule.key for m in got if m.rule.key != "benzene_mono")
    assert other == ["benzene_meta", "benzene_ortho", "benzene_para"]
    assert sum(1 for m in got if m.rule.key == "benzene_mono") == 1
    # the second ring owns exactly four of the nine H, the phenyl the rest
    assert all(sum(h for _, h in m.shares) == 4 for m in got if m.rule.key != "benzene_mono")


def test_two_rings_that_may_be_one_fused_system_claim_nothing():
    # 2-methoxynaphthalene (nerolin), CDCl3 (from memory): seven ring H that
    # two separate rings (4H + 3H) would also fit; the halves of a
    # naphthalene share two carbons, so no pair of disjoint rings is claimed
    got = ring_sets("C11H10O", "7.78-7.71 (m, 3H), 7.43 (t, J = 7.5 Hz, 1H), 7.33 (t, J = 7.4 Hz, 1H), "
                    "7.17-7.12 (m, 2H), 3.92 (s, 3H)")
    assert got == []


def test_rings_the_formula_cannot_hold_claim_nothing():
    # construction: ten ring H but only eleven carbons: two benzene rings do
    # not fit, so the window is not read as rings at all
    assert ring_sets("C11H12O", "7.50-7.20 (m, 10H), 2.10 (s, 2H)") == []


def test_a_singlet_in_the_window_may_be_an_alkene_h():
    # (E)-stilbene, CDCl3 (from memory): the CH=CH singlet at 7.12 is no
    # ring H; the rest are two phenyls
    got = ring_sets("C14H12", "7.52 (d, J = 7.4 Hz, 4H), 7.37 (t, J = 7.6 Hz, 4H), "
                    "7.27 (t, J = 7.3 Hz, 2H), 7.12 (s, 2H)")
    assert [m.rule.key for m in got] == ["benzene_mono", "benzene_mono"]


def test_one_reading_of_two_rings_that_cannot_be_fused():
    # bisphenol A, CDCl3 (from memory): two 4H doublets read only as two
    # para rings, and para rings have no adjacent substituents to fuse by
    got = ring_sets("C15H16O2", "7.09 (d, J = 8.7 Hz, 4H), 6.73 (d, J = 8.7 Hz, 4H), 4.70 (br s, 2H), 1.62 (s, 6H)")
    assert [(m.rule.key, m.rule.strength) for m in got] == [("benzene_para", "hard")] * 2
    assert [sum(h for _, h in m.shares) for m in got] == [4, 4]


def test_aabb_phthalate_reads_as_ortho():
    # dimethyl phthalate, CDCl3 (from memory): the AA'BB' pair printed as dd
    # 5.7, 3.3 Hz is a 1,2-disubstituted ring (fragments/benzene_ortho_aabb.toml)
    p = load_problem(formula="C10H10O4", h1="7.72 (dd, J = 5.7, 3.3 Hz, 2H), 7.53 (dd, J = 5.7, 3.3 Hz, 2H), 3.91 (s, 6H)")
    assert [k for k in keys(p) if k.startswith("benzene")] == ["benzene_ortho_aabb"]


def test_a_doublet_coupled_only_outside_the_window_may_be_no_ring_h():
    # 7-methoxycoumarin (herniarin), CDCl3 (case of unknowns_large.toml, from
    # memory): H-4 (7.63, d 9.5) couples only with H-3 at 6.24, below the
    # window; the other three are a 1,2,4-pattern (the benzo ring)
    got = ring_sets("C10H8O3", "7.63 (d, J = 9.5 Hz, 1H), 7.37 (d, J = 8.6 Hz, 1H), 6.85 (dd, J = 8.6, 2.4 Hz, 1H), "
                    "6.81 (d, J = 2.4 Hz, 1H), 6.24 (d, J = 9.5 Hz, 1H), 3.87 (s, 3H)")
    assert [(m.rule.key, m.rule.strength) for m in got] == [("benzene_124", "hard")]
    assert sorted(m.signals[0] for m in got) == [1]
