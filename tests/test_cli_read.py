"""`elucidate read` through typer's CliRunner: exit codes, stdout, one-line stderr."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from elucidate import CAUTION
from elucidate.cli import app

CASES = Path(__file__).resolve().parents[1] / "cases"
BENZYL = "7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)"

runner = CliRunner()


def read(*args: str):
    return runner.invoke(app, ["read", *args])


def signals(doc: dict) -> list[tuple]:
    return [(s["shift"], s["shift_low"], s["shift_high"], s["multiplicity"], s["couplings"], s["h_count"])
            for s in doc["h1"]]


def test_done_when_json() -> None:
    # The example: benzyl acetate C9H10O2, DoU 5, three signals, 10 H.
    result = read("--formula", "C9H10O2", "--h1", BENZYL, "--json")
    assert result.exit_code == 0, result.stderr
    doc = json.loads(result.stdout)
    assert doc["dou"] == 5
    assert len(doc["h1"]) == 3
    assert doc["h1_total"] == 10
    assert doc["formula"] == "C9H10O2" and doc["elements"] == {"C": 9, "H": 10, "O": 2}
    assert doc["warnings"] == [] and result.stderr == ""
    assert doc["caution"] == CAUTION


def test_same_signals_from_integral_first_and_csv(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    base = json.loads(read("--formula", "C9H10O2", "--h1", BENZYL, "--json").stdout)
    first = json.loads(read("--formula", "C9H10O2", "--h1", "7.36–7.28 (5H, m), 5.11 (2H, s), 2.09 (3H, s)", "--json").stdout)
    (tmp_path / "ba.csv").write_text("shift,mult,nH\n7.36-7.28,m,5\n5.11,s,2\n2.09,s,3\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    table = json.loads(read("--formula", "C9H10O2", "--h1", "@ba.csv", "--json").stdout)
    assert signals(base) == signals(first) == signals(table)


def test_same_signals_with_j_without_equals() -> None:
    # Ethyl acetate (Gottlieb et al. 1997, from memory): "J = 7.1 Hz" and "J 7.1 Hz".
    a = read("--formula", "C4H8O2", "--h1", "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)", "--json")
    b = read("--formula", "C4H8O2", "--h1", "4.12 (2H, q, J 7.1 Hz), 2.05 (3H, s), 1.26 (3H, t, J 7.1 Hz)", "--json")
    assert signals(json.loads(a.stdout)) == signals(json.loads(b.stdout))
    assert json.loads(a.stdout)["h1"][0]["couplings"] == [7.1]


@pytest.mark.parametrize(
    "args, token",
    [
        (["--formula", "C9H10O2.5", "--h1", BENZYL], "'.5' at position 8"),
        (["--formula", "Xx3", "--h1", BENZYL], "'Xx' at position 1"),
        (["--formula", "C6H7", "--h1", BENZYL], "half-integer"),
        (["--formula", "C2H8", "--h1", BENZYL], "negative"),
        (["--formula", "C40H82", "--h1", BENZYL], "at most 30"),
        (["--formula", "C9H10O2", "--h1", ""], "empty"),
        (["--formula", "C9H10O2", "--h1", "7.2 (q, 2H"], "'(' at position 5 is never closed"),
        (["--formula", "C9H10O2", "--h1", "abc (s, 2H)"], "'abc' at position 1"),
        (["--formula", "C9H10O2", "--h1", "7.2 (s, 1e12H)"], "'1e12H' at position 9"),
        (["--formula", "C9H10O2", "--h1", BENZYL, "--require", "C(=O"], "'C(=O' is not valid SMARTS"),
        (["--formula", "C9H10O2", "--h1", "@does-not-exist.csv"], "not found"),
        (["--formula", "C9H10O2", "--h1", BENZYL, "--c13", "171, abc"], "'abc' at position 6"),
        (["--h1", BENZYL], "no formula"),
        (["--formula", "C9H10O2"], "no 1H peak list"),
        ([str(CASES / "missing.toml")], "not found"),
        (["--formula", "C9H10O2", "--h1", BENZYL, "--field", "0"], "not a spectrometer frequency"),
        (["--formula", "C9H10O2", "--h1", "7.26 (CHCl3), 1.56 (br s, H2O)"], "every signal is annotated as solvent"),
        (["--formula", "C9H10O2", "--h1", f"{BENZYL}, 7.26 (CHCl3, xyz)"], "'xyz' at position"),
        (["--formula", "C9H10O2", "--h1", BENZYL, "--c13-complete"], "no 13C list was given"),
        (["--formula", "C9H10O2", "--h1", BENZYL, "--c13", "128.6 (CH, CH3)"], "contradicts 'CH'"),
    ],
)
def test_bad_input_exit_2_one_line(args: list[str], token: str) -> None:
    result = read(*args)
    assert result.exit_code == 2
    assert result.stdout == ""
    lines = result.stderr.splitlines()
    assert len(lines) == 1, result.stderr
    assert lines[0].startswith("error: ") and token in lines[0]
    assert "Traceback" not in result.stderr


def test_text_readback_of_a_case() -> None:
    result = read(str(CASES / "u040.toml"))
    assert result.exit_code == 0
    out = result.stdout
    for expected in ("U-040", "C9H10O", "DoU          5", "CDCl3", "400 MHz", "7.86", "8.2", "ArCH3",
                     "197.8", "CH3", "Warnings     none", CAUTION):
        assert expected in out, expected
    assert result.stderr == ""


def test_text_readback_lists_warnings_and_stderr_has_them() -> None:
    # Benzyl alcohol without its OH, wet CDCl3 (water 1.56, Gottlieb et al. 1997).
    result = read("--formula", "C7H8O", "--h1", "7.35 (m, 5H), 4.67 (s, 2H), 1.57 (s, 1H)", "--solvent", "CDCl3")
    assert result.exit_code == 0
    assert "Warnings     1" in result.stdout and "water in CDCl3" in result.stdout
    assert result.stderr.startswith("warning: 1H signal at 1.57 ppm") and len(result.stderr.splitlines()) == 1


def test_warnings_in_json_and_on_stderr() -> None:
    result = read(str(CASES / "u033.toml"), "--json")
    assert result.exit_code == 0
    doc = json.loads(result.stdout)
    assert len(doc["warnings"]) == 1 and "scaled" in doc["warnings"][0]
    assert result.stderr.strip() == f"warning: {doc['warnings'][0]}"


def test_json_same_bytes_each_run() -> None:
    a = read(str(CASES / "u021.toml"), "--json").stdout
    b = read(str(CASES / "u021.toml"), "--json").stdout
    assert a == b


def test_options_override_case_and_constraints_shown() -> None:
    result = read(str(CASES / "u014.toml"), "--require", "C(=O)O", "--forbid", "[OX2H]", "--forbid", "c")
    assert result.exit_code == 0
    assert "Require      C(=O)O" in result.stdout
    assert "Forbid       [OX2H]; c" in result.stdout


def test_help() -> None:
    result = runner.invoke(app, ["read", "--help"])
    assert result.exit_code == 0
    assert "--h1" in result.stdout and "--json" in result.stdout


def test_real_process_one_line_and_exit_code() -> None:
    # The console entry point itself (not only the typer app): exit 2, one stderr line.
    import subprocess
    import sys

    import os

    root = Path(__file__).resolve().parents[1]
    env = {**os.environ, "PYTHONIOENCODING": "utf-8"}
    bad = subprocess.run(
        [sys.executable, "-m", "elucidate", "read", "--formula", "C9H10O2", "--h1", "7.2 (q, 2H"],
        cwd=root, capture_output=True, encoding="utf-8", env=env, timeout=120,
    )
    assert bad.returncode == 2 and bad.stdout == ""
    assert bad.stderr.splitlines() == ["error: 1H list: '(' at position 5 is never closed ('(q, 2H' — missing ')')"]
    good = subprocess.run(
        [sys.executable, "-m", "elucidate", "read", "--formula", "C9H10O2", "--h1", BENZYL, "--json"],
        cwd=root, capture_output=True, encoding="utf-8", env=env, timeout=120,
    )
    doc = json.loads(good.stdout)
    assert (good.returncode, doc["dou"], len(doc["h1"]), doc["h1_total"]) == (0, 5, 3, 10)


# Benzyl acetate with residual CHCl3, water and grease in CDCl3 (positions: Gottlieb, Kotlyar,
# Nudelman, J. Org. Chem. 1997, 62, 7512; 7.26 and 77.16 check values, 1.56 and 0.07 from memory).
ANNOTATED = "7.36–7.28 (m, 5H), 7.26 (CHCl3), 5.11 (s, 2H), 2.09 (s, 3H), 1.56 (br s, H2O), 0.07 (s, grease)"
C13 = "170.9 (C), 136.0 (C), 128.6 (2 × CH), 128.3 (CH), 128.2 (2C, CH), 77.16 (CDCl3), 66.3 (CH2), 21.0 (CH₃)"


def test_read_shows_set_aside_signals_text() -> None:
    result = read("--formula", "C9H10O2", "--h1", ANNOTATED, "--c13", C13, "--solvent", "CDCl3")
    assert result.exit_code == 0, result.stderr
    out = result.stdout
    assert "1H signals   3, 10 H (formula 10 H)" in out
    assert "13C signals  7, 9 C (formula 9 C)" in out
    assert "Set aside    4 (not signals of the compound)" in out
    for line in ("  - 1H 7.26 (CHCl3): the residual solvent signal",
                 "  - 1H 1.56 (br s, H2O): the water signal",
                 "  - 1H 0.07 (s, grease): an impurity signal (grease)",
                 "  - 13C 77.16 (CDCl3): the solvent signal"):
        assert line in out, line
    assert "13C complete not stated" in out
    assert "warning: 1H signal 7.26 (CHCl3) set aside as the residual solvent signal" in result.stderr
    assert "Traceback" not in result.stderr


def test_read_shows_set_aside_signals_json_and_c13_complete() -> None:
    result = read("--formula", "C9H10O2", "--h1", ANNOTATED, "--c13", C13, "--c13-complete", "--json")
    assert result.exit_code == 0, result.stderr
    doc = json.loads(result.stdout)
    assert doc["c13_complete"] is True
    assert doc["h1_total"] == 10 and doc["c13_carbons"] == 9
    assert [(a["nucleus"], a["shift"], a["text"], a["reason"]) for a in doc["set_aside"]] == [
        ("1H", 7.26, "7.26 (CHCl3)", "the residual solvent signal"),
        ("1H", 1.56, "1.56 (br s, H2O)", "the water signal"),
        ("1H", 0.07, "0.07 (s, grease)", "an impurity signal (grease)"),
        ("13C", 77.16, "77.16 (CDCl3)", "the solvent signal"),
    ]
    assert sum("set aside" in w for w in doc["warnings"]) == 4
    text = read("--formula", "C9H10O2", "--h1", BENZYL, "--c13", C13.replace(", 77.16 (CDCl3)", ""),
                "--c13-complete").stdout
    assert "13C complete yes" in text and "Set aside    none" in text
    plain = json.loads(read("--formula", "C9H10O2", "--h1", BENZYL, "--json").stdout)
    assert plain["c13_complete"] is False and plain["set_aside"] == []


def test_solve_and_explain_take_c13_complete() -> None:
    # Option plumbing only: the flag reaches the Problem the solver reports back.
    args = ["--formula", "C9H10O2", "--h1", ANNOTATED, "--c13", C13, "--c13-complete", "--json"]
    for command in (["solve", *args, "--max-structures", "1"], ["explain", "CC(=O)OCc1ccccc1", *args,
                                                                 "--max-structures", "1"]):
        help_text = runner.invoke(app, [command[0], "--help"]).stdout
        assert "--c13-complete" in help_text
        result = runner.invoke(app, command)
        assert result.exit_code == 0, result.stderr
        doc = json.loads(result.stdout)
        assert doc["input"]["c13_complete"] is True
        assert len(doc["input"]["set_aside"]) == 4
