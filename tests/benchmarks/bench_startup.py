"""Benchmark: command start-up times, and ``--workers 2`` against one process.

Run from the repository root::

    python tests/benchmarks/bench_startup.py                     # both parts
    python tests/benchmarks/bench_startup.py --part startup --repeat 7
    python tests/benchmarks/bench_startup.py --part workers --only "diethyl malonate" --only p-xylene

**Start-up.**  Wall time of fresh ``elucidate`` processes (``--help``, ``read
cases/u014.toml``, ``solve`` of a C4 unknown, ethyl acetate from
tests/benchmarks/data/unknowns.toml) next to two references measured in the
same run, interleaved with them: ``python -c pass`` (the interpreter alone)
and ``python -c "import rdkit.Chem"`` (the cheapest thing the solver cannot
do without).  Each figure is the median of ``--repeat`` runs and is printed
in seconds and as ratios to both references, so it can be compared across
loads of a shared machine.  The modules are compiled to bytecode first (as
``pip install`` does), and PYTHONDONTWRITEBYTECODE is ignored for the
children.

**Workers.**  The slowest unknowns of tests/benchmarks/data/unknowns.toml
(``--only`` picks them by name; default: the three slowest of the last
single-process benchmark run, see DEVELOPERS.md) are solved by ``elucidate
solve --json`` with ``--workers 1`` and ``--workers 2``, alternately,
``--rounds`` times each, each in a fresh process (a solve in a process that
already solved the case would find its skeletons and predictions cached).
The script prints the median wall times, the speed-up, the CPU time of all
processes, and whether the JSON documents are byte-identical (they must
be: a difference is printed as FAILED and the exit code is 1).

Not collected by pytest: timings are printed, never asserted.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

UNKNOWNS = ROOT / "tests" / "benchmarks" / "data" / "unknowns.toml"
#: The three slowest complete cases of the single-process bench_solve run
#: without 13C (60 s limit, 3 Dec 2026): 15.7, 12.9 and 12.1 s.
SLOWEST = ("diethyl malonate", "p-xylene", "nitrobenzene")
#: A C4 unknown for the solve start-up figure.
C4_CASE = "ethyl acetate"

__all__ = ["main"]


def _case(name: str) -> dict:
    cases = tomllib.loads(UNKNOWNS.read_text(encoding="utf-8"))["case"]
    for case in cases:
        if case["name"] == name:
            return case
    raise SystemExit(f"--only {name!r}: no such case in {UNKNOWNS}")


def _timed(argv: list[str], env: dict) -> float:
    t0 = time.perf_counter()
    done = subprocess.run(argv, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    dt = time.perf_counter() - t0
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(argv)}: exit {done.returncode}: {done.stderr.strip()[:300]}")
    return dt


def startup(repeat: int) -> None:
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "elucidate")], check=True, env=env)
    case = _case(C4_CASE)
    cli = [sys.executable, "-m", "elucidate"]
    runs = {
        "python -c pass": [sys.executable, "-c", "pass"],
        "python -c 'import rdkit.Chem'": [sys.executable, "-c", "import rdkit.Chem"],
        "elucidate --help": cli + ["--help"],
        "elucidate read cases/u014.toml": cli + ["read", "cases/u014.toml"],
        f"elucidate solve ({C4_CASE}, {case['formula']})": cli
        + ["solve", "--formula", case["formula"], "--h1", case["h1"], "--solvent", case.get("solvent", "CDCl3")],
    }
    for argv in runs.values():  # warm the file cache and the bytecode
        _timed(argv, env)
    times: dict[str, list[float]] = {k: [] for k in runs}
    for _ in range(repeat):
        for label, argv in runs.items():  # interleaved: load changes hit all alike
            times[label].append(_timed(argv, env))
    med = {k: statistics.median(v) for k, v in times.items()}
    base, rdkit = med["python -c pass"], med["python -c 'import rdkit.Chem'"]
    print(f"start-up, median of {repeat} interleaved runs (wall)")
    print(f"{'command':48} {'s':>7} {'x pass':>7} {'x rdkit':>8} {'min s':>7}")
    for label in runs:
        print(f"{label:48} {med[label]:7.3f} {med[label] / base:7.2f} {med[label] / rdkit:8.2f} {min(times[label]):7.3f}")


def _cpu_children() -> float:
    """CPU seconds of ended, reaped child processes (with their own reaped
    children: the pool's workers)."""
    import resource

    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return kids.ru_utime + kids.ru_stime


def _solve_cli(case_file: Path, workers: int, time_limit: float, env: dict) -> tuple[bytes, float, float]:
    argv = [sys.executable, "-m", "elucidate", "solve", str(case_file), "--json", "--workers", str(workers),
            "--time-limit", f"{time_limit:g}"]
    c0, t0 = _cpu_children(), time.perf_counter()
    done = subprocess.run(argv, cwd=ROOT, env=env, capture_output=True)
    dt, cpu = time.perf_counter() - t0, _cpu_children() - c0
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(argv)}: exit {done.returncode}: {done.stderr.decode()[-300:]}")
    return done.stdout, dt, cpu


