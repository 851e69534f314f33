"""Signals annotated as the solvent, water or an impurity are set aside, not counted.

Positions of residual solvent, water and impurity signals: Gottlieb,
Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512 (CHCl3 7.26, CH2Cl2 5.30
and the CDCl3 carbon 77.16 are check values of the project's reference list;
water 1.56, acetone 2.17, silicone grease 0.07 in CDCl3 and DMSO-d5 2.50 /
13C 39.52 are recalled from memory).  The compound's own signals are benzyl
acetate and ethyl acetate in CDCl3 as in tests/test_parse_h1.py (typical
literature values, from memory).
"""

from __future__ import annotations

from pathlib import Path
from typing import NamedTuple

import pytest

from elucidate.errors import InputError
from elucidate.parse import load_problem, parse_c13, parse_formula, parse_h1, read_peak_text
from elucidate.parse.annotations import impurities, mentioned_substance, read_annotation
from elucidate.parse.solvents import solvents

BENZYL = "7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)"
BENZYL_SIGNALS = [(7.32, "m", 5.0), (5.11, "s", 2.0), (2.09, "s", 3.0)]
FORMULA = parse_formula("C9H10O2")


def shape(signals) -> list[tuple]:
    return [(s.shift, s.multiplicity, s.h_count) for s in signals]


class Form(NamedTuple):
    signal: str  # one annotated signal added to the benzyl acetate list
    reason: str  # what it is set aside as (solvent not stated)


FORMS = [
    Form("7.26 (CHCl3)", "the residual solvent signal"),
    Form("7.26 (s, CDCl3)", "the residual solvent signal"),
    Form("7.26 (CHCl₃)", "the residual solvent signal"),
    Form("7.26 (residual CHCl3)", "the residual solvent signal"),
    Form("7.26 (CHCl3 residual peak)", "the residual solvent signal"),
    Form("7.26 (solvent)", "the residual solvent signal"),
    Form("7.26 (s, solvent)", "the residual solvent signal"),
    Form("7.26 (residual solvent)", "the residual solvent signal"),
    Form("2.17 (s, acetone)", "an impurity signal (acetone)"),
    Form("1.56 (br s, H2O)", "the water signal"),
    Form("1.56 (br s, H₂O)", "the water signal"),
    Form("1.56 (br s, 1.6H, water)", "the water signal"),
    Form("2.50 (DMSO)", "the residual solvent signal"),  # at the DMSO-d5 position
    Form("2.50 (quint, DMSO-d5)", "the residual solvent signal"),
    Form("0.07 (s, grease)", "an impurity signal (grease)"),
    Form("0.07 (s, silicone grease)", "an impurity signal (silicone grease)"),
    Form("5.30 (s, CH2Cl2)", "an impurity signal (CH2Cl2)"),
    Form("3.49 (impurity)", "an impurity signal"),
    Form("3.49 (s, unknown impurity)", "an impurity signal"),
    Form("4.12 (q, J = 7.1 Hz, EtOAc)", "an impurity signal (EtOAc)"),
    Form("0.00 (s, TMS)", "the reference signal (TMS)"),
]


@pytest.mark.parametrize("form", FORMS, ids=[f.signal for f in FORMS])
def test_annotated_signal_is_set_aside(form: Form) -> None:
    signals, warnings = parse_h1(f"{BENZYL}, {form.signal}", formula=FORMULA)
    assert shape(signals) == BENZYL_SIGNALS
    expected = f"1H signal {form.signal} set aside as {form.reason}"
    assert any(w.startswith(expected) for w in warnings), warnings


def test_list_that_was_refused_now_reads_with_warnings() -> None:
    # Before: "'CHCl3' at position … is not a multiplicity, a J value or an H count".
    text = (
        "1H NMR (400 MHz, CDCl3) δ 7.36–7.28 (m, 5H), 7.26 (CHCl3), 5.11 (s, 2H), "
        "2.17 (s, acetone), 2.09 (s, 3H), 1.56 (br s, H2O), 0.07 (s, grease)"
    )
    problem = load_problem(formula="C9H10O2", h1=text)
    assert shape(problem.h1) == BENZYL_SIGNALS
    assert problem.h_total == 10  # nothing set aside is counted
    assert [(a.nucleus, a.shift, a.label, a.reason) for a in problem.set_aside] == [
        ("1H", 7.26, "CHCl3", "the residual solvent signal"),
        ("1H", 2.17, "acetone", "an impurity signal (acetone)"),
        ("1H", 1.56, "H2O", "the water signal"),
        ("1H", 0.07, "grease", "an impurity signal (grease)"),
    ]
    assert "1H signal 7.26 (CHCl3) set aside as the residual solvent signal" in problem.warnings[0]
    assert not any("integrals add up" in w for w in problem.warnings)


