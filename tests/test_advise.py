"""What to measure next (elucidate.advise): observations that tell close candidates apart.

Check values are literature spectra (sources beside each) or, for 2D
correlations, bond counting as every NMR text does it (common practice).
"""

from __future__ import annotations

import pytest

from elucidate.advise import MARGIN, SEPARATES, close_candidates, next_measurements
from elucidate.model import Candidate
from elucidate.parse import load_problem
from elucidate.predict import predict
from elucidate.score.assign import assign


def _candidate(problem, smiles: str, rank: int, score: float) -> Candidate:
    """A ranked candidate scored by the project's own assignment model."""
    pred = predict(smiles, solvent=problem.solvent, field_mhz=problem.field_mhz)
    fit = assign(problem, pred)
    return Candidate(rank, smiles, score, fit.verdict, fit.assignments, prediction=pred)


# Ethyl acetate, CDCl3: 1H 4.12 (q, 2H), 2.05 (s, 3H), 1.26 (t, 3H) and 13C
# 171.36 (C=O), 60.49 (OCH2), 21.04 (CH3CO), 14.19 (CH3): Gottlieb, Kotlyar,
# Nudelman, J. Org. Chem. 1997, 62, 7512 (values recalled from memory).
ETHYL_ACETATE_H1 = "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"
ETHYL_ACETATE_C13 = {3: [21.04, 14.19], 2: [60.49], 0: [171.36]}
# Methyl propanoate, CDCl3 13C: 174.9 (C=O), 51.5 (OCH3), 27.5 (CH2), 9.2 (CH3)
# (from memory, typical literature spectrum).
METHYL_PROPANOATE_C13 = {3: [51.5, 9.2], 2: [27.5], 0: [174.9]}


def _literature_line(table: dict[int, list[float]], attached_h: int, predicted: float) -> float:
    """The literature line of the same H count nearest to a predicted shift."""
    return min(table[attached_h], key=lambda x: abs(x - predicted))


def test_a_known_13c_difference_is_the_first_measurement():
    problem = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, solvent="CDCl3")
    cands = [_candidate(problem, "CCOC(C)=O", 1, 2.0), _candidate(problem, "CCC(=O)OC", 2, 2.5)]
    found = next_measurements(problem, cands)
    assert found, "two candidates within the margin must get advice"
    first = found[0]
    assert first.experiment == "13C"
    assert first.ranks == (1, 2)
    assert first.separated == 1 and first.discrimination >= SEPARATES
    # The carbon it points at really differs in the two literature spectra.
    classes = {"CH3": 3, "CH2": 2, "CH": 1, "C": 0}
    values = []
    for text, table in zip(first.predicted, (ETHYL_ACETATE_C13, METHYL_PROPANOATE_C13)):
        shift, label = text.split()
        values.append(_literature_line(table, classes[label.strip("()")], float(shift)))
    assert abs(values[0] - values[1]) > 20  # 60.5 vs 27.5 or 21.0 vs 51.5 ppm


def test_given_13c_is_not_suggested_again():
    problem = load_problem(
        formula="C4H8O2", h1=ETHYL_ACETATE_H1, c13="171.4 (C), 60.5 (CH2), 21.0 (CH3), 14.2 (CH3)", solvent="CDCl3"
    )
    cands = [_candidate(problem, "CCOC(C)=O", 1, 2.0), _candidate(problem, "CCC(=O)OC", 2, 2.5)]
    found = next_measurements(problem, cands)
    assert all(m.experiment not in ("13C", "DEPT") for m in found)


