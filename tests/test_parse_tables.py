"""CSV/TSV peak tables give the same signals as the text they stand for."""

from __future__ import annotations

import pytest

from elucidate.errors import InputError
from elucidate.parse import parse_formula, parse_h1, read_peak_text
from elucidate.parse.tables import looks_like_table



def norm(signals) -> list[tuple]:
    """Everything but the source text, for comparing input variants."""
    return [
        (s.shift, s.shift_low, s.shift_high, s.multiplicity, s.couplings, s.h_count, s.broad, s.apparent)
        for s in signals
    ]


# Same records as in test_parse_h1.py (benzyl acetate from memory; ethyl acetate
# from Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512, from memory).
BENZYL_ACETATE = [
    (7.32, 7.28, 7.36, "m", (), 5.0, False, False),
    (5.11, 5.11, 5.11, "s", (), 2.0, False, False),
    (2.09, 2.09, 2.09, "s", (), 3.0, False, False),
]
ETHYL_ACETATE = [
    (4.12, 4.12, 4.12, "q", (7.1,), 2.0, False, False),
    (2.05, 2.05, 2.05, "s", (), 3.0, False, False),
    (1.26, 1.26, 1.26, "t", (7.1,), 3.0, False, False),
]

C9H10O2 = parse_formula("C9H10O2")
C4H8O2 = parse_formula("C4H8O2")

# Benzyl acetate (the example; values typical of the literature, from memory).
BENZYL_TABLES = {
    "comma.csv": "shift,multiplicity,J,nH\n7.36-7.28,m,,5\n5.11,s,,2\n2.09,s,,3\n",
    "loose-names.csv": "δ (ppm),Mult.,J (Hz),No. of H,Assignment\n7.36–7.28,m,,5,Ph\n5.11,s,,2,\n2.09,s,,3,\n",
    "tabs.tsv": "Chemical shift [ppm]\tMultiplicity\tH\n7.28-7.36\tm\t5\n5.11\ts\t2\n2.09\ts\t3\n",
    "low-high.csv": "low,high,mult,nH\n7.28,7.36,m,5\n5.11,5.11,s,2\n2.09,2.09,s,3\n",
    "semicolon-decimal-comma.csv": "Shift;Mult;Integral\n7,36-7,28;m;5,00\n5,11;s;2,00\n2,09;s;3,00\n",
    "relative.csv": "ppm,mult,integral\n7.36-7.28,m,2.50\n5.11,s,1.00\n2.09,s,1.50\n",
    "comments.csv": "# exported from the bench spreadsheet\nshift,mult,nH\n\n7.36-7.28,m,5\n5.11,s,2\n2.09,s,3\n",
}


@pytest.mark.parametrize("name", sorted(BENZYL_TABLES))
def test_tables_match_the_text_form(name: str) -> None:
    text_signals, _ = parse_h1("7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)", formula=C9H10O2)
    peaks = read_peak_text(BENZYL_TABLES[name], name, "1H", C9H10O2)
    assert norm(peaks.signals) == norm(text_signals) == BENZYL_ACETATE


def test_relative_table_warns_about_scaling() -> None:
    peaks = read_peak_text(BENZYL_TABLES["relative.csv"], "relative.csv", "1H", C9H10O2)
    assert any("scaled" in w for w in peaks.warnings)


def test_j_list_column_quoted_and_spaced() -> None:
    # Ethyl acetate (Gottlieb et al. 1997, from memory) with a J column.
    table = 'shift,mult,J (Hz),nH\n4.12,q,7.1,2\n2.05,s,,3\n1.26,t,"7.1",3\n'
    peaks = read_peak_text(table, "ea.csv", "1H", C4H8O2)
    assert norm(peaks.signals) == ETHYL_ACETATE
    # Styrene vinyl H, dd 17.6/10.9 (from memory): a quoted comma list, or spaces.
    for cell in ('"17.6, 10.9"', "17.6 10.9", '"J = 10.9, 17.6 Hz"'):
        (s,) = read_peak_text(f"shift,mult,J,nH\n6.72,dd,{cell},1\n", "s.csv", "1H").signals
        assert s.couplings == (17.6, 10.9)


def test_unused_columns_are_reported() -> None:
    peaks = read_peak_text("shift,mult,nH,colour\n2.05,s,3,blue\n", "x.csv", "1H")
    assert "column 'colour' not used" in peaks.warnings[0]


def test_table_without_multiplicity_reads_m() -> None:
    peaks = read_peak_text("shift,nH\n2.05,3\n", "x.csv", "1H")
    assert peaks.signals[0].multiplicity == "m"


def test_13c_table() -> None:
    # 4'-Methylacetophenone 13C (typical literature values, from memory).
    table = "shift,nC,DEPT\n197.8,1,C\n129.3,2,CH\n26.5,,CH3\n21.6,1,3\n"
    peaks = read_peak_text(table, "c.csv", "13C")
    assert [(s.shift, s.carbons, s.attached_h) for s in peaks.signals] == [
        (197.8, 1, 0), (129.3, 2, 1), (26.5, 1, 3), (21.6, 1, 3)
    ]


def test_looks_like_table() -> None:
    assert looks_like_table("shift,mult,nH\n2.05,s,3\n")
    assert not looks_like_table("2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    assert not looks_like_table("##TITLE=x")


@pytest.mark.parametrize(
    "name, table, match",
    [
        ("a.csv", "mult,nH\ns,3\n", r"a.csv line 1: no shift column"),
        ("b.csv", "shift,mult\n2.05,s\n", r"b.csv: no H count or integral column"),
        ("c.csv", "shift,mult,nH\n2.05,zz,3\n", r"c.csv line 2: 'zz' is not a multiplicity"),
        ("d.csv", "shift,mult,nH\nabc,s,3\n", r"d.csv line 2: 'abc' at position 1 is not a chemical shift"),
        ("e.csv", "shift,mult,J,nH\n2.05,d,7.1,1.7,3\n", r"e.csv line 2: 5 cells but the header has 4"),
        ("f.csv", "shift,mult,nH\n2.05,s,1e12\n", r"f.csv line 2: H count '1e12'|not a plausible H count"),
        ("g.csv", "shift,mult,nH\n", r"header but no peaks"),
        ("h.csv", "", r"empty"),
        ("i.csv", "shift,mult,J,nH\n2.05,d,seven,3\n", r"'seven' at i.csv line 2 \(J column\)"),
        ("j.csv", "low,mult,nH\n2.05,s,3\n", r"both ends"),
    ],
)
def test_bad_tables_name_file_and_line(name: str, table: str, match: str) -> None:
    with pytest.raises(InputError, match=match):
        read_peak_text(table, name, "1H", C9H10O2)