def test_nothing_given_is_lost() -> None:
    problem = load_problem(formula="C9H10O2", h1=f"{BENZYL}, 1.56 (br s, 2H, H2O)")
    (aside,) = problem.set_aside
    assert aside.text == "1.56 (br s, 2H, H2O)"
    doc = problem.to_json()
    assert doc["set_aside"][0]["text"] == "1.56 (br s, 2H, H2O)"
    assert doc["set_aside"][0]["reason"] == "the water signal"


def test_unannotated_signal_at_the_solvent_position_is_kept_and_flagged() -> None:
    # 7.26 without an annotation may be the compound's own aromatic H: never dropped.
    problem = load_problem(formula="C9H10O2", h1="7.36–7.28 (m, 4H), 7.26 (s, 1H), 5.11 (s, 2H), 2.09 (s, 3H)",
                           solvent="CDCl3")
    assert 7.26 in [s.shift for s in problem.h1]
    assert problem.set_aside == ()
    assert any("check it is not the solvent" in w for w in problem.warnings)


def test_solvent_named_beside_other_text_keeps_the_signal() -> None:
    signals, warnings = parse_h1("7.38–7.26 (m, 6H, ArH + CHCl3), 5.11 (s, 2H), 2.09 (s, 3H)")
    assert [s.h_count for s in signals] == [6.0, 2.0, 3.0]
    assert any("names CHCl3 beside other text: kept" in w for w in warnings)


@pytest.mark.parametrize(
    "solvent, signal, reason",
    [
        ("CDCl3", "7.26 (CHCl3)", "the residual solvent signal"),
        ("DMSO-d6", "8.32 (s, CHCl3)", "an impurity signal (CHCl3)"),  # chloroform in DMSO-d6
        ("acetone-d6", "2.05 (acetone)", "the residual solvent signal"),
        ("CDCl3", "2.17 (acetone)", "an impurity signal (acetone)"),
        ("DMSO-d6", "3.33 (br s, H2O)", "the water signal"),
        ("DMSO-d6", "7.26 (CDCl3)", "an impurity signal (CDCl3; the solvent is DMSO-d6)"),
        ("CD2Cl2", "5.32 (CHDCl2)", "the residual solvent signal"),
    ],
)
def test_reason_follows_the_stated_solvent(solvent: str, signal: str, reason: str) -> None:
    problem = load_problem(formula="C9H10O2", h1=f"{BENZYL}, {signal}", solvent=solvent)
    assert [a.reason for a in problem.set_aside] == [reason]


def test_annotation_far_from_where_the_substance_appears_is_queried() -> None:
    # acetone appears at 2.17 in CDCl3, not at 5.30 (Gottlieb et al. 1997, from memory)
    problem = load_problem(formula="C9H10O2", h1=f"{BENZYL}, 5.30 (s, acetone)", solvent="CDCl3")
    assert any("acetone is expected at 2.17 ppm in CDCl3; check the annotation" in w for w in problem.warnings)
    near = load_problem(formula="C9H10O2", h1=f"{BENZYL}, 2.17 (s, acetone)", solvent="CDCl3")
    assert not any("check the annotation" in w for w in near.warnings)


def test_a_list_of_only_solvent_signals_is_refused() -> None:
    with pytest.raises(InputError, match=r"every signal is annotated as solvent.*'7.26 \(CHCl3\)'"):
        parse_h1("7.26 (CHCl3), 1.56 (br s, H2O)")


@pytest.mark.parametrize(
    "text, match",
    [
        ("7.26 (CHCl3, xyz), 2.09 (s, 3H)", r"'xyz' at position 14 is not a multiplicity"),
        ("25.0 (CHCl3), 2.09 (s, 3H)", r"1H shift '25' at position 1 is outside the 1H range"),
        ("7.26 (CHCl3, 2.09 (s, 3H)", r"never closed"),
    ],
)
def test_bad_annotated_input_still_fails_with_one_line(text: str, match: str) -> None:
    with pytest.raises(InputError, match=match) as err:
        parse_h1(text)
    assert "\n" not in str(err.value)


# ------------------------------------------------------------------- 13C

# Benzyl acetate 13C in CDCl3 (typical literature values, from memory) with the solvent line.
@pytest.mark.parametrize(
    "line, reason",
    [
        ("77.16 (CDCl3)", "the solvent signal"),
        ("77.0 (t, CDCl3)", "the solvent signal"),
        ("77.16 (solvent)", "the solvent signal"),
        ("77.36 (CHCl3)", "the solvent signal"),
        ("29.7 (grease)", "an impurity signal (grease)"),
    ],
)
def test_c13_solvent_line_is_set_aside(line: str, reason: str) -> None:
    text = f"13C NMR (101 MHz, CDCl3) δ 170.9, 136.0, 128.6 (2C), 128.3, 128.2 (2C), {line}, 66.3, 21.0"
    problem = load_problem(formula="C9H10O2", h1=BENZYL, c13=text)
    assert [s.shift for s in problem.c13] == [170.9, 136.0, 128.6, 128.3, 128.2, 66.3, 21.0]
    assert sum(s.carbons for s in problem.c13) == 9
    assert [(a.nucleus, a.reason) for a in problem.set_aside] == [("13C", reason)]
    assert any(w.startswith(f"13C signal {line} set aside as {reason}") for w in problem.warnings)


