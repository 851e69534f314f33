"""Benchmark: solve the literature unknowns and report where the truth ranks.

Run from the repository root::

    python tests/benchmarks/bench_solve.py [--only TEXT] [--time-limit S] [--max-cases N]

Reads tests/benchmarks/data/unknowns.toml (name, formula, h1, c13, solvent,
smiles, group, source per case), runs ``elucidate.solve.solve`` on each and
prints, per case, the rank of the true structure among all ranked
candidates, then found / top-1 / top-3 rates and median / max wall time.
Not collected by pytest: timings are printed, never asserted.
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

DATA = ROOT / "tests" / "benchmarks" / "data" / "unknowns.toml"


def canonical(smiles: str) -> str:
    """Canonical constitution: stereo dropped (solve ranks constitutions)."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--only", default="", help="run cases whose name or formula contains this text")
    ap.add_argument("--time-limit", type=float, default=120.0, help="per-case time limit (s)")
    ap.add_argument("--max-cases", type=int, default=0, help="stop after this many cases (0 = all)")
    ap.add_argument("--data", type=Path, default=DATA)
    args = ap.parse_args(argv)

    from elucidate.parse import load_problem
    from elucidate.solve import _result, _solve

    cases = tomllib.loads(args.data.read_text(encoding="utf-8"))["case"]
    if args.only:
        cases = [c for c in cases if args.only in c["name"] or args.only in c["formula"]]
    if args.max_cases:
        cases = cases[: args.max_cases]

    print(f"{'case':<34} {'formula':<10} {'rank':>5} {'of':>6} {'complete':>8} {'relax':>5} {'time s':>7}  top-1 if wrong")
    times: list[float] = []
    ranks: list[int | None] = []
    incomplete = 0
    for case in cases:
        problem = load_problem(
            formula=case["formula"], h1=case["h1"], c13=case.get("c13"), solvent=case.get("solvent")
        )
        truth = canonical(case["smiles"])
        t0 = time.perf_counter()
        # what solve(problem, top=10) does, keeping the whole ranking: beyond
        # the top ten, structures are ordered by their cheap bound
        run, ranked = _solve(problem, args.time_limit, None, 10)
        result = _result(run, ranked, 10)
        dt = time.perf_counter() - t0
        rank = next((i + 1 for i, e in enumerate(ranked) if e.smiles == truth), None)
        times.append(dt)
        ranks.append(rank)
        incomplete += not result.complete
        first = ranked[0].smiles if ranked else "-"
        shown = "" if rank == 1 else first
        print(
            f"{case['name'][:34]:<34} {case['formula']:<10} {rank if rank else '-':>5} "
            f"{len(ranked):>6} {str(result.complete):>8} {len(result.relaxed):>5} {dt:7.2f}  {shown}",
            flush=True,
        )
    n = len(cases)
    if not n:
        print("no cases")
        return 1
    found = sum(r is not None for r in ranks)
    top1 = sum(r == 1 for r in ranks)
    top3 = sum(r is not None and r <= 3 for r in ranks)
    print()
    print(f"cases {n}  found {found}/{n} ({100 * found / n:.0f} %)  top-1 {top1}/{n} ({100 * top1 / n:.0f} %)  "
          f"top-3 {top3}/{n} ({100 * top3 / n:.0f} %)  incomplete {incomplete}")
    print(f"time  median {statistics.median(times):.2f} s  max {max(times):.2f} s  total {sum(times):.1f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
