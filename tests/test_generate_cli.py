"""`elucidate isomers` as a user sees it (exit codes, stdout, stderr)."""

from __future__ import annotations

import json

from typer.testing import CliRunner

from elucidate import CAUTION
from elucidate.cli import EXIT_INPUT, EXIT_LIMIT, app

runner = CliRunner()


def run(*args: str):  # type: ignore[no-untyped-def]
    return runner.invoke(app, ["isomers", *args])


def test_count_c8h10() -> None:
    r = run("C8H10", "--count")  # trade-facts.md: 4678
    assert r.exit_code == 0 and r.stdout.strip() == "4678"


def test_streams_smiles_one_per_line() -> None:
    r = run("C2H6O")  # ethanol and dimethyl ether (common practice)
    assert r.exit_code == 0 and r.stdout.split() == ["CCO", "COC"]


def test_require_and_forbid() -> None:
    # C4H10O: 4 alcohols (OEIS A000598) and 3 ethers
    assert run("C4H10O", "--count", "--require", "[OX2H]").stdout.strip() == "4"
    assert run("C4H10O", "--count", "--forbid", "[OX2H]").stdout.strip() == "3"


def test_limit_says_so_and_exits_with_its_code() -> None:
    r = run("C7H8", "--max-structures", "5")
    assert r.exit_code == EXIT_LIMIT
    assert len(r.stdout.split()) == 5
    assert "incomplete" in r.stderr


def test_bad_formula_is_one_line_exit_2() -> None:
    r = run("C8H1.5")
    assert r.exit_code == EXIT_INPUT
    assert r.stderr.count("\n") == 1 and "'.5'" in r.stderr


def test_bad_smarts_is_one_line_exit_2() -> None:
    r = run("C2H6O", "--forbid", "[C")
    assert r.exit_code == EXIT_INPUT and "SMARTS" in r.stderr


def test_json_document() -> None:
    r = run("C3H8O", "--json")  # 3 isomers (trade-facts.md)
    doc = json.loads(r.stdout)
    assert doc["count"] == 3 and doc["complete"] and doc["caution"] == CAUTION
    assert sorted(doc["smiles"]) == sorted(["CCCO", "CCOC", "CC(C)O"])


def test_workers_and_options() -> None:
    assert run("C6H6", "--count", "--workers", "2").stdout.strip() == "217"
    wide = run("CH3NO2", "--count", "--charge-separated").stdout.strip()
    plain = run("CH3NO2", "--count").stdout.strip()
    assert int(wide) > int(plain)
    r = run("C7H8", "--workers", "2")
    assert r.stdout == run("C7H8").stdout  # same bytes whatever the pool size
