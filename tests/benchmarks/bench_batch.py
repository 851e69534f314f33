"""Benchmark: ``elucidate batch --workers N`` against single solve runs, and
whether the "what to measure next" advice separates the close candidates.

Run from the repository root::

    python tests/benchmarks/bench_batch.py [--workers 2] [--time-limit S] [--max-cases N]
                                           [--carbon with|without] [--single cli|inprocess|both|none]

1. Single runs, one after the other: by default (``--single cli``) one
   ``elucidate solve CASE.toml`` process per case, as a user runs them, and
   the sum of their wall times; ``--single inprocess`` instead calls
   :func:`elucidate.solve.solve` per case in this process (no start-up
   paid per case: a stricter reference); ``both`` measures both.
2. ``elucidate batch`` on the same cases with ``--workers N`` into a fresh
   folder, timed as a whole (process start, worker start-up and warm-up
   included).
3. Advice: among the batch's result files, the cases whose top candidates
   are close (the result lists next measurements) and, of those, how many
   have a first listed measurement that separates the best two: its figure
   for candidates 1 and 2 (``top_pair``: the predicted difference divided
   by the prediction's typical error, or the fixed weight of a
   present/absent observation) exceeds 1 — the predicted difference is
   larger than the prediction's typical error.

``--carbon without`` drops the 13C lists (the advice then also weighs 13C
shifts).  Not collected by pytest: timings are printed, never asserted.  On
a shared machine the figures are noisy; run it when the machine is quiet.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

DATA = ROOT / "tests" / "benchmarks" / "data" / "unknowns.toml"
#: The advice counts as separating when its figure is above this (one typical error).
SEPARATING_FIGURE = 1.0


def _cases(path: Path, carbon: bool, max_cases: int) -> list[dict]:
    from elucidate.batch import CASE_KEYS

    cases = tomllib.loads(path.read_text(encoding="utf-8"))["case"]
    if max_cases:
        cases = cases[:max_cases]
    keep = [k for k in CASE_KEYS if carbon or k not in ("c13", "c13_complete")]
    return [{k: v for k, v in c.items() if k in keep} for c in cases]


def _single_cli(cases: list[dict], folder: Path, limit: float) -> tuple[float, tuple[float, str], int]:
    from elucidate.batch import toml_text

    total, slowest, failed = 0.0, (0.0, ""), 0
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    for c in cases:
        path = folder / f"{c['name']}.toml"
        path.write_text(toml_text(c), encoding="utf-8")
        t0 = time.monotonic()
        run = subprocess.run([sys.executable, "-m", "elucidate", "solve", str(path), "--time-limit", f"{limit:g}"],
                             capture_output=True, text=True, env=env)
        dt = time.monotonic() - t0
        failed += run.returncode not in (0, 1)
        total += dt
        slowest = max(slowest, (dt, c["name"]))
    return total, slowest, failed


def _single_inprocess(cases: list[dict], folder: Path, limit: float) -> tuple[float, tuple[float, str], int]:
    from elucidate.batch import toml_text
    from elucidate.parse import problem_from_toml
    from elucidate.solve import solve

    total, slowest = 0.0, (0.0, "")
    for c in cases:
        t0 = time.monotonic()
        solve(problem_from_toml(toml_text(c), folder, c["name"]), time_limit_s=limit)
        dt = time.monotonic() - t0
        total += dt
        slowest = max(slowest, (dt, c["name"]))
    return total, slowest, 0


def _advice(out: Path) -> tuple[int, int, list[str]]:
    """(cases with advice, of which the first measurement separates, the others' names)."""
    advised = separated = 0
    missed = []
    for path in sorted(out.glob("*.json")):
        doc = json.loads(path.read_text(encoding="utf-8"))
        found = doc.get("next_measurements") or []
        if not found:
            continue
        advised += 1
        if found[0].get("top_pair", found[0]["discrimination"]) > SEPARATING_FIGURE:
            separated += 1
        else:
            missed.append(f"{path.stem} ({found[0]['experiment']} {found[0].get('top_pair', 0.0):.2f})")
    return advised, separated, missed


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--time-limit", type=float, default=60.0, help="per-case time limit (s)")
    ap.add_argument("--max-cases", type=int, default=0, help="only the first N cases (0 = all)")
    ap.add_argument("--data", type=Path, default=DATA)
    ap.add_argument("--carbon", choices=("with", "without"), default="with")
    ap.add_argument("--single", choices=("cli", "inprocess", "both", "none"), default="cli",
                    help="reference single runs (none: only the batch and its advice)")
    args = ap.parse_args(argv)

    from elucidate.batch import toml_text

    cases = _cases(args.data, args.carbon == "with", args.max_cases)
    print(f"cases {len(cases)}  13C {args.carbon}  time limit {args.time_limit:g} s  cpus {os.cpu_count()}  "
          f"load average {os.getloadavg()[0]:.1f}")
    with tempfile.TemporaryDirectory(prefix="bench-batch-") as tmp:
        folder = Path(tmp)
        singles = {}
        if args.single in ("cli", "both"):
            singles["elucidate solve, one process per case"] = _single_cli(cases, folder, args.time_limit)
        if args.single in ("inprocess", "both"):
            singles["solve() in one process"] = _single_inprocess(cases, folder, args.time_limit)

        src = folder / "cases.toml"
        src.write_text("".join("[[case]]\n" + toml_text(c) + "\n" for c in cases), encoding="utf-8")
        out = folder / "out"
        t0 = time.monotonic()
        run = subprocess.run(
            [sys.executable, "-m", "elucidate", "batch", str(src), "--out", str(out),
             "--workers", str(args.workers), "--time-limit", f"{args.time_limit:g}"],
            capture_output=True, text=True, env={**os.environ, "PYTHONPATH": str(ROOT)},
        )
        batch = time.monotonic() - t0
        written = len(list(out.glob("*.json")))
        summary = (out / "summary.csv").is_file()
        advised, separated, missed = _advice(out)

    for label, (total, slowest, failed) in singles.items():
        print(f"sum of single runs ({label}): {total:8.1f} s   slowest {slowest[1]} {slowest[0]:.1f} s"
              + (f"   {failed} failed" if failed else ""))
    print(f"batch --workers {args.workers}: {batch:8.1f} s   exit code {run.returncode}, {written} result files, "
          f"summary.csv {'written' if summary else 'MISSING'}")
    for label, (total, _, _) in singles.items():
        print(f"batch / sum of single runs ({label}): {batch / total if total else float('nan'):.2f}")
    share = f"{100 * separated / advised:.0f} %" if advised else "n/a"
    print(f"close top candidates (advice given): {advised} cases; first measurement separates "
          f"(figure > {SEPARATING_FIGURE:g}): {separated} = {share}")
    if missed:
        print("  not separated by the first measurement: " + ", ".join(missed))
    if run.returncode not in (0, 1):
        print(run.stderr.strip().splitlines()[-1] if run.stderr.strip() else "(no stderr)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
