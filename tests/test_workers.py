"""``solve(..., workers=N)``: the same result, byte for byte, for any N.

Each case is solved in one process and with a pool of two; the JSON
documents must be identical, counters included (structures visited, turned
down while building, not searched).  The cases cover the two ways the pool
splits work (a level's searches one per task; one search cut into parts), a
structure cap that falls inside a task, relaxation and the formula-only
level.  Peak lists are the literature values of
tests/benchmarks/data/unknowns.toml (sources there).
"""

import json
import subprocess
import sys

import pytest

from elucidate.errors import InputError
from elucidate.parse import load_problem
from elucidate.solve import explain, solve

# Ethyl acetate, CDCl3 (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512).
EA = dict(formula="C4H8O2", h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
EA_C13 = "171.4, 60.5, 21.0, 14.2"
# N-methylacetamide, CDCl3 (from memory, literature spectrum; unknowns.toml).
NMA = dict(formula="C3H7NO", h1="5.90 (br s, 1H), 2.80 (d, J = 4.8 Hz, 3H), 1.98 (s, 3H)")
# Cyclohexanone, CDCl3 (from memory, literature spectrum; unknowns.toml).
CYCLOHEXANONE = dict(formula="C6H10O", h1="2.33 (t, J = 6.7 Hz, 4H), 1.86 (quint, J = 6.3 Hz, 4H), 1.72 (m, 2H)",
                     c13="212.0, 42.0, 27.1, 25.1")
# Propanoic acid, CDCl3 (from memory, literature spectrum; unknowns.toml).
PROPANOIC = dict(formula="C3H6O2", h1="11.5 (br s, 1H), 2.38 (q, J = 7.5 Hz, 2H), 1.16 (t, J = 7.5 Hz, 3H)")


def _doc(result):
    return json.dumps(result.to_json(), indent=2, ensure_ascii=False)


def _same(problem, **kw):
    one = solve(problem, workers=1, **kw)
    two = solve(problem, workers=2, **kw)
    assert _doc(one) == _doc(two)
    return one


def test_level_searches_one_per_task_with_evidence_tally():
    # 4 searches at the strict level (one task each); the 13C line count
    # turns one structure down while building (counted by the workers)
    r = _same(load_problem(**EA, c13=EA_C13))
    counts = dict(r.counts)
    assert counts["generator_runs"] >= 4 and counts["rejected_while_building"] >= 1
    assert r.candidates[0].smiles == "CCOC(C)=O"


def test_structure_cap_inside_a_level_task():
    # 26 structures in 7 searches; a cap of 12 stops inside one of them
    r = _same(load_problem(**NMA), max_structures=12)
    assert not r.complete and dict(r.counts)["generated"] == 12
    assert r.not_searched


def test_structure_cap_with_many_turned_down():
    r = _same(load_problem(**CYCLOHEXANONE), max_structures=40)
    counts = dict(r.counts)
    assert counts["generated"] == 40 and counts["rejected_while_building"] > 0


def test_search_cut_into_parts_with_a_cap():
    # 3 searches: too few for one task each, so each is cut into parts
    full = _same(load_problem(**PROPANOIC))
    assert full.complete and dict(full.counts)["generator_runs"] == 3
    capped = _same(load_problem(**PROPANOIC), max_structures=5)
    assert dict(capped.counts)["generated"] == 5


def test_relaxation_to_the_formula_alone():
    # a 6H triplet at 9.5 ppm fits no reading of C2H6O (test_solve.py): every
    # level runs, the last one over all isomers of the formula
    r = _same(load_problem(formula="C2H6O", h1="9.50 (t, 6H)"))
    assert any("every isomer of the formula" in step for step in r.relaxed)


def test_explain_same_for_any_workers():
    problem = load_problem(**EA)
    one = explain(problem, "CCC(=O)OC", workers=1)
    two = explain(problem, "CCC(=O)OC", workers=2)
    assert json.dumps(one.to_json()) == json.dumps(two.to_json())


def test_workers_validated():
    with pytest.raises(InputError, match="--workers 0"):
        solve(load_problem(**EA), workers=0)


def test_cli_terminal_output_same_bytes(tmp_path):
    case = tmp_path / "ea.toml"
    case.write_text(f'formula = "{EA["formula"]}"\nh1 = "{EA["h1"]}"\nc13 = "{EA_C13}"\n', encoding="utf-8")
    outs = []
    for n in ("1", "2"):
        done = subprocess.run([sys.executable, "-m", "elucidate", "solve", str(case), "--workers", n],
                              capture_output=True, text=True, check=True)
        outs.append(done.stdout)
    assert outs[0] == outs[1] and "CCOC(C)=O" in outs[0]


def test_cli_bad_workers_is_one_line():
    done = subprocess.run([sys.executable, "-m", "elucidate", "solve", "--formula", "C4H8O2", "--h1", EA["h1"],
                           "--workers", "0"], capture_output=True, text=True)
    assert done.returncode == 2
    assert done.stderr.count("\n") == 1 and "--workers" in done.stderr and "Traceback" not in done.stderr


def test_forkserver_workers_same_bytes(monkeypatch):
    # the start method used when the parent runs other threads
    import elucidate.workers as workers

    monkeypatch.setattr(workers, "_start_method", lambda: "forkserver")
    problem = load_problem(**EA, c13=EA_C13)
    assert _doc(solve(problem, workers=2)) == _doc(solve(problem, workers=1))


def test_start_method_avoids_fork_with_threads():
    import threading

    import elucidate.workers as workers

    stop = threading.Event()
    helper = threading.Thread(target=stop.wait)
    helper.start()
    try:
        assert workers._start_method() != "fork"
    finally:
        stop.set()
        helper.join()
