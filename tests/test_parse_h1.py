"""1H peak lists written as text, in the variants chemists use."""

from __future__ import annotations

from typing import NamedTuple

import pytest

from elucidate.errors import InputError
from elucidate.model import H1Signal
from elucidate.parse import parse_formula, parse_h1
from elucidate.parse.peaks import read_h1_text


def norm(signals: tuple[H1Signal, ...]) -> list[tuple]:
    """Everything but the source text, for comparing input variants."""
    return [
        (s.shift, s.shift_low, s.shift_high, s.multiplicity, s.couplings, s.h_count, s.broad, s.apparent)
        for s in signals
    ]


# Ethyl acetate in CDCl3: 4.12 (q, 7.1), 2.05 (s), 1.26 (t, 7.1)
# (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512; from memory).
ETHYL_ACETATE = [
    (4.12, 4.12, 4.12, "q", (7.1,), 2.0, False, False),
    (2.05, 2.05, 2.05, "s", (), 3.0, False, False),
    (1.26, 1.26, 1.26, "t", (7.1,), 3.0, False, False),
]
ETHYL_ACETATE_VARIANTS = [
    "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
    "1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H).",
    "4.12 (2H, q, J 7.1 Hz), 2.05 (3H, s), 1.26 (3H, t, J 7.1 Hz)",
    "4.12 (2H, q, J 7.1), 2.05 (3H, s), 1.26 (3H, t, J 7.1)",
    "δ 4.12 (q, J=7.1Hz, 2H); 2.05 (s, 3H); 1.26 (t, J=7.1Hz, 3H)",
    "2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H), 4.12 (q, J = 7.1 Hz, 2H)",
    "4.12 (q, 3J = 7.1 Hz, 2H, OCH2), 2.05 (s, 3H, COCH3), 1.26 (t, J = 7.1 Hz, 3H, CH2CH3)",
    "δ = 4.12 ppm (quartet, J = 7.1 Hz, 2 H), 2.05 ppm (singlet, 3 H), 1.26 ppm (triplet, J = 7.1 Hz, 3 H)",
]


@pytest.mark.parametrize("text", ETHYL_ACETATE_VARIANTS)
def test_ethyl_acetate_variants_give_the_same_signals(text: str) -> None:
    signals, warnings = parse_h1(text, formula=parse_formula("C4H8O2"))
    assert norm(signals) == ETHYL_ACETATE
    assert warnings == []


# Benzyl acetate, the example (values typical of the literature, from memory).
BENZYL_ACETATE = [
    (7.32, 7.28, 7.36, "m", (), 5.0, False, False),
    (5.11, 5.11, 5.11, "s", (), 2.0, False, False),
    (2.09, 2.09, 2.09, "s", (), 3.0, False, False),
]


@pytest.mark.parametrize(
    "text",
    [
        "7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)",
        "7.28–7.36 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)",
        "7.36-7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)",
        "7.28 - 7.36 (5H, m), 5.11 (2H, s), 2.09 (3H, s)",
        "7.36 – 7.28 (m, 5H, Ph); 5.11 (s, 2H, CH2); 2.09 (s, 3H, CH3).",
        "7.36—7.28 (multiplet, 5H), 5.11 (singlet, 2H), 2.09 (singlet, 3H)",
    ],
)
def test_ranges_either_order_hyphen_or_dash(text: str) -> None:
    signals, _ = parse_h1(text, formula=parse_formula("C9H10O2"))
    assert norm(signals) == BENZYL_ACETATE


def test_header_gives_field_and_solvent() -> None:
    peaks = read_h1_text("1H NMR (400 MHz, CDCl3) δ 7.26 (s, 1H)")
    assert (peaks.field_mhz, peaks.solvent) == (400.0, "CDCl3")
    peaks = read_h1_text("¹H NMR (CDCl3, 500 MHz): δ 7.26 (s, 1H)")
    assert (peaks.field_mhz, peaks.solvent) == (500.0, "CDCl3")
    peaks = read_h1_text("1H-NMR (DMSO-d6, 300 MHz, 298 K) δ (ppm): 7.26 (s, 1H)")
    assert (peaks.field_mhz, peaks.solvent) == (300.0, "DMSO-d6")
    peaks = read_h1_text("δH (400 MHz; CDCl3) 7.30 (5 H, m, Ph), 4.50 (2 H, s)")
    assert (peaks.field_mhz, peaks.solvent, len(peaks.signals)) == (400.0, "CDCl3", 2)
    peaks = read_h1_text("δ (ppm) 7.26 (s, 1H)")
    assert (peaks.field_mhz, peaks.solvent) == (None, None)
    peaks = read_h1_text("δ 7.26 (s, 1H)")
    assert (peaks.field_mhz, peaks.solvent) == (None, None)


class MultCase(NamedTuple):
    written: str
    multiplicity: str
    broad: bool
    apparent: bool


