"""Benchmark: ``elucidate batch --workers N`` against the sum of single solve times.

Run from the repository root::

    python tests/benchmarks/bench_batch.py [--workers 2] [--time-limit S] [--max-cases N]

1. Solves every case of tests/benchmarks/data/unknowns.toml one after the
   other in this process with :func:`elucidate.solve.solve` and sums the
   wall times (the first case also pays for loading the tables once).
2. Runs ``elucidate batch`` on the same cases with ``--workers N`` into a
   fresh folder and measures its wall time (process start, worker start-up
   and warm-up of each worker included).

Prints both, the speed-up, and how many result files the batch wrote.  Not
collected by pytest: timings are printed, never asserted.  On a shared
machine the figures are noisy; run it when the machine is quiet.
"""

from __future__ import annotations

import argparse
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


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--time-limit", type=float, default=60.0, help="per-case time limit (s)")
    ap.add_argument("--max-cases", type=int, default=0, help="only the first N cases (0 = all)")
    ap.add_argument("--data", type=Path, default=DATA)
    args = ap.parse_args(argv)

    from elucidate.batch import CASE_KEYS, toml_text
    from elucidate.parse import problem_from_toml
    from elucidate.solve import solve

    cases = tomllib.loads(args.data.read_text(encoding="utf-8"))["case"]
    if args.max_cases:
        cases = cases[: args.max_cases]
    with tempfile.TemporaryDirectory(prefix="bench-batch-") as tmp:
        src = Path(tmp) / "cases.toml"
        src.write_text("".join("[[case]]\n" + toml_text(c) + "\n" for c in cases), encoding="utf-8")

        single = 0.0
        slowest = (0.0, "")
        for c in cases:
            text = toml_text({k: v for k, v in c.items() if k in CASE_KEYS})
            t0 = time.monotonic()
            solve(problem_from_toml(text, Path(tmp), c["name"]), time_limit_s=args.time_limit)
            dt = time.monotonic() - t0
            single += dt
            slowest = max(slowest, (dt, c["name"]))

        out = Path(tmp) / "out"
        t0 = time.monotonic()
        run = subprocess.run(
            [sys.executable, "-m", "elucidate", "batch", str(src), "--out", str(out),
             "--workers", str(args.workers), "--time-limit", f"{args.time_limit:g}"],
            capture_output=True, text=True, env={**os.environ, "PYTHONPATH": str(ROOT)},
        )
        batch = time.monotonic() - t0
        written = len(list(out.glob("*.json")))
        advised = 0
        for path in out.glob("*.json"):
            import json

            if json.loads(path.read_text(encoding="utf-8")).get("next_measurements"):
                advised += 1

    print(f"cases {len(cases)}  time limit {args.time_limit:g} s  cpus {os.cpu_count()}  "
          f"load average {os.getloadavg()[0]:.1f}")
    print(f"sum of single solve times   {single:8.1f} s   (slowest: {slowest[1]}, {slowest[0]:.1f} s)")
    print(f"batch --workers {args.workers:<2}          {batch:8.1f} s   exit code {run.returncode}, "
          f"{written} result files")
    print(f"cases with 'what to measure next' advice: {advised}")
    print(f"speed-up                    {single / batch if batch else float('nan'):8.2f} x")
    if run.returncode not in (0, 1):
        print(run.stderr.strip().splitlines()[-1] if run.stderr.strip() else "(no stderr)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
