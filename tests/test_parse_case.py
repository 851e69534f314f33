"""Case files, options, solvents and SMARTS constraints -> Problem."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from elucidate.errors import InputError
from elucidate.parse import load_problem, problem_from_toml, validate_smarts
from elucidate.parse.solvents import find_solvent, normalise_solvent, solvents

CASES = Path(__file__).resolve().parents[1] / "cases"


def test_demo_cases_read() -> None:
    expected = {
        # name: (formula, DoU, signals, H total, solvent, field)
        "u014": ("C4H8O2", 1, 3, 8, "CDCl3", 400.0),
        "u021": ("C9H10O2", 5, 3, 10, "CDCl3", 400.0),
        "u033": ("C7H14O2", 1, 5, 14, "CDCl3", 400.13),
        "u040": ("C9H10O", 5, 4, 10, "CDCl3", 400.0),
        "u052": ("C5H10O", 1, 2, 10, "CDCl3", 300.0),
    }
    assert sorted(p.stem for p in CASES.glob("*.toml")) == sorted(expected)
    for stem, (hill, dou, n, h, solvent, field) in expected.items():
        problem = load_problem(CASES / f"{stem}.toml")
        got = (problem.formula.hill, problem.formula.dou, len(problem.h1), problem.h_total,
               problem.solvent, problem.field_mhz)
        assert got == (hill, dou, n, h, solvent, field), stem
        assert problem.name == f"U-{stem[1:]}"


def test_demo_case_warnings() -> None:
    # 7.25 (d) in CDCl3 is next to residual CHCl3 at 7.26, but a doublet is not the solvent.
    assert load_problem(CASES / "u040.toml").warnings == ()
    assert any("scaled" in w for w in load_problem(CASES / "u033.toml").warnings)
    assert any("scaled" in w for w in load_problem(CASES / "u052.toml").warnings)
    assert load_problem(CASES / "u014.toml").warnings == ()


def test_options_override_case_keys() -> None:
    problem = load_problem(CASES / "u014.toml", solvent="C6D6", field_mhz=600, forbid=["[OX2H]"])
    assert problem.solvent == "C6D6" and problem.field_mhz == 600
    assert problem.forbid == ("[OX2H]",)
    assert any("1H header says CDCl3" in w for w in problem.warnings)
    assert any("field 600 MHz given, but the 1H header says 400 MHz" in w for w in problem.warnings)


def test_h1_from_file_relative_to_cwd(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    (tmp_path / "p.csv").write_text("shift,mult,nH\n7.36-7.28,m,5\n5.11,s,2\n2.09,s,3\n", encoding="utf-8")
    (tmp_path / "p.txt").write_text("7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    a = load_problem(formula="C9H10O2", h1="@p.csv")
    b = load_problem(formula="C9H10O2", h1="@p.txt")
    assert [(s.shift, s.multiplicity, s.h_count) for s in a.h1] == [(s.shift, s.multiplicity, s.h_count) for s in b.h1]


def test_case_file_tables_and_inline_peaks(tmp_path: Path) -> None:
    (tmp_path / "sub").mkdir()
    (tmp_path / "sub" / "h.tsv").write_text("ppm\tmult\tJ\tH\n4.12\tq\t7.1\t2\n2.05\ts\t\t3\n1.26\tt\t7.1\t3\n", encoding="utf-8")
    text = """
