"""13C lists with carbon counts and DEPT labels."""

from __future__ import annotations

import pytest

from elucidate.errors import InputError
from elucidate.parse import parse_c13
from elucidate.parse.peaks import read_c13_text


def triples(signals) -> list[tuple]:
    return [(s.shift, s.carbons, s.attached_h) for s in signals]


def test_plain_list_sorted() -> None:
    # Ethyl acetate in CDCl3: 171.4, 60.5, 21.0, 14.2 (Gottlieb et al. 1997; from memory).
    signals, warnings = parse_c13("21.0, 171.4, 14.2, 60.5")
    assert triples(signals) == [(171.4, 1, None), (60.5, 1, None), (21.0, 1, None), (14.2, 1, None)]
    assert warnings == []


def test_header_and_dept_labels() -> None:
    peaks = read_c13_text("13C NMR (101 MHz, CDCl3) δ 171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3).")
    assert peaks.solvent == "CDCl3"
    assert triples(peaks.signals) == [(171.4, 1, 0), (60.5, 1, 2), (21.0, 1, 3), (14.2, 1, 3)]


@pytest.mark.parametrize(
    "text, expected",
    [
        # Benzyl acetate aromatic carbons, typical literature values (from memory).
        ("128.6 (2C)", (128.6, 2, None)),
        ("128.6 (2 C)", (128.6, 2, None)),
        ("128.6 (2C, CH)", (128.6, 2, 1)),
        ("128.6 (CH, 2C)", (128.6, 2, 1)),
        ("128.6 (2 × CH)", (128.6, 2, 1)),
        ("128.6 (2xCH)", (128.6, 2, 1)),
        ("136.0 (Cq)", (136.0, 1, 0)),
        ("136.0 (quaternary)", (136.0, 1, 0)),
        ("66.3 (t)", (66.3, 1, 2)),  # off-resonance letters: t = CH2 (common practice)
        ("21.0 (q)", (21.0, 1, 3)),
        ("170.9 (C=O)", (170.9, 1, None)),  # an assignment, not a DEPT label
        # DEPT/APT label forms (common practice)
        ("21.0 (CH₃)", (21.0, 1, 3)),
        ("66.3 (CH₂)", (66.3, 1, 2)),
        ("136.0 (quat)", (136.0, 1, 0)),
        ("136.0 (quat.)", (136.0, 1, 0)),
        ("136.0 (C-q)", (136.0, 1, 0)),
        ("136.0 (quaternary C)", (136.0, 1, 0)),
        ("136.0 (Cquat)", (136.0, 1, 0)),
        ("136.0 (C)", (136.0, 1, 0)),
        ("128.6 (2 × CH₃)", (128.6, 2, 3)),
        ("128.6 (2CH)", (128.6, 2, 1)),
        ("128.6 (2 CH)", (128.6, 2, 1)),
        ("128.6 (CH × 2)", (128.6, 2, 1)),
        ("128.6 (CH3 x 2)", (128.6, 2, 3)),
        ("128.6 (x2, CH)", (128.6, 2, 1)),
        ("136.0 (2 × Cq)", (136.0, 2, 0)),
        ("128.6 (2 x C)", (128.6, 2, 0)),
        ("128.6 (d)", (128.6, 1, 1)),  # off-resonance d = CH
        ("170.9 (s)", (170.9, 1, 0)),  # off-resonance s = C
        ("170.9 (s, C=O)", (170.9, 1, 0)),
    ],
)
def test_counts_and_labels(text: str, expected: tuple) -> None:
    (s,), _ = parse_c13(text)
    assert (s.shift, s.carbons, s.attached_h) == expected


def test_letter_with_j_is_a_coupling_not_dept() -> None:
    # CF3 carbon of trifluorotoluene: q, 1J(C,F) ≈ 272 Hz (typical, from memory).
    (s,), _ = parse_c13("124.3 (q, J = 272 Hz)")
    assert s.attached_h is None


def test_decoupled_header_and_trailing_other_data() -> None:
    peaks = read_c13_text("13C{1H} NMR (101 MHz, CDCl3) δ 171.1, 60.4; IR (neat) 1740 cm-1")
    assert peaks.solvent == "CDCl3" and [s.shift for s in peaks.signals] == [171.1, 60.4]
    assert "'IR (neat)" in peaks.warnings[0]
    peaks = read_c13_text("δC (101 MHz; CDCl3) 171.1, 60.4")
    assert peaks.solvent == "CDCl3" and len(peaks.signals) == 2


def test_space_and_semicolon_separated() -> None:
    signals, _ = parse_c13("197.8; 143.9; 26.5 21.6")
    assert [s.shift for s in signals] == [197.8, 143.9, 26.5, 21.6]


def test_letters_are_not_attached_h_in_a_list_with_couplings() -> None:
    # Trifluorotoluene-type list: CF3 q (J ≈ 272 Hz), C-3 q (J ≈ 4 Hz) (typical, from memory);
    # there a bare "d" or "q" may be a C–F coupling whose J was left out.
    signals, warnings = parse_c13("131.9 (d), 128.8, 125.3 (q, J = 3.8 Hz), 124.3 (q, J = 272 Hz), 21.4 (q)")
    assert [s.attached_h for s in signals] == [None, None, None, None, None]
    assert any("were not read as attached-H counts" in w and "131.9 (d)" in w for w in warnings)
    # the same letters in a list without J are attached-H counts
    signals, warnings = parse_c13("131.9 (d), 21.4 (q)")
    assert [s.attached_h for s in signals] == [1, 3] and warnings == []


def test_dept_label_beats_a_disagreeing_letter() -> None:
    (s,), warnings = parse_c13("128.5 (s, CH)")
    assert s.attached_h == 1
    assert any("'s' does not match the carbon type 'CH'" in w for w in warnings)


@pytest.mark.parametrize(
    "text, match",
    [
        ("128.5 (CH, CH3)", r"carbon type 'CH3' at position 12 contradicts 'CH'"),
        ("128.5 (2C, 3C)", r"carbon count '3C' at position 12 contradicts '2C'"),
        ("77.16 (CDCl3)", r"every signal is annotated as solvent"),
    ],
)
def test_contradictory_labels_are_refused(text: str, match: str) -> None:
    with pytest.raises(InputError, match=match):
        parse_c13(text)


@pytest.mark.parametrize(
    "text, match",
    [
        ("", r"empty"),
        ("171.1, abc", r"'abc' at position 8 is not a chemical shift"),
        ("171.1 (2C", r"never closed"),
        ("300.5", r"outside the 13C range"),
        ("128.1 (99C)", r"carbon count '99C'"),
        ("128–130", r"is a range"),
        ("1H NMR (400 MHz) δ 7.2 (s, 1H)", r"header says 1H"),
    ],
)
def test_bad_c13(text: str, match: str) -> None:
    with pytest.raises(InputError, match=match):
        parse_c13(text)
