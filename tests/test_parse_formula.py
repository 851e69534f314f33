"""Formula parsing and degree of unsaturation."""

from __future__ import annotations

from typing import NamedTuple

import pytest

from elucidate.errors import InputError
from elucidate.parse.formula import MAX_HEAVY_ATOMS, parse_formula


class DouCase(NamedTuple):
    text: str
    hill: str
    dou: int
    source: str


# DoU = C + Si − (H + X)/2 + (N + P)/2 + 1; the worked values are common practice
# (textbook examples: benzene 4, pyridine 4, naphthalene 7, acetonitrile 2 …).
DOU_CASES = [
    DouCase("C6H6", "C6H6", 4, "benzene, common practice"),
    DouCase("C9H10O2", "C9H10O2", 5, "benzyl acetate: ring 4 + C=O 1, common practice"),
    DouCase("C4H8O2", "C4H8O2", 1, "ethyl acetate: one C=O, common practice"),
    DouCase("C5H5N", "C5H5N", 4, "pyridine, common practice"),
    DouCase("C10H8", "C10H8", 7, "naphthalene, common practice"),
    DouCase("C2H3N", "C2H3N", 2, "acetonitrile C≡N, common practice"),
    DouCase("C2H6O", "C2H6O", 0, "ethanol, common practice"),
    DouCase("C6H12", "C6H12", 1, "cyclohexane or a hexene, common practice"),
    DouCase("C6H5Cl", "C6H5Cl", 4, "chlorobenzene: halogen counts as H, common practice"),
    DouCase("CHCl3", "CHCl3", 0, "chloroform, common practice"),
    DouCase("C2HF3O2", "C2HF3O2", 1, "trifluoroacetic acid, common practice"),
    DouCase("C3H9N", "C3H9N", 0, "trimethylamine, common practice"),
    DouCase("C3H9P", "C3H9P", 0, "trimethylphosphine: P counts like N, common practice"),
    DouCase("C4H12Si", "C4H12Si", 0, "tetramethylsilane: Si counts like C, common practice"),
    DouCase("C4H4S", "C4H4S", 3, "thiophene: S adds nothing, common practice"),
    DouCase("C6H4BrI", "C6H4BrI", 4, "bromoiodobenzene, common practice"),
    DouCase("C7H14O2", "C7H14O2", 1, "isobutyl propanoate, common practice"),
]


@pytest.mark.parametrize("case", DOU_CASES, ids=lambda c: c.text)
def test_dou_worked_values(case: DouCase) -> None:
    f = parse_formula(case.text)
    assert f.hill == case.hill
    assert f.dou == case.dou


@pytest.mark.parametrize(
    "text",
    ["C9H10O2", "H10C9O2", "O2 H10 C9", " C9 H10 O2 ", "C9H10O1O", "C4H4O2C5H6"],
)
def test_any_order_and_spaces(text: str) -> None:
    # Element counts add up whatever the order (common practice).
    assert parse_formula(text).as_dict() == {"C": 9, "H": 10, "O": 2}


def test_condensed_formula_adds_repeats() -> None:
    # CH3COOCH2CH3 is ethyl acetate, C4H8O2 (common practice).
    assert parse_formula("CH3COOCH2CH3").hill == "C4H8O2"


def test_every_element_and_hill_order() -> None:
    f = parse_formula("I Br Cl F Si P S N O H20 C10")
    assert [el for el, _ in f.counts] == ["C", "H", "Br", "Cl", "F", "I", "N", "O", "P", "S", "Si"]
    assert f.heavy_atoms == 19


class BadCase(NamedTuple):
    text: str
    match: str


BAD = [
    BadCase("C9H10O2.5", r"'\.5' at position 8 is not an element count"),
    BadCase("Xx3", r"unknown element 'Xx' at position 1"),
    BadCase("C6H7", r"half-integer .*not a neutral closed-shell molecule"),
    BadCase("C2H8", r"negative degree of unsaturation \(-1\).*neutral closed-shell"),
    BadCase("C6H15Cl", r"negative"),
    BadCase("C5H4N", r"half-integer"),
    BadCase("", r"empty"),
    BadCase("   ", r"empty"),
    BadCase("c9h10o2", r"'c9h10o2' at position 1 is not an element symbol .*capital"),
    BadCase("C9H10O2+", r"'\+' at position 8: charged"),
    BadCase("(CH3)3COH", r"'\(' at position 1"),
    BadCase("9C", r"count '9' at position 1 does not follow an element"),
    BadCase("H2O", r"no carbon"),
    BadCase("C31H64", rf"31 heavy .*at most {MAX_HEAVY_ATOMS}"),
    BadCase("C99999999999H2", r"count '99999999999' at position 2 is far too large"),
    BadCase("C6H6D", r"unknown element 'D' at position 5"),
    BadCase("C6 H6 Q", r"unknown element 'Q' at position 7"),
]


@pytest.mark.parametrize("case", BAD, ids=lambda c: c.text or "empty")
def test_bad_formulas_name_token_and_position(case: BadCase) -> None:
    with pytest.raises(InputError, match=case.match):
        parse_formula(case.text)


def test_limit_is_stated_and_30_atoms_pass() -> None:
    assert MAX_HEAVY_ATOMS == 30
    assert parse_formula("C30H62").heavy_atoms == 30  # triacontane, DoU 0 (common practice)


def test_error_message_is_one_line() -> None:
    with pytest.raises(InputError) as info:
        parse_formula("C2H8")
    assert "\n" not in str(info.value)