formula = "C4H8O2"
[h1]
file = "sub/h.tsv"
[c13]
peaks = [{shift = 171.1, type = "C"}, {shift = 60.4, dept = "CH2"}, {shift = 21.0}, {ppm = 14.2, nC = 1}]
"""
    problem = problem_from_toml(text, tmp_path)
    assert [(s.shift, s.multiplicity, s.couplings, s.h_count) for s in problem.h1] == [
        (4.12, "q", (7.1,), 2.0), (2.05, "s", (), 3.0), (1.26, "t", (7.1,), 3.0)
    ]
    assert [(s.shift, s.attached_h) for s in problem.c13] == [(171.1, 0), (60.4, 2), (21.0, None), (14.2, None)]
    h1_inline = 'formula = "C4H8O2"\nh1 = [{shift = 2.05, mult = "s", h = 3}, {shift = 4.12, mult = "q", J = [7.1], h = 2}, {shift = 1.26, mult = "t", J = 7.1, h = 3}]\n'
    assert [s.shift for s in problem_from_toml(h1_inline).h1] == [4.12, 2.05, 1.26]
    ranged = 'formula = "C9H10O2"\nh1 = [{shift = [7.36, 7.28], mult = "m", nH = 5}, {shift = 5.11, nH = 2}]\n'
    (ring, _) = problem_from_toml(ranged).h1
    assert (ring.shift, ring.shift_low, ring.shift_high) == (7.32, 7.28, 7.36)


@pytest.mark.parametrize(
    "text, match",
    [
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nfomula = "x"\n', r"unknown key 'fomula'"),
        ('formula = C4H8O2\n', r"not valid TOML .*line 1"),
        ('formula = 4\nh1 = "2.05 (s, 3H)"\n', r"'formula' must be a string"),
        ('formula = "C4H8O2"\n', r"no 1H peak list"),
        ('formula = "C6H7"\nh1 = "7.26 (s, 1H)"\n', r"^case file: formula 'C6H7' gives a half-integer"),
        ('h1 = "2.05 (s, 3H)"\n', r"no formula"),
        ('formula = "C4H8O2"\nh1 = "2.05 (x, 3H)"\n', r"case file, h1: 1H list: 'x' at position 7"),
        ('formula = "C4H8O2"\nh1 = "@missing.csv"\n', r"'.*missing.csv' not found"),
        ('formula = "C4H8O2"\n[h1]\ntext = "2.05 (s, 3H)"\nfile = "a.csv"\n', r"exactly one of text, file or peaks"),
        ('formula = "C4H8O2"\nh1 = [{shift = 2.05, colour = "s", h = 3}]\n', r"h1 peak 1: unknown peak key 'colour'"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nfield = "high"\n', r"'field' must be a number"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nfield = 5\n', r"not a spectrometer frequency"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nrequire = [1]\n', r"list of SMARTS"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nrequire = ["C(=O"]\n', r"--require #1: 'C\(=O' is not valid SMARTS"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nrequire = ["C=O"]\nforbid = ["C=O"]\n', r"both required and forbidden"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nc13 = "21.0"\nc13_complete = "yes"\n', r"'c13_complete' must be true or false"),
        ('formula = "C4H8O2"\nh1 = "2.05 (s, 3H)"\nc13_complete = true\n', r"c13_complete: the 13C list is said to be complete, but no 13C list"),
        ('formula = "C4H8O2"\nh1 = "7.26 (CHCl3)"\n', r"case file, h1: 1H list: every signal is annotated as solvent"),
    ],
)
def test_bad_case_files(text: str, match: str, tmp_path: Path) -> None:
    with pytest.raises(InputError, match=match):
        problem_from_toml(text, tmp_path)


def test_case_file_not_found_and_binary(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"case file '.*nope.toml' not found"):
        load_problem(tmp_path / "nope.toml")
    (tmp_path / "b.toml").write_bytes(b"\x00\x01\x02")
    with pytest.raises(InputError, match=r"binary file"):
        load_problem(tmp_path / "b.toml")


def test_smarts_validation() -> None:
    assert validate_smarts([" c1ccccc1 ", "[OX2H]"], "--require") == ("c1ccccc1", "[OX2H]")
    with pytest.raises(InputError, match=r"--forbid #2: 'C1CC' is not valid SMARTS"):
        validate_smarts(["C=O", "C1CC"], "--forbid")
    with pytest.raises(InputError, match=r"--forbid #1 is empty"):
        validate_smarts([""], "--forbid")


def test_solvent_table_has_a_source_per_row() -> None:
    rows = solvents()
    assert len(rows) >= 8 and all("Gottlieb" in r.source for r in rows)
    # Residual CHCl3 7.26 and water 1.56 in CDCl3 (Gottlieb, Kotlyar, Nudelman 1997).
    cdcl3 = find_solvent("chloroform-d")
    assert cdcl3 is not None and (cdcl3.residual_1h, cdcl3.water_1h) == (7.26, 1.56)
    assert normalise_solvent("dmso-D6") == ("DMSO-d6", True)
    assert normalise_solvent("THF-d8") == ("THF-d8", False)


def test_water_and_solvent_carbon_warnings() -> None:
    # Water in CDCl3 at 1.56 and the CDCl3 carbon at 77.16 (Gottlieb et al. 1997).
    problem = load_problem(
        formula="C4H8O2", h1="4.12 (q, 2H), 2.05 (s, 3H), 1.56 (s, 3H)", c13="171.1, 77.2, 60.4, 21.0",
        solvent="CDCl3",
    )
    assert any("water in CDCl3" in w for w in problem.warnings)
    assert any("CDCl3 solvent carbon" in w for w in problem.warnings)
    # DMSO-d6: residual 2.50, water 3.33 (same source).
    problem = load_problem(formula="C2H6O", h1="3.33 (s, 1H), 2.50 (quint, 5H)", solvent="DMSO-d6")
    assert any("water in DMSO-d6" in w for w in problem.warnings)
    assert any("residual DMSO-d6 signal (2.50 ppm)" in w for w in problem.warnings)
    # CHCl3 residual 7.26 (same source): a singlet there is flagged ...
    problem = load_problem(formula="C7H8", h1="7.26 (s, 5H), 2.35 (s, 3H)", solvent="CDCl3")
    assert any("residual CDCl3 signal (7.26 ppm)" in w for w in problem.warnings)


def test_own_signals_near_solvent_positions_not_flagged() -> None:
    # ... but doublets, triplets and multiplet ranges are the compound's own signals:
    # 2-nitropropane 1.56 (d, 6H) and aromatic ranges over 7.26 (typical values, from memory).
    problem = load_problem(formula="C3H7NO2", h1="4.67 (sept, J = 6.6 Hz, 1H), 1.56 (d, J = 6.6 Hz, 6H)",
                           solvent="CDCl3")
    assert problem.warnings == ()
    problem = load_problem(formula="C9H10O2", h1="7.38–7.20 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)",
                           solvent="CDCl3")
    assert problem.warnings == ()


def test_unknown_solvent_and_13c_count_warnings() -> None:
    problem = load_problem(formula="C4H8O2", h1="4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H)",
                           c13="171.1 (2C), 60.4 (2C), 21.0", solvent="THF-d8")
    assert any("not in the solvent table" in w for w in problem.warnings)
    assert any("13C list accounts for 5 carbons but C4H8O2 has 4" in w for w in problem.warnings)


def test_json_is_deterministic() -> None:
    a = json.dumps(load_problem(CASES / "u033.toml").to_json(), ensure_ascii=False)
    b = json.dumps(load_problem(CASES / "u033.toml").to_json(), ensure_ascii=False)
    assert a == b


def test_single_smarts_string_is_one_pattern() -> None:
    problem = load_problem(formula="C4H8O2", h1="2.05 (s, 3H)", require="C(=O)O")  # type: ignore[arg-type]
    assert problem.require == ("C(=O)O",)


# Ethyl acetate in CDCl3 (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512; from memory).
ETHYL_ACETATE_H1 = "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"
ETHYL_ACETATE_C13 = "171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)"


def test_c13_complete_key_and_option(tmp_path: Path) -> None:
    case = tmp_path / "ea.toml"
    case.write_text(
        f'formula = "C4H8O2"\nh1 = "{ETHYL_ACETATE_H1}"\nc13 = "{ETHYL_ACETATE_C13}"\nc13_complete = true\n',
        encoding="utf-8",
    )
    assert load_problem(case).c13_complete is True
    assert load_problem(case).to_json()["c13_complete"] is True
    assert load_problem(case, c13_complete=False).c13_complete is False  # the option wins
    plain = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13=ETHYL_ACETATE_C13)
    assert plain.c13_complete is False and plain.to_json()["c13_complete"] is False
    assert load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13=ETHYL_ACETATE_C13,
                        c13_complete=True).c13_complete is True
    with pytest.raises(InputError, match=r"^--c13-complete: the 13C list is said to be complete"):
        load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13_complete=True)
    with pytest.raises(InputError, match=r"--c13-complete must be true or false"):
        load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13=ETHYL_ACETATE_C13, c13_complete="yes")  # type: ignore[arg-type]


def test_set_aside_reasons_use_the_solvent_chosen_from_the_header() -> None:
    # acetone-d5 residual at 2.05 in acetone-d6 (Gottlieb et al. 1997): the header names the solvent.
    problem = load_problem(formula="C9H10O2",
                           h1="1H NMR (400 MHz, acetone-d6) δ 7.36 (m, 5H), 5.11 (s, 2H), 2.05 (acetone), 2.03 (s, 3H)")
    assert problem.solvent == "acetone-d6"
    assert [a.reason for a in problem.set_aside] == ["the residual solvent signal"]
