"""report stage: terminal text, HTML page, SD file, progress callback."""

from __future__ import annotations

import io
import re
from html.parser import HTMLParser

import pytest

from elucidate import CAUTION
from elucidate.errors import InputError
from elucidate.model import Formula, H1Signal, Problem
from elucidate.report import render_explain, render_html, render_solve, sdf_text, write_html, write_sdf
from elucidate.report.common import (
    PALETTE,
    largest_deviation,
    multiplet_lines,
    observed_lines,
    readback,
    signal_letter,
    tint,
)
from elucidate.report.progress import StderrProgress, no_progress, stderr_progress
from elucidate.report.terminal import explain_lines, solve_lines

from report_fixtures import empty_result, ethyl_acetate_result, ethyl_benzoate_result


# ------------------------------------------------------------------ common

# (groups of (n partners, J Hz), expected (offset Hz, relative intensity)).
# n+1 rule with binomial (Pascal's triangle) intensities: common practice.
MULTIPLETS = [
    ("singlet", [], [(0.0, 1.0)]),
    ("doublet J 7", [(1, 7.0)], [(-3.5, 0.5), (3.5, 0.5)]),
    ("triplet J 7, 1:2:1", [(2, 7.0)], [(-7.0, 0.25), (0.0, 0.5), (7.0, 0.25)]),
    ("quartet J 7, 1:3:3:1", [(3, 7.0)], [(-10.5, 0.125), (-3.5, 0.375), (3.5, 0.375), (10.5, 0.125)]),
    ("dd J 10, 2: four equal lines", [(1, 10.0), (1, 2.0)], [(-6.0, 0.25), (-4.0, 0.25), (4.0, 0.25), (6.0, 0.25)]),
    # two different partners with the same J collapse to a triplet (common practice)
    ("dd with equal J = apparent t", [(1, 7.0), (1, 7.0)], [(-7.0, 0.25), (0.0, 0.5), (7.0, 0.25)]),
    ("septet J 6.9, 1:6:15:20:15:6:1", [(6, 6.9)], None),
]


@pytest.mark.parametrize("name,groups,expected", MULTIPLETS, ids=[m[0] for m in MULTIPLETS])
def test_multiplet_lines_follow_the_n_plus_1_rule(name, groups, expected):
    lines = multiplet_lines(groups)
    if expected is None:  # septet: check the Pascal row
        assert [round(i * 64) for _, i in lines] == [1, 6, 15, 20, 15, 6, 1]
        assert lines[-1][0] - lines[0][0] == pytest.approx(6 * 6.9)
    else:
        assert lines == [(pytest.approx(o), pytest.approx(i)) for o, i in expected]
    assert sum(i for _, i in lines) == pytest.approx(1.0)


def _signal(shift, mult, j=(), h=1):
    return H1Signal(shift, shift, shift, mult, tuple(j), h, h)


def test_observed_lines_only_when_letters_and_j_agree():
    assert observed_lines(_signal(1.0, "s")) == [(0.0, 1.0)]
    assert len(observed_lines(_signal(1.0, "dt", (10.0, 2.0)))) == 6  # 2 x 3 lines
    assert observed_lines(_signal(1.0, "m")) is None
    assert observed_lines(_signal(1.0, "dd", (7.0,))) is None  # one J for two letters
    assert observed_lines(_signal(1.0, "q")) is None  # no J given


def test_signal_letters():
    assert [signal_letter(i) for i in (0, 4, 25, 26, 51, 52)] == ["a", "e", "z", "aa", "az", "ba"]
    with pytest.raises(ValueError):
        signal_letter(-1)


def test_readback_line():
    # The example: C9H10O2 has DoU 5 (C - H/2 + 1 = 9 - 5 + 1, common
    # practice); benzyl acetate 7.35 (m, 5H), 5.10 (s, 2H), 2.09 (s, 3H) (from memory).
    problem = Problem(
        Formula((("C", 9), ("H", 10), ("O", 2))),
        (_signal(7.35, "m", h=5), _signal(5.10, "s", h=2), _signal(2.09, "s", h=3)),
    )
    assert readback(problem) == "C9H10O2, DoU 5, 3 signals, 10 H"