# Multiplicity abbreviations: journal author guidelines (common practice).
MULTIPLICITIES = [
    MultCase("s", "s", False, False),
    MultCase("d", "d", False, False),
    MultCase("t", "t", False, False),
    MultCase("q", "q", False, False),
    MultCase("quint", "quint", False, False),
    MultCase("p", "quint", False, False),
    MultCase("sext", "sext", False, False),
    MultCase("hex", "sext", False, False),
    MultCase("sept", "sept", False, False),
    MultCase("hept", "sept", False, False),
    MultCase("m", "m", False, False),
    MultCase("br", "s", True, False),
    MultCase("br s", "s", True, False),
    MultCase("bs", "s", True, False),
    MultCase("brs", "s", True, False),
    MultCase("br. s", "s", True, False),
    MultCase("br d", "d", True, False),
    MultCase("app t", "t", False, True),
    MultCase("apparent quintet", "quint", False, True),
    MultCase("dd", "dd", False, False),
    MultCase("dt", "dt", False, False),
    MultCase("td", "td", False, False),
    MultCase("ddd", "ddd", False, False),
    MultCase("dq", "dq", False, False),
    MultCase("tt", "tt", False, False),
    MultCase("ddt", "ddt", False, False),
    MultCase("dtd", "dtd", False, False),
    MultCase("tdd", "tdd", False, False),
    MultCase("doublet of doublets", "dd", False, False),
    MultCase("triplet of doublets", "td", False, False),
]


@pytest.mark.parametrize("case", MULTIPLICITIES, ids=lambda c: c.written)
def test_multiplicity_normalised(case: MultCase) -> None:
    signals, _ = parse_h1(f"3.50 ({case.written}, 2H)")
    s = signals[0]
    assert (s.multiplicity, s.broad, s.apparent) == (case.multiplicity, case.broad, case.apparent)


def test_br_before_integral_and_separately() -> None:
    # Benzyl alcohol OH, typically a broad singlet near 1.9 in CDCl3 (from memory).
    for text in ("1.92 (br s, 1H, OH)", "1.92 (1H, br, OH)", "1.92 (s, br, 1H)", "1.92 (bs, 1H)"):
        (s,), _ = parse_h1(text)
        assert (s.multiplicity, s.broad, s.assignment) == ("s", True, "OH" if "OH" in text else None)


def test_multi_j_largest_first_and_variants() -> None:
    # Styrene vinyl H: dd, J = 17.6, 10.9 Hz (typical literature values, from memory).
    for text in (
        "6.72 (dd, J = 17.6, 10.9 Hz, 1H)",
        "6.72 (dd, J = 10.9, 17.6 Hz, 1H)",
        "6.72 (1H, dd, J 17.6, 10.9 Hz)",
        "6.72 (dd, J = 17.6 and 10.9 Hz, 1H)",
        "6.72 (dd, J = 17.6/10.9 Hz, 1H)",
        "6.72 (dd, J1 = 17.6 Hz, J2 = 10.9 Hz, 1H)",
        "6.72 (dd, J = 17.6 Hz, 10.9 Hz, 1H)",
    ):
        (s,), _ = parse_h1(text)
        assert (s.multiplicity, s.couplings, s.h_count) == ("dd", (17.6, 10.9), 1.0), text


def test_assignment_after_integral() -> None:
    (s,), _ = parse_h1("3.87 (d, J = 6.7 Hz, 2H, OCH2CH)")
    assert s.assignment == "OCH2CH"
    (s,), _ = parse_h1("3.87 (2H, d, J 6.7 Hz, H-1', OCH2)")
    assert s.assignment == "H-1', OCH2"


def test_sorted_high_to_low_keeping_ties_in_order() -> None:
    signals, _ = parse_h1("0.93 (d, 6H), 3.87 (d, 2H), 1.92 (m, 1H), 2.33 (q, 2H), 1.14 (t, 3H)")
    assert [s.shift for s in signals] == [3.87, 2.33, 1.92, 1.14, 0.93]


def test_relative_integrals_scaled_with_warning() -> None:
    # Isobutyl propanoate C7H14O2 (DESIGN.md worked example, from memory), integrals
    # normalised to the first signal = 1.00: 1 : 1 : 0.5 : 1.5 : 3.
    text = "3.87 (d, 1.00), 2.33 (q, 1.01), 1.92 (m, 0.49), 1.14 (t, 1.52), 0.93 (d, 3.03)"
    signals, warnings = parse_h1(text, formula=parse_formula("C7H14O2"))
    assert [s.h_count for s in signals] == [2.0, 2.0, 1.0, 3.0, 6.0]
    assert [s.integral for s in signals] == [1.00, 1.01, 0.49, 1.52, 3.03]
    assert len(warnings) == 1 and "scaled" in warnings[0]


def test_relative_integrals_with_unseen_oh() -> None:
    # Benzyl alcohol C7H8O with the OH not observed: 5 : 2 aromatic : CH2 (from memory).
    signals, warnings = parse_h1("7.35 (m, 2.50), 4.67 (s, 1.00)", formula=parse_formula("C7H8O"))
    assert [s.h_count for s in signals] == [5.0, 2.0]
    assert "not seen" in warnings[0] and "exchangeable" in warnings[0]