def test_c13_without_annotation_is_still_counted() -> None:
    signals, _ = parse_c13("170.9, 77.16, 21.0")
    assert [s.shift for s in signals] == [170.9, 77.16, 21.0]


# ----------------------------------------------------- tables and JCAMP-DX


def test_csv_assignment_column_sets_rows_aside() -> None:
    text = (
        "shift,mult,nH,assignment\n7.36-7.28,m,5,ArH\n7.26,s,,CHCl3\n5.11,s,2,OCH2\n"
        "2.09,s,3,\n1.56,br s,,water\n3.49,,,impurity\n"
    )
    peaks = read_peak_text(text, "ba.csv", "1H", FORMULA)
    assert shape(peaks.signals) == BENZYL_SIGNALS
    assert [(a.text, a.reason, a.where) for a in peaks.set_aside] == [
        ("7.26 (CHCl3)", "the residual solvent signal", "ba.csv line 3"),
        ("1.56 (water)", "the water signal", "ba.csv line 6"),
        ("3.49 (impurity)", "an impurity signal", "ba.csv line 7"),
    ]


def test_csv_13c_assignment_column() -> None:
    text = "shift,nC,DEPT,assignment\n170.9,1,C,C=O\n77.16,,,CDCl3\n21.0,1,CH3,\n"
    peaks = read_peak_text(text, "c.csv", "13C")
    assert [s.shift for s in peaks.signals] == [170.9, 21.0]
    assert [a.label for a in peaks.set_aside] == ["CDCl3"]


def test_jcamp_assignments_set_rows_aside() -> None:
    text = (
        "##TITLE=benzyl acetate\n##.OBSERVE NUCLEUS=^1H\n##.SOLVENT NAME=CDCl3\n"
        "##PEAK ASSIGNMENTS=(XYMA)\n(7.32, 5, M, <ArH>)\n(7.26, , S, <CHCl3>)\n"
        "(5.11, 2, S, <OCH2>)\n(2.09, 3, S, <CH3>)\n(1.56, 0.4, S, <H2O>)\n##END=\n"
    )
    peaks = read_peak_text(text, "ba.jdx", "1H", FORMULA)
    assert shape(peaks.signals) == BENZYL_SIGNALS
    assert [(a.shift, a.reason) for a in peaks.set_aside] == [
        (7.26, "the residual solvent signal"), (1.56, "the water signal"),
    ]


def test_jcamp_13c_assignment() -> None:
    text = "##TITLE=c\n##.OBSERVE NUCLEUS=^13C\n##PEAK ASSIGNMENTS=(XYA)\n(170.9, 1, <C=O>)\n(77.16, 3, <CDCl3>)\n##END=\n"
    peaks = read_peak_text(text, "c.jdx", "13C")
    assert [s.shift for s in peaks.signals] == [170.9]
    assert [a.label for a in peaks.set_aside] == ["CDCl3"]


def test_case_file_inline_peaks_with_assignment(tmp_path: Path) -> None:
    case = tmp_path / "c.toml"
    case.write_text(
        'formula = "C4H8O2"\nsolvent = "CDCl3"\n'
        'h1 = [{shift = 4.12, mult = "q", J = [7.1], h = 2}, {shift = 2.05, mult = "s", h = 3},\n'
        '      {shift = 1.26, mult = "t", J = [7.1], h = 3}, {shift = 7.26, assignment = "CHCl3"}]\n',
        encoding="utf-8",
    )
    problem = load_problem(case)
    assert [s.shift for s in problem.h1] == [4.12, 2.05, 1.26]
    assert [a.reason for a in problem.set_aside] == ["the residual solvent signal"]


# ------------------------------------------------------------- the tables


def test_every_data_row_has_a_source_and_names_are_unambiguous() -> None:
    for row in impurities():
        assert row.source.strip(), row.name
        assert row.kind in ("water", "impurity", "reference"), row.name
        if row.solvent is not None:
            assert row.solvent in {s.name for s in solvents()}, row.name
    assert read_annotation("OCH3") is None and read_annotation("CH3") is None
    assert read_annotation("C=O") is None and read_annotation("ArH") is None
    assert mentioned_substance("benzene ring") is None