def test_largest_deviation_picks_the_worst_signal():
    result = ethyl_acetate_result()
    worst = largest_deviation(result.candidates[1])  # methyl propanoate: the 4.12 quartet vs 2.30
    assert worst.signal == 0 and worst.predicted - worst.observed == pytest.approx(-1.82)


# ---------------------------------------------------------------- terminal


def test_plain_text_when_not_a_terminal():
    out = io.StringIO()  # not a TTY
    render_solve(ethyl_acetate_result(), file=out)
    text = out.getvalue()
    assert "\x1b[" not in text  # no colour codes
    assert not set(text) & set("─│┃━")  # no box drawing
    lines = text.splitlines()
    assert lines[0] == "C4H8O2, DoU 1, 3 signals, 8 H, 4 13C signals (CDCl3, 400 MHz)"
    assert text.index("CCOC(C)=O") < text.index("CCC(=O)OC")  # rank order
    assert "-1.82 ppm at a 4.12 q" in text
    assert "Rejected (120)" in text and "71  no CH3 singlet possible" in text
    assert lines[-1] == f"Caution: {CAUTION}"


def test_plain_text_is_deterministic_and_top_limits():
    a = "\n".join(solve_lines(ethyl_acetate_result(), top=1))
    b = "\n".join(solve_lines(ethyl_acetate_result(), top=1))
    assert a == b
    assert "CCC(=O)OC" not in a and "1 more" in a


def test_rich_tables_on_a_terminal():
    out = io.StringIO()
    render_solve(ethyl_acetate_result(), file=out, plain=False)
    text = " ".join(out.getvalue().split())
    assert "CCOC(C)=O" in text and "consistent" in text
    assert "authentic reference standard" in text


def test_incomplete_and_empty_results_say_so():
    text = "\n".join(solve_lines(ethyl_benzoate_result()))
    assert "Search INCOMPLETE" in text and "time limit" in text
    assert "relaxed: multiplicity of the 7.43 signal treated as m" in text
    assert "\n".join(solve_lines(empty_result())).count("No candidate is consistent") == 1


def _explanation(result, candidate=None, rejection=None, rank=None, verdict="rejected", complete=True):
    from elucidate.model import Explanation

    smiles = (candidate or rejection).smiles
    reasons = rejection.reasons if rejection else ()
    return Explanation(result.problem, smiles, verdict, rank, 9, candidate, rejection, reasons, complete)


def test_explain_lines_for_a_candidate_and_a_rejection():
    result = ethyl_acetate_result()
    good = _explanation(result, candidate=result.candidates[0], rank=1, verdict="consistent")
    lines = explain_lines(good)
    assert lines[1] == "CCOC(C)=O: consistent, rank 1 of 9"
    assert any(l.split()[:4] == ["a", "4.12", "4.00", "-0.12"] for l in lines)
    bad = _explanation(result, rejection=result.rejected[0], complete=False)
    out = io.StringIO()
    render_explain(bad, file=out)
    text = out.getvalue()
    assert "C1COCCO1" not in text and "CCCC(=O)O: rejected, not among the 9 structures ranked" in text
    assert "reason: needs a CH3 singlet" in text
    assert "Search INCOMPLETE" in text


# ---------------------------------------------------------------- progress


class _Clock:
    def __init__(self):
        self.now = 0.0

    def __call__(self):
        return self.now


def test_progress_shows_only_after_a_second():
    clock = _Clock()
    stream = io.StringIO()
    bar = StderrProgress(stream, clock=clock)
    for i in range(50):  # a quick phase: 0.9 s
        clock.now = i * 0.018
        bar("generating", i, None)
    assert bar.shown == []
    for i in range(50):  # a slow phase: over a second
        clock.now = 1.0 + i * 0.05
        bar("scoring", i, 50)
    assert bar.shown == ["scoring"]
    bar.close()


