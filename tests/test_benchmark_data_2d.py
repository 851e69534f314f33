"""Checks of tests/benchmarks/data/unknowns_2d.toml (the 2D benchmark).

1D data are literature spectra recalled from memory (each case's ``source``);
the cross peaks are implied by the true structure in the standard
experiments (common practice), as ``tests/benchmarks/make_2d_cases.py``
explains.  The checks: enough cases of the size the issue asks for, sources
present, every cross peak matched to the 1D data, and the truth meeting its
own cross peaks in the strict reading (the constraint is sound on them).
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from elucidate.constrain.correlations import correlation_evidence
from elucidate.constrain.evidence import Graph
from elucidate.parse import load_problem

DATA = Path(__file__).parent / "benchmarks" / "data" / "unknowns_2d.toml"
CASES = tomllib.loads(DATA.read_text())["case"]


def test_size_and_sources() -> None:
    assert len(CASES) >= 25
    assert len({c["name"] for c in CASES}) == len(CASES)
    for c in CASES:
        carbons = int(c["formula"][1:].split("H")[0])
        assert 10 <= carbons <= 25, c["name"]
        assert "from memory" in c["source"] and "implied by the structure" in c["source"], c["name"]


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
def test_truth_meets_its_cross_peaks(case: dict) -> None:
    problem = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent=case["solvent"],
                           hsqc=case["hsqc"], cosy=case["cosy"] or None, hmbc=case["hmbc"])
    used = [c for c in problem.correlations if c.matched]
    assert len(used) >= 8, case["name"]
    strict = correlation_evidence(problem)[0]
    assert strict.reason(Graph.from_smiles(case["smiles"])) is None, case["name"]
