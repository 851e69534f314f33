"""`elucidate predict` at the command line: output a user reads, JSON, errors."""

from __future__ import annotations

import json

from typer.testing import CliRunner

from elucidate import CAUTION
from elucidate.cli import app

runner = CliRunner()


def test_done_when_json() -> None:
    # issue 4 "Done when": three environments near 4.12 q, 2.05 s, 1.26 t
    # (ethyl acetate in CDCl3; literature values, from memory)
    result = runner.invoke(app, ["predict", "CCOC(C)=O", "--json"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    assert doc["smiles"] == "CCOC(C)=O"
    assert doc["caution"] == CAUTION
    envs = {tuple(e["atoms"]): e for e in doc["environments"]}
    assert len(envs) == 3
    for atoms, (shift, mult) in {(1,): (4.12, "q"), (4,): (2.05, "s"), (0,): (1.26, "t")}.items():
        e = envs[atoms]
        assert abs(e["shift"] - shift) <= 0.2 and e["multiplicity"] == mult
        assert e["derivation"]
        assert all({"environment", "h_count"} <= set(p) for p in e["partners"])


def test_plain_text_table() -> None:
    result = runner.invoke(app, ["predict", "CCOCC"])
    assert result.exit_code == 0
    out = result.stdout
    assert "derivation:" in out and "Curphy–Morrison" in out
    assert "partners:" in out
    assert CAUTION in out


def test_json_is_deterministic() -> None:
    a = runner.invoke(app, ["predict", "CC(O)c1ccccc1", "--json"]).stdout
    b = runner.invoke(app, ["predict", "CC(O)c1ccccc1", "--json"]).stdout
    assert a == b


def test_bad_smiles_one_line_exit_2() -> None:
    result = runner.invoke(app, ["predict", "C1CC(", "--json"])
    assert result.exit_code == 2
    assert "C1CC(" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert "Traceback" not in result.stderr


def test_bad_field_exit_2() -> None:
    result = runner.invoke(app, ["predict", "CCO", "--field", "0"])
    assert result.exit_code == 2
    assert "field" in result.stderr


def test_unknown_solvent_warns_on_stderr_and_in_json() -> None:
    result = runner.invoke(app, ["predict", "CCO", "--solvent", "moonwater", "--json"])
    assert result.exit_code == 0
    assert "moonwater" in result.stderr
    assert "moonwater" in json.loads(result.stdout)["warnings"][0]


def test_help() -> None:
    result = runner.invoke(app, ["predict", "--help"])
    assert result.exit_code == 0
    assert "SMILES" in result.stdout
