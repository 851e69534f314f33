"""The 13C panel of the HTML report and the 13C table of the terminal output.

Data: ethyl acetate in CDCl3, 1H 4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H);
13C 171.1 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3) -- Gottlieb, Kotlyar,
Nudelman, J. Org. Chem. 1997, 62, 7512 (from memory; DEPT labels from the
structure, common practice).
"""

from __future__ import annotations

import functools

from elucidate.model import Problem
from elucidate.parse import parse_c13, parse_formula, parse_h1
from elucidate.report.html import c13_spectrum_svg, render_html
from elucidate.report.terminal import solve_lines


@functools.cache
def _result(c13: str = "171.1 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)"):
    from elucidate.solve import solve

    h1, _ = parse_h1("4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    lines = parse_c13(c13)[0] if c13 else ()
    return solve(Problem(parse_formula("C4H8O2"), h1, lines), top=3)


def test_html_has_a_13c_panel_per_candidate():
    result = _result()
    page = render_html(result)
    assert page.count('aria-label="observed and predicted 13C stick spectrum"') == len(result.candidates)
    assert page.count('<table class="assign c13">') == len(result.candidates)
    # DEPT labels of the lines and the 0-220 axis
    assert "1 C</text>" in page and "2 CH2</text>" in page
    assert ">220</text>" in page and "δ(13C) / ppm" in page
    # the best candidate's table row for 60.5: obs 60.5, CH2 observed and predicted
    best = page[page.index('id="candidate-1"'):page.index('id="candidate-2"')]
    assert "<td class=\"num\">60.5</td>" in best and "CH2/CH2" in best


def test_html_13c_is_deterministic_and_absent_without_13c():
    assert render_html(_result()) == render_html(_result())
    page = render_html(_result(""))
    assert "13C stick spectrum" not in page and 'class="assign c13"' not in page


def test_spectrum_colours_follow_the_assignment():
    result = _result()
    cand = result.candidates[0]
    svg = c13_spectrum_svg(result.problem, cand)
    from elucidate.report.common import c13_colour

    for r in cand.c13_assignments:
        assert r.line is not None
        assert f'stroke="{c13_colour(r.line)}" stroke-width="1" stroke-dasharray="2 2"' in svg


def test_terminal_shows_a_13c_table_for_the_best_candidate():
    text = "\n".join(solve_lines(_result()))
    assert "13C, line by line" in text
    head = next(line for line in text.splitlines() if line.startswith("line"))
    assert head.split() == ["line", "δ", "obs", "δ", "pred", "Δ", "H", "obs/pred", "carbons"]
    assert "13C, line by line" not in "\n".join(solve_lines(_result("")))
