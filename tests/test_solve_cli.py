"""`elucidate solve` and `elucidate explain` as a user runs them."""

import json

from typer.testing import CliRunner

from elucidate import CAUTION
from elucidate.cli import app

# Ethyl acetate, CDCl3 (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512).
EA = ["--formula", "C4H8O2", "--h1", "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"]
runner = CliRunner()


def test_solve_json_done_when():
    result = runner.invoke(app, ["solve", *EA, "--json"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["candidates"][0]["smiles"] == "CCOC(C)=O"
    assert doc["complete"] is True
    assert doc["caution"] == CAUTION


def test_solve_text():
    result = runner.invoke(app, ["solve", *EA, "--top", "3"])
    assert result.exit_code == 0
    out = result.stdout
    assert "C4H8O2" in out                     # read-back
    assert "    1    0." in out or " 1  " in out
    assert "CCOC(C)=O" in out
    assert "authentic reference standard" in out


def test_solve_limit_is_prominent_and_exits_zero():
    result = runner.invoke(app, ["solve", *EA, "--max-structures", "1"])
    assert result.exit_code == 0
    assert "INCOMPLETE SEARCH" in result.stdout


def test_explain_text_and_json():
    result = runner.invoke(app, ["explain", "CCC(=O)OC", *EA])
    assert result.exit_code == 0
    assert "CCC(=O)OC: poor fit" in result.stdout
    assert "4.12 ppm" in result.stdout
    result = runner.invoke(app, ["explain", "CCC(=O)OC", *EA, "--json"])
    doc = json.loads(result.stdout)
    assert doc["verdict"] == "poor fit" and doc["rank"] > 1


def test_explain_with_case_file(tmp_path):
    case = tmp_path / "ea.toml"
    case.write_text(
        'formula = "C4H8O2"\nh1 = "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"\n',
        encoding="utf-8",
    )
    result = runner.invoke(app, ["explain", str(case), "CCOC(C)=O", "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["rank"] == 1


def test_user_errors_one_line_exit_2():
    result = runner.invoke(app, ["explain", "C1CC", *EA])
    assert result.exit_code == 2
    assert result.stderr.strip().startswith("error:") and "C1CC" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    result = runner.invoke(app, ["solve", "--formula", "C4H8O2"])
    assert result.exit_code == 2
    assert "1H" in result.stderr