def test_progress_is_silent_off_a_terminal(capsys):
    with stderr_progress() as progress:  # pytest's stderr is not a TTY
        assert progress is no_progress
        progress("scoring", 1, 2)
    assert capsys.readouterr().err == ""


# -------------------------------------------------------------------- html


class _Page(HTMLParser):
    """Collects tags, attributes and the candidate cards' drawings."""

    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, dict]] = []
        self.card_drawings: dict[str, int] = {}
        self._card: str | None = None
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if tag == "section" and "card" in a.get("class", ""):
            self._card = a["id"]
            self.card_drawings[self._card] = 0
        if tag == "svg" and "mol" in (a.get("class") or "").split() and self._card:
            self.card_drawings[self._card] += 1

    def handle_endtag(self, tag):
        if tag == "section":
            self._card = None

    def handle_data(self, data):
        self.text.append(data)


def _parse(html: str) -> _Page:
    page = _Page()
    page.feed(html)
    page.close()
    return page


def test_html_has_a_drawing_per_candidate():
    result = ethyl_acetate_result()
    page = _parse(render_html(result))
    assert page.card_drawings == {"candidate-1": 1, "candidate-2": 1}
    tags = [t for t, _ in page.tags]
    assert tags.count("details") == sum(len(c.assignments) for c in result.candidates)
    assert sum(1 for t, a in page.tags if t == "svg" and a.get("class") == "spectrum") == 2
    text = " ".join("".join(page.text).split())
    assert CAUTION in text
    assert "4.12 (q, J = 7.1 Hz, 2H)" in text  # input echo
    assert "1.20 base CH2" in text  # a derivation


_URL = re.compile(r"(?i)(https?:|ftp:|file:|data:|//[\w.-]+\.\w|url\((?!#)|@import)")


@pytest.mark.parametrize("make", [ethyl_acetate_result, ethyl_benzoate_result, empty_result])
def test_html_is_self_contained(make):
    html = render_html(make())
    assert not _URL.search(html), _URL.search(html)
    page = _parse(html)
    for tag, attrs in page.tags:
        assert tag not in ("script", "link", "img", "iframe", "object", "embed", "base")
        for key in ("src", "href", "xlink:href", "action"):
            value = attrs.get(key)
            assert value is None or value.startswith("#"), (tag, key, value)


def test_html_bytes_are_deterministic_and_escaped():
    result = ethyl_acetate_result()
    assert render_html(result) == render_html(ethyl_acetate_result())
    html = render_html(result, title="<script>alert(1)</script>")
    assert "<script>" not in html and "&lt;script&gt;" in html


def test_atoms_are_tinted_with_their_signal_colour():
    result = ethyl_acetate_result()
    html = render_html(result)
    card = html[html.index('id="candidate-1"') : html.index('id="candidate-2"')]
    drawing = card[card.index("<svg") : card.index("</svg>")]
    used = {tuple(int(h[i : i + 2], 16) for i in (0, 2, 4)) for h in re.findall(r"#([0-9A-Fa-f]{6})", drawing)}
    for sig in range(3):  # a, b, c all explained by ethyl acetate
        want = [c * 255 for c in tint(PALETTE[sig], 0.45)]
        assert any(all(abs(u - w) <= 1 for u, w in zip(col, want)) for col in used), (sig, want, used)


def test_spectrum_axis_decreases_to_the_right():
    html = render_html(ethyl_benzoate_result())
    svg = html[html.index('<svg class="spectrum"') :]
    svg = svg[: svg.index("</svg>")]
    ticks = [(float(x), float(v)) for x, v in re.findall(r'<text x="([\d.]+)" y="[\d.]+" font-size="11" text-anchor="middle" fill="#1e2b33">([\d.-]+)</text>', svg)]
    assert len(ticks) >= 5
    values = [v for _, v in sorted(ticks)]  # left to right
    assert values == sorted(values, reverse=True)
    assert values[0] >= 8.05 and values[-1] <= 0  # covers the observed signals