# Methyl salicylate vs 2-methoxybenzoic acid (C8H8O3): the OCH3 H of the
# ester are three bonds from the C=O carbon (H-C-O-C=O) and give an HMBC
# cross peak to it; the OCH3 of the aryl ether is four bonds from the acid
# C=O and three from the ring C-O carbon instead (bond counting, common
# practice).  1H of methyl salicylate in CDCl3: from memory (literature
# spectrum), as in tests/benchmarks/data/unknowns.toml.
SALICYLATE_H1 = (
    "10.76 (s, 1H), 7.84 (dd, J = 8.0, 1.7 Hz, 1H), 7.45 (ddd, J = 8.6, 7.2, 1.8 Hz, 1H), "
    "6.98 (d, J = 8.4 Hz, 1H), 6.88 (t, J = 7.6 Hz, 1H), 3.95 (s, 3H)"
)


def test_hmbc_from_the_methoxy_tells_ester_from_ether():
    problem = load_problem(formula="C8H8O3", h1=SALICYLATE_H1, solvent="CDCl3")
    cands = [
        _candidate(problem, "COC(=O)c1ccccc1O", 1, 6.4),
        _candidate(problem, "COc1ccccc1C(=O)O", 2, 7.0),
    ]
    found = next_measurements(problem, cands)
    hmbc = [m for m in found if m.experiment == "HMBC" and "3.95" in m.observation]
    assert hmbc, [m.observation for m in found]
    carbonyl = [m for m in hmbc if float(m.observation.split("near ")[1].split()[0]) > 160
                and m.predicted == ("cross peak", "none")]
    assert carbonyl, [(m.observation, m.predicted) for m in hmbc]


def test_candidates_outside_the_margin_get_no_advice():
    problem = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, solvent="CDCl3")
    cands = [_candidate(problem, "CCOC(C)=O", 1, 1.0), _candidate(problem, "CCC(=O)OC", 2, 1.0 + MARGIN + 0.5)]
    assert next_measurements(problem, cands) == ()
    assert next_measurements(problem, cands[:1]) == ()


def test_close_candidates_rejects_a_bad_margin():
    with pytest.raises(ValueError, match="margin"):
        close_candidates([], margin=-1)


def test_solve_result_carries_the_advice_in_json():
    # Ethyl acetate 1H alone separates it clearly from every isomer
    # (Gottlieb et al. 1997 values above): nothing to advise, key present.
    from elucidate.solve import solve

    problem = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, solvent="CDCl3")
    doc = solve(problem, time_limit_s=60).to_json()
    assert doc["next_measurements"] == []


def test_terminal_and_html_show_the_heading():
    from dataclasses import replace

    from elucidate.model import SolveResult
    from elucidate.report.html import render_html
    from elucidate.report.terminal import solve_lines

    problem = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, solvent="CDCl3")
    cands = (_candidate(problem, "CCOC(C)=O", 1, 2.0), _candidate(problem, "CCC(=O)OC", 2, 2.5))
    result = SolveResult(problem=problem, complete=True, candidates=cands)
    result = replace(result, next_measurements=next_measurements(problem, cands))
    text = "\n".join(solve_lines(result))
    assert "What to measure next" in text and "13C" in text
    assert "What to measure next" in render_html(result)


def test_with_three_close_candidates_the_best_two_are_told_apart_first():
    # Three C4H8O2 esters fitting the ethyl acetate list about equally: the
    # observations that tell candidate 1 from candidate 2 are listed before
    # any that do not (13C shifts of the three esters differ by tens of ppm:
    # Gottlieb et al. 1997 above and common practice for formates, ~161 ppm).
    problem = load_problem(formula="C4H8O2", h1=ETHYL_ACETATE_H1, solvent="CDCl3")
    cands = [
        _candidate(problem, "CCOC(C)=O", 1, 2.0),
        _candidate(problem, "CCC(=O)OC", 2, 2.3),
        _candidate(problem, "CCCOC=O", 3, 2.6),
    ]
    found = next_measurements(problem, cands)
    assert found and found[0].ranks == (1, 2, 3)
    assert found[0].top_pair >= SEPARATES
    told = [m.top_pair >= SEPARATES for m in found]
    assert told == sorted(told, reverse=True), "a measurement separating 1 from 2 comes first"
    assert f"1 vs 2: {found[0].top_pair:.1f}" in found[0].figure_text()
