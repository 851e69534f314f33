"""JCAMP-DX peak tables (McDonald & Wilks, Appl. Spectrosc. 1988, 42, 151)."""

from __future__ import annotations

import pytest

from elucidate.errors import InputError
from elucidate.parse import parse_formula, parse_h1, read_peak_text
from elucidate.parse.jcamp import looks_like_jcamp, norm_label, read_jcamp

C7H14O2 = parse_formula("C7H14O2")

# Isobutyl propanoate (DESIGN.md worked example; typical literature values, from memory).
XYM = """##TITLE=isobutyl propanoate peaks
##JCAMP-DX=5.01 $$ written by hand for the test
##DATA TYPE=NMR PEAK TABLE
##.OBSERVE FREQUENCY=400.13
##.OBSERVE NUCLEUS=^1H
##.SOLVENT NAME=CDCl3
##XUNITS=PPM
##PEAK TABLE=(XYM..XYM)
3.87, 2, D
2.33, 2, Q
1.92, 1, M
1.14, 3, T
0.93, 6, D
##END=
"""
TEXT = "3.87 (d, 2H), 2.33 (q, 2H), 1.92 (m, 1H), 1.14 (t, 3H), 0.93 (d, 6H)"


def norm(signals) -> list[tuple]:
    return [(round(s.shift, 4), s.multiplicity, s.h_count) for s in signals]


def test_xym_matches_text() -> None:
    peaks = read_peak_text(XYM, "ibp.jdx", "1H", C7H14O2)
    text_signals, _ = parse_h1(TEXT, formula=C7H14O2)
    assert norm(peaks.signals) == norm(text_signals)
    assert peaks.field_mhz == pytest.approx(400.13)
    assert peaks.solvent == "CDCl3"
    assert peaks.warnings == ()


def test_xy_groups_on_one_line_relative_and_label_variants() -> None:
    text = (
        "##title= same peaks, other spelling\n"
        "##observe_frequency=400\n"  # not a '.'-label: ignored
        "##.Observe-Frequency= 400.13\n"
        "##Peak Table= (XY..XY)\n"
        "3.87,1.00 2.33,1.00; 1.92,0.50\n"
        "1.14, 1.50  0.93, 3.00 $$ relative integrals\n"
        "##END=\n"
    )
    peaks = read_peak_text(text, "ibp.dx", "1H", C7H14O2)
    assert [s.h_count for s in peaks.signals] == [2.0, 2.0, 1.0, 3.0, 6.0]
    assert [s.multiplicity for s in peaks.signals] == ["m"] * 5  # XY has no multiplicity
    assert any("scaled" in w for w in peaks.warnings)


def test_xyw_and_hz_units_and_factors() -> None:
    # X in Hz at 400 MHz: 1548 Hz = 3.87 ppm; XFACTOR 0.5 doubles the written values' scale.
    text = (
        "##TITLE=hz\n##.OBSERVE FREQUENCY=400\n##XUNITS=HZ\n##XFACTOR=0.5\n"
        "##PEAK TABLE=(XYW..XYW)\n3096, 2, 1.2\n1864, 2, 1.0\n"
    )
    peaks = read_peak_text(text, "hz.jdx", "1H")
    assert [s.shift for s in peaks.signals] == [3.87, 2.33]


def test_peak_assignments_xyma() -> None:
    text = (
        "##TITLE=assigned\n##PEAK ASSIGNMENTS=(XYMA)\n"
        "(3.87, 2, D, <OCH2, next to CH>)\n(0.93, 6, D, <(CH3)2>)\n##END=\n"
    )
    peaks = read_peak_text(text, "a.jdx", "1H")
    assert [(s.shift, s.assignment) for s in peaks.signals] == [(3.87, "OCH2, next to CH"), (0.93, "(CH3)2")]


def test_linked_file_with_1h_and_13c_blocks() -> None:
    # Ethyl acetate 1H and 13C (Gottlieb et al. 1997, from memory) in one linked file.
    text = (
        "##TITLE=ethyl acetate\n##BLOCKS=2\n"
        "##TITLE=1H\n##.OBSERVE NUCLEUS=^1H\n##PEAK TABLE=(XYM..XYM)\n4.12,2,Q\n2.05,3,S\n1.26,3,T\n##END=\n"
        "##TITLE=13C\n##.OBSERVE NUCLEUS=^13C\n##PEAK TABLE=(XY..XY)\n171.1,1\n60.4,1\n21.0,1\n14.2,1\n##END=\n"
        "##END=\n"
    )
    h1 = read_peak_text(text, "ea.jdx", "1H", parse_formula("C4H8O2"))
    c13 = read_peak_text(text, "ea.jdx", "13C")
    assert [(s.shift, s.multiplicity, s.h_count) for s in h1.signals] == [
        (4.12, "q", 2.0), (2.05, "s", 3.0), (1.26, "t", 3.0)
    ]
    assert [s.shift for s in c13.signals] == [171.1, 60.4, 21.0, 14.2]


