"""`solve` / `explain` with --report and --sdf, through typer's CliRunner.

The demo case U-014 (cases/u014.toml) is the 1H/13C line of ethyl acetate in
CDCl3 (values as in Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62,
7512, from memory).
"""

from __future__ import annotations

import json
from html.parser import HTMLParser
from pathlib import Path

import pytest
from typer.testing import CliRunner

from elucidate import CAUTION
from elucidate.cli import app

CASES = Path(__file__).resolve().parents[1] / "cases"
U014 = str(CASES / "u014.toml")

runner = CliRunner()


class _Cards(HTMLParser):
    def __init__(self):
        super().__init__()
        self.cards: list[str] = []
        self.drawings = 0
        self.spectra = 0

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        cls = (a.get("class") or "").split()
        if tag == "section" and "card" in cls:
            self.cards.append(a["id"])
        if tag == "svg" and "mol" in cls:
            self.drawings += 1
        if tag == "svg" and "spectrum" in cls:
            self.spectra += 1


def _cards(path: Path) -> _Cards:
    page = _Cards()
    page.feed(path.read_text(encoding="utf-8"))
    return page


@pytest.fixture(scope="module")
def solved(tmp_path_factory):
    out = tmp_path_factory.mktemp("solve")
    html, sdf = out / "out.html", out / "out.sdf"
    result = runner.invoke(app, ["solve", U014, "--report", str(html), "--sdf", str(sdf), "--top", "5"])
    return result, html, sdf


def test_solve_writes_report_and_sdf(solved):
    from rdkit import Chem

    result, html, sdf = solved
    assert result.exit_code == 0, result.stderr
    lines = result.stdout.splitlines()
    assert lines[0] == "C4H8O2, DoU 1, 3 signals, 8 H, 4 13C signals (CDCl3, 400 MHz)"
    assert lines[-1] == f"Caution: {CAUTION}"
    assert "\x1b[" not in result.stdout  # plain text: CliRunner's stdout is no terminal
    assert f"wrote {html}" in result.stderr and f"wrote {sdf}" in result.stderr
    page = _cards(html)
    mols = [m for m in Chem.SDMolSupplier(str(sdf))]
    assert 1 <= len(mols) <= 5
    assert page.cards == [f"candidate-{m.GetProp('rank')}" for m in mols]
    assert page.drawings >= len(mols) and page.spectra == len(mols)
    # the report and the terminal list the same best structure
    best = mols[0].GetProp("smiles")
    assert f"   1  {best} " in result.stdout


def test_solve_json_keeps_stdout_clean(tmp_path):
    html = tmp_path / "r.html"
    result = runner.invoke(app, ["solve", U014, "--json", "--report", str(html)])
    assert result.exit_code == 0, result.stderr
    doc = json.loads(result.stdout)  # nothing but JSON
    assert doc["caution"] == CAUTION
    page = _cards(html)
    assert page.cards == [f"candidate-{c['rank']}" for c in doc["candidates"]]


def test_report_bytes_are_deterministic(solved, tmp_path):
    _, html, sdf = solved
    again_html, again_sdf = tmp_path / "a.html", tmp_path / "a.sdf"
    result = runner.invoke(app, ["solve", U014, "--report", str(again_html), "--sdf", str(again_sdf), "--top", "5"])
    assert result.exit_code == 0, result.stderr
    assert again_html.read_bytes() == html.read_bytes()
    assert again_sdf.read_bytes() == sdf.read_bytes()


@pytest.mark.parametrize("option", ["--report", "--sdf"])
def test_unwritable_output_is_one_line_exit_2(option, tmp_path):
    target = tmp_path / "no-such-dir" / "x.out"
    result = runner.invoke(app, ["solve", U014, option, str(target)])
    assert result.exit_code == 2
    assert result.stderr.count("\n") == 1 and option in result.stderr and "does not exist" in result.stderr
    assert "Traceback" not in result.stderr


def test_explain_report_for_a_fit_and_a_wrong_formula(tmp_path):
    from rdkit import Chem

    html, sdf = tmp_path / "e.html", tmp_path / "e.sdf"
    result = runner.invoke(app, ["explain", U014, "CCOC(C)=O", "--report", str(html), "--sdf", str(sdf)])
    assert result.exit_code == 0, result.stderr
    assert "CCOC(C)=O: " in result.stdout and CAUTION in " ".join(result.stdout.split())
    page = _cards(html)
    assert len(page.cards) == 1 and page.spectra == 1
    (mol,) = list(Chem.SDMolSupplier(str(sdf)))
    assert mol.GetProp("smiles") == "CCOC(C)=O" and mol.HasProp("verdict")

    # ethanol is not C4H8O2: rejected, with the reason, drawn but no spectrum
    html2 = tmp_path / "e2.html"
    result = runner.invoke(app, ["explain", U014, "CCO", "--report", str(html2)])
    assert result.exit_code == 0, result.stderr
    assert "rejected" in result.stdout and "C2H6O" in result.stdout
    page = _cards(html2)
    assert page.cards == [] and page.drawings == 1 and page.spectra == 0
    assert "C2H6O" in html2.read_text(encoding="utf-8")
