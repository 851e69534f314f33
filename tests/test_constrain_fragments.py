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
