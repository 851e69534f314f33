"""Commands that do not solve do not load the solver's libraries.

Each command runs in a fresh interpreter through the console entry point
(``elucidate.cli.main``); afterwards the test lists the modules it
imported.  RDKit, OR-Tools and numpy (and the solver's own stages) must not
be among them for ``--help`` and ``read`` of a case without SMARTS (a
``require``/``forbid`` SMARTS needs RDKit to be checked, so that read may
load it).  Pydantic is checked too when :mod:`elucidate._cliparams` could
take typer's value conversion over (typer releases that use pydantic).
Timings are in tests/benchmarks/bench_startup.py, not here.
"""

import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]

HEAVY = ("rdkit", "ortools", "numpy")
SOLVER = ("elucidate.solve", "elucidate.predict", "elucidate.score", "elucidate.generate", "elucidate.constrain")

_PROBE = """
import json, sys
sys.argv = ["elucidate"] + json.loads(sys.argv[1])
from elucidate import _cliparams
from elucidate.cli import main
try:
    main()
except SystemExit as exc:
    code = exc.code
sys.stdout.flush()
print("\\n@@" + json.dumps({"code": code, "light": _cliparams.INSTALLED, "modules": sorted(sys.modules)}))
"""


def _modules(args: list[str]) -> tuple[int, bool, set[str]]:
    done = subprocess.run([sys.executable, "-c", _PROBE, json.dumps(args)], cwd=ROOT, capture_output=True,
                          text=True, check=True)
    report = json.loads(done.stdout.rsplit("\n@@", 1)[1])
    return report["code"], report["light"], set(report["modules"])


def _loaded(modules: set[str], roots: tuple[str, ...]) -> list[str]:
    return sorted(m for m in modules if any(m == r or m.startswith(r + ".") for r in roots))


@pytest.mark.parametrize("args", [
    ["--help"],
    ["solve", "--help"],
    ["read", "cases/u014.toml"],
    ["read", "cases/u040.toml", "--json"],
    # ethyl acetate, CDCl3 (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512)
    ["read", "--formula", "C4H8O2", "--h1", "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
     "--c13", "171.4, 60.5, 21.0, 14.2", "--field", "400"],
])
def test_no_solver_libraries(args):
    code, light, modules = _modules(args)
    assert code in (0, None)
    assert _loaded(modules, HEAVY) == []
    assert _loaded(modules, SOLVER) == []
    if light:
        assert _loaded(modules, ("pydantic",)) == []


def test_bad_value_still_reported_by_typer():
    # an out-of-range number is left to typer's own converter: same message
    done = subprocess.run([sys.executable, "-m", "elucidate", "solve", "cases/u014.toml", "--top", "0"],
                          cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 2
    assert done.stderr.startswith("error: ") and done.stderr.count("\n") == 1
    assert "--top" in done.stderr


def test_probe_sees_a_heavy_import():
    # the check can fail: predict does load RDKit
    code, _, modules = _modules(["predict", "CCO"])
    assert code in (0, None)
    assert "rdkit" in modules


def test_solve_loads_no_pandas():
    # OR-Tools' cp_model imports pandas for helpers the solver never uses;
    # elucidate._ortools imports it with a stand-in (ethyl acetate as above)
    code, _, modules = _modules(["solve", "--formula", "C4H8O2", "--h1",
                                 "4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)"])
    assert code in (0, None)
    assert "ortools.sat.python.cp_model" in modules
    assert _loaded(modules, ("pandas",)) == []


_STAND_IN_PROBE = """
import sys
from elucidate._ortools import load_cp_model
cp = load_cp_model()
assert "pandas" not in sys.modules
m = cp.CpModel()
x = m.new_int_var(0, 5, "x")
m.add(x >= 3)
m.minimize(x)
solver = cp.CpSolver()
assert solver.solve(m) == cp.OPTIMAL and solver.value(x) == 3
assert not isinstance(3, cp.pd.Series)
import pandas as pd  # the real package, not the stand-in
assert hasattr(pd, "DataFrame")
series = m.new_int_var_series("y", pd.Index(range(3)), 0, 2)  # cp_model's pandas helper still works
assert isinstance(series, pd.Series) and isinstance(series, cp.pd.Series) and len(series) == 3
print("ok")
"""


def test_cp_model_stand_in_defers_to_real_pandas():
    done = subprocess.run([sys.executable, "-c", _STAND_IN_PROBE], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    assert done.stdout.strip() == "ok"