def test_line_list_of_a_multiplet_is_flagged() -> None:
    # The four lines of an ethyl-ester OCH2 quartet, J 7.1 Hz at 400 MHz (from memory):
    # 4.148/4.130/4.112/4.094 ppm — each row would be read as a signal, so warn.
    text = (
        "##TITLE=lines\n##.OBSERVE FREQUENCY=400\n##PEAK TABLE=(XY..XY)\n"
        "4.148, 1\n4.130, 3\n4.112, 3\n4.094, 1\n2.05, 6\n"
    )
    peaks = read_peak_text(text, "lines.jdx", "1H")
    assert len(peaks.signals) == 5
    assert any("4.148/4.130" in w and "one multiplet" in w for w in peaks.warnings)
    assert read_peak_text(XYM, "ibp.jdx", "1H", C7H14O2).warnings == ()


def test_13c_multiplicities_are_attached_h() -> None:
    # Off-resonance S/D/T/Q = 0/1/2/3 attached H (common practice).
    text = "##TITLE=c\n##.OBSERVE NUCLEUS=^13C\n##PEAK TABLE=(XYM..XYM)\n174.6,10,S\n70.4,30,T\n19.1,60,Q\n"
    peaks = read_peak_text(text, "c.jdx", "13C")
    assert [(s.shift, s.attached_h) for s in peaks.signals] == [(174.6, 0), (70.4, 2), (19.1, 3)]


def test_label_normalisation_and_detection() -> None:
    assert norm_label(".Solvent Name") == ".SOLVENTNAME"
    assert norm_label("PEAK-TABLE") == norm_label("peak_table") == norm_label("Peak/Table") == "PEAKTABLE"
    assert looks_like_jcamp("\n##TITLE=x\n")
    assert not looks_like_jcamp("shift,nH\n")


def test_first_block_with_a_peak_table_is_used() -> None:
    text = "##TITLE=link\n##BLOCKS=2\n##TITLE=spectrum\n##XYDATA=(X++(Y..Y))\n1 2 3\n##END=\n" + XYM
    doc = read_jcamp(text, "two.jdx")
    assert len(doc.peaks) == 5


@pytest.mark.parametrize(
    "text, match",
    [
        ("##TITLE=x\n##XYDATA=(X++(Y..Y))\n100 1 2 3\n##END=\n", r"full spectrum"),
        ("##TITLE=x\n##END=\n", r"no ##PEAK TABLE="),
        ("##TITLE=x\n##PEAK TABLE=(XYM..XYM)\n3.87, 2\n", r"part-way through a peak"),
        ("##TITLE=x\n##PEAK TABLE=(XY..XY)\nabc, 2\n", r"shift 'abc' at x.jdx line 3 is not a number"),
        ("##TITLE=x\n##PEAK TABLE=(XYM..XYM)\n3.87, 2, Z\n", r"line 3: 'Z' is not a multiplicity"),
        ("##TITLE=x\n##XUNITS=HZ\n##PEAK TABLE=(XY..XY)\n1548, 2\n", r"no ##.OBSERVE FREQUENCY"),
        ("##TITLE=x\n##PEAK TABLE=(XQ..XQ)\n1, 2\n", r"not understood"),
        ("##TITLE=x\n##PEAK TABLE=1, 2\n", r"does not name the columns"),
        ("##TITLE=x\n##.OBSERVE NUCLEUS=^13C\n##PEAK TABLE=(XY..XY)\n77.2, 1\n", r"NUCLEUS is 13C"),
        ("##TITLE=x\n##PEAK TABLE=(XY..XY)\n##END=\n", r"empty"),
        ("3.87, 2\n##TITLE=x\n", r"before any ##LABEL= record"),
        ("##TITLE x\n", r"has no '='"),
        ("##TITLE=x\n##DATA TYPE=INFRARED PEAK TABLE\n##PEAK TABLE=(XY..XY)\n1700, 1\n", r"outside the 1H range"),
        ("##TITLE=x\n##DATA TYPE=MASS SPECTRUM\n##PEAK TABLE=(XY..XY)\n43, 100\n", r"not NMR data"),
    ],
)
def test_bad_jcamp(text: str, match: str) -> None:
    with pytest.raises(InputError, match=match):
        read_peak_text(text, "x.jdx", "1H")