def workers(names: list[str], rounds: int, time_limit: float) -> bool:
    import tempfile

    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "elucidate")], check=True, env=env)
    print(f"elucidate solve CASE --json --workers 1 / 2, without 13C, {rounds} alternating rounds, fresh process each,")
    print(f"time limit {time_limit:g} s.  wall: median s; cpu: CPU s of all processes of the run; ideal: 2 x cpu(1) /")
    print("cpu(2), the speed-up if both processes had a free core throughout (the machine is shared: wall ratios")
    print("vary with its load, shown as the 1-minute load average)")
    print(f"{'case':20} {'formula':8} {'wall 1':>7} {'wall 2':>7} {'speed-up':>8} {'cpu 1':>6} {'cpu 2':>6} "
          f"{'ideal':>6} {'load':>5}  same bytes")
    ok = True
    with tempfile.TemporaryDirectory() as tmp:
        for name in names:
            case = _case(name)
            case_file = Path(tmp) / "case.toml"
            case_file.write_text(
                f"formula = {json.dumps(case['formula'])}\nh1 = {json.dumps(case['h1'])}\n"
                f"solvent = {json.dumps(case.get('solvent', 'CDCl3'))}\n", encoding="utf-8")
            one: list[tuple[float, float]] = []
            two: list[tuple[float, float]] = []
            docs: set[bytes] = set()
            loads = []
            for _ in range(rounds):
                for n, into in ((1, one), (2, two)):
                    doc, dt, cpu = _solve_cli(case_file, n, time_limit, env)
                    docs.add(doc)
                    into.append((dt, cpu))
                    loads.append(os.getloadavg()[0])
            same = len(docs) == 1
            complete = all(json.loads(d).get("complete") for d in docs)
            ok = ok and same
            a, b = statistics.median(t for t, _ in one), statistics.median(t for t, _ in two)
            ca, cb = statistics.median(c for _, c in one), statistics.median(c for _, c in two)
            print(f"{name:20} {case['formula']:8} {a:7.2f} {b:7.2f} {a / b:7.2f}x {ca:6.2f} {cb:6.2f} "
                  f"{2 * ca / cb:5.2f}x {statistics.median(loads):5.1f}  "
                  f"{'yes' if same else 'FAILED: output differs'}{'' if complete else ' (incomplete: hit the time limit)'}")
    return ok


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--part", choices=("startup", "workers", "both"), default="both")
    ap.add_argument("--repeat", type=int, default=5, help="runs per start-up figure (default 5)")
    ap.add_argument("--only", action="append", default=None,
                    help="unknown (by name, unknowns.toml) for the workers part; may be given several times")
    ap.add_argument("--rounds", type=int, default=2, help="solves per worker count and case (default 2)")
    ap.add_argument("--time-limit", type=float, default=120.0, help="per solve, s (default 120)")
    args = ap.parse_args(argv)
    if args.repeat < 1 or args.rounds < 1 or args.time_limit <= 0:
        print("--repeat and --rounds must be at least 1, --time-limit positive", file=sys.stderr)
        return 2
    ok = True
    if args.part in ("startup", "both"):
        startup(args.repeat)
    if args.part in ("workers", "both"):
        if args.part == "both":
            print()
        ok = workers(args.only or list(SLOWEST), args.rounds, args.time_limit)
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