def test_write_html_reports_unwritable_path(tmp_path):
    with pytest.raises(InputError, match="--report"):
        write_html(ethyl_acetate_result(), tmp_path / "no" / "such" / "dir.html")
    out = write_html(ethyl_acetate_result(), tmp_path / "r.html")
    assert out.read_bytes().startswith(b"<!DOCTYPE html>")


# --------------------------------------------------------------------- sdf


def test_sdf_round_trips_through_rdkit(tmp_path):
    from rdkit import Chem

    result = ethyl_acetate_result()
    path = write_sdf(result, tmp_path / "c.sdf")
    mols = list(Chem.SDMolSupplier(str(path)))
    assert len(mols) == len(result.candidates)
    for mol, cand in zip(mols, result.candidates):
        assert mol is not None
        assert Chem.MolToSmiles(mol) == Chem.CanonSmiles(cand.smiles)
        assert int(mol.GetProp("rank")) == cand.rank
        assert float(mol.GetProp("score")) == pytest.approx(cand.score)
        assert mol.GetProp("verdict") == cand.verdict
        assert len(mol.GetProp("deviations").splitlines()) == len(cand.assignments)
        assert mol.GetProp("caution") == CAUTION
        assert mol.GetConformer().Is3D() is False
    assert float(mols[1].GetProp("largest_deviation_ppm")) == pytest.approx(-1.82)
    assert "a 4.12 obs 2.30 pred dev -1.82 q/q 2H" in mols[1].GetProp("deviations")
    assert path.read_bytes().isascii()
    assert sdf_text(result) == sdf_text(ethyl_acetate_result())  # deterministic


def test_sdf_of_no_candidates_is_empty(tmp_path):
    assert sdf_text(empty_result()) == ""
    with pytest.raises(InputError, match="--sdf"):
        write_sdf(ethyl_acetate_result(), tmp_path / "missing" / "x.sdf")


def test_explain_page_for_a_candidate_and_a_rejection():
    from elucidate.report import render_explain_html

    result = ethyl_acetate_result()
    good = _explanation(result, candidate=result.candidates[1], rank=2, verdict="poor fit")
    page = _parse(render_explain_html(good))
    assert page.card_drawings == {"candidate-2": 1}
    text = " ".join("".join(page.text).split())
    assert "Verdict for CCC(=O)OC: poor fit, rank 2 of 9" in text
    bad = _explanation(result, rejection=result.rejected[1])
    html = render_explain_html(bad)
    assert not _URL.search(html)
    page = _parse(html)
    assert page.card_drawings == {}
    assert sum(1 for t, a in page.tags if t == "svg" and a.get("class") == "mol") == 1  # the rejected structure
    assert "no CH3 in the structure" in "".join(page.text)


def test_two_halves_of_a_ch2_on_one_signal_make_one_row():
    from dataclasses import replace

    from elucidate.report.common import table_rows

    result = ethyl_acetate_result()
    cand = result.candidates[0]
    och2 = cand.assignments[0]  # the 2H quartet
    halves = (replace(och2, h_count=1), replace(och2, h_count=1))
    split = replace(cand, assignments=halves + cand.assignments[1:])
    rows = table_rows(split)
    assert [(r.signal, r.h_count) for r in rows] == [(0, 2), (1, 3), (2, 3)]


def test_candidate_without_assignments_or_prediction_still_renders():
    from dataclasses import replace

    result = ethyl_acetate_result()
    bare = replace(result.candidates[1], assignments=(), prediction=None, notes=("ranked by its cheap bound only",))
    result = replace(result, candidates=(result.candidates[0], bare))
    html = render_html(result)
    page = _parse(html)
    assert page.card_drawings == {"candidate-1": 1, "candidate-2": 1}
    assert "ranked by its cheap bound only" in html
    text = "\n".join(solve_lines(result))
    assert "   2  CCC(=O)OC  3.53  poor fit    –" in text
    assert "a 4.12" not in sdf_text(result).split("$$$$")[1]  # no deviations to list