def test_relative_integrals_that_fit_no_whole_numbers() -> None:
    signals, warnings = parse_h1("7.3 (m, 1.00), 2.1 (s, 1.37)", formula=parse_formula("C9H10O2"))
    assert sum(s.h_count for s in signals) == pytest.approx(10, abs=0.02)
    assert "do not scale to whole numbers" in warnings[0]


def test_whole_h_counts_not_scaled_but_mismatch_warned() -> None:
    # Benzyl alcohol without the OH signal (from memory): 7 of 8 H.
    signals, warnings = parse_h1("7.35 (m, 5H), 4.67 (s, 2H)", formula=parse_formula("C7H8O"))
    assert [s.h_count for s in signals] == [5.0, 2.0]
    assert "add up to 7 H but C7H8O has 8 H" in warnings[0]


def test_no_multiplicity_read_as_m_with_warning() -> None:
    (s,), warnings = parse_h1("7.30 (5H)")
    assert s.multiplicity == "m"
    assert "no multiplicity" in warnings[0]


def test_diethyl_ether_published_values() -> None:
    # Diethyl ether in CDCl3: 3.48 (q, J 7), 1.21 (t, J 7) (Gottlieb, Kotlyar, Nudelman,
    # J. Org. Chem. 1997, 62, 7512).
    signals, warnings = parse_h1("3.48 (q, J = 7.0 Hz, 4H), 1.21 (t, J = 7.0 Hz, 6H)", formula=parse_formula("C4H10O"))
    assert norm(signals) == [
        (3.48, 3.48, 3.48, "q", (7.0,), 4.0, False, False),
        (1.21, 1.21, 1.21, "t", (7.0,), 6.0, False, False),
    ]
    assert warnings == []


class BadH1(NamedTuple):
    text: str
    match: str


BAD = [
    BadH1("", r"empty"),
    BadH1("1H NMR (400 MHz, CDCl3) δ", r"empty"),
    BadH1("7.2 (q, 2H", r"'\(' at position 5 is never closed"),
    BadH1("7.2 q, 2H)", r"unmatched '\)' at position 10"),
    BadH1("abc", r"'abc' at position 1 is not a chemical shift"),
    BadH1("7.26 (s, 1H), abc (d, 2H)", r"'abc' at position 15 is not a chemical shift"),
    BadH1("7.2 (s, 1e12H)", r"integral '1e12H' at position 9 is not a plausible H count"),
    BadH1("7.2 (s, 0H)", r"integral '0H' at position 9"),
    BadH1("7.2 (xx, 2H)", r"'xx' at position 6 is not a multiplicity"),
    BadH1("7.2 (d, J = abc Hz, 2H)", r"'abc' at position 13 of the 1H list is not a coupling constant"),
    BadH1("7.2 (d, J = 500 Hz, 2H)", r"J '500'"),
    BadH1("7.2 (d, J = 8.0 Hz)", r"has no H count"),
    BadH1("7.2", r"has no details"),
    BadH1("72.5 (s, 3H)", r"outside the 1H range"),
    BadH1("7.2 (s, 2H) junk", r"unexpected 'junk' at position 13"),
    BadH1("7.2 (s, 2H, 3H)", r"second H count"),
    BadH1("13C NMR (101 MHz, CDCl3) δ 171.1", r"header says 13C"),
    BadH1("7.2–abc (m, 2H)", r"'abc' at position 5 is not the other end"),
]


@pytest.mark.parametrize("case", BAD, ids=lambda c: c.text or "empty")
def test_bad_h1_names_token_and_position(case: BadH1) -> None:
    with pytest.raises(InputError, match=case.match) as info:
        parse_h1(case.text)
    assert "\n" not in str(info.value)


def test_pasted_paragraph_stops_at_other_data() -> None:
    # A whole characterisation paragraph pasted in: the 1H part is read, the rest noted.
    text = (
        "1H NMR (400 MHz, CDCl3) δ 4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H); "
        "13C NMR (101 MHz, CDCl3) δ 171.1, 60.4, 21.0, 14.2; HRMS (EI) m/z 88.0524"
    )
    signals, warnings = parse_h1(text, formula=parse_formula("C4H8O2"))
    assert norm(signals) == ETHYL_ACETATE
    assert len(warnings) == 1 and "'13C NMR" in warnings[0] and "not read" in warnings[0]


def test_approximate_shift_prefixes() -> None:
    for text in ("~1.60 (br s, 1H)", "ca. 1.60 (br s, 1H)", "≈1.60 (br s, 1H)"):
        (s,), _ = parse_h1(text)
        assert (s.shift, s.multiplicity, s.broad) == (1.60, "s", True)


def test_last_bare_number_after_a_full_j_list_is_the_integral() -> None:
    (s,), _ = parse_h1("7.20 (d, J = 8.0, 0.98)")
    assert (s.couplings, s.integral) == ((8.0,), 0.98)
    (s,), _ = parse_h1("1.26 (t, J = 7.1, 3)")
    assert (s.couplings, s.integral) == ((7.1,), 3.0)
    # a dd with only one J so far: the number is its second J, and the H count is missing
    with pytest.raises(InputError, match="has no H count"):
        parse_h1("7.20 (dd, J = 8.0, 2.0)")
