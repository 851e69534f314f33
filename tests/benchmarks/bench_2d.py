"""Benchmark: what 2D correlations do to the search on C10-C11 literature unknowns.

Run from the repository root::

    python tests/benchmarks/bench_2d.py [--time-limit S] [--only TEXT]

Each case is solved twice, with its 1D data alone and with 1D + 2D, and the
script prints structures built (generated), structures turned down by the
2D check while building, wall time, whether the search completed, and the
rank of the true structure.  Not collected by pytest: timings are printed,
never asserted.

Sources: the 1H and 13C lists are literature spectra in CDCl3 recalled from
memory.  The cross peaks are NOT measured: they are the ones each known
structure implies in the standard experiments (common practice: HSQC one
bond, COSY vicinal 3J H-H, HMBC 2J/3J H-C), a subset a chemist would list,
written by hand from the structure.
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

CASES = [
    dict(
        name="4-phenylbutan-2-one",
        smiles="CC(=O)CCc1ccccc1",
        formula="C10H12O",
        # from memory (literature spectrum, CDCl3)
        h1="7.31-7.26 (m, 2H), 7.22-7.17 (m, 3H), 2.90 (t, J = 7.6 Hz, 2H), 2.76 (t, J = 7.6 Hz, 2H), 2.14 (s, 3H)",
        c13="207.9, 141.0, 128.5, 128.3, 126.1, 45.2, 30.1, 29.7",
        # implied by the structure (HSQC 2.14/30.1 is ambiguous against 29.7 and is left out by the reader)
        hsqc="7.28/128.5, 7.19/128.3, 7.19/126.1, 2.90/29.7, 2.76/45.2, 2.14/30.1",
        cosy="2.90/2.76",
        hmbc="2.14/207.9, 2.14/45.2, 2.76/207.9, 2.90/207.9, 2.90/141.0, 2.76/141.0, 2.90/128.3",
    ),
    dict(
        name="ethyl cinnamate",
        smiles="CCOC(=O)/C=C/c1ccccc1",
        formula="C11H12O2",
        # from memory (literature spectrum, CDCl3)
        h1="7.69 (d, J = 16.0 Hz, 1H), 7.55-7.50 (m, 2H), 7.40-7.36 (m, 3H), 6.44 (d, J = 16.0 Hz, 1H), "
        "4.27 (q, J = 7.1 Hz, 2H), 1.34 (t, J = 7.1 Hz, 3H)",
        c13="167.0, 144.6, 134.5, 130.2, 128.9, 128.0, 118.3, 60.5, 14.3",
        hsqc="7.69/144.6, 6.44/118.3, 7.52/128.0, 7.38/128.9, 7.38/130.2, 4.27/60.5, 1.34/14.3",
        cosy="7.69/6.44, 4.27/1.34",
        hmbc="7.69/167.0, 6.44/167.0, 6.44/134.5, 7.69/128.0, 4.27/167.0, 1.34/60.5, 7.52/144.6",
    ),
    dict(
        name="butyl benzoate",
        smiles="CCCCOC(=O)c1ccccc1",
        formula="C11H14O2",
        # from memory (literature spectrum, CDCl3)
        h1="8.04 (d, J = 7.6 Hz, 2H), 7.54 (t, J = 7.4 Hz, 1H), 7.43 (t, J = 7.6 Hz, 2H), 4.32 (t, J = 6.6 Hz, 2H), "
        "1.75 (quint, J = 6.8 Hz, 2H), 1.48 (sext, J = 7.4 Hz, 2H), 0.98 (t, J = 7.4 Hz, 3H)",
        c13="166.7, 132.8, 130.5, 129.5, 128.3, 64.8, 30.8, 19.3, 13.8",
        hsqc="8.04/129.5, 7.54/132.8, 7.43/128.3, 4.32/64.8, 1.75/30.8, 1.48/19.3, 0.98/13.8",
        cosy="8.04/7.43, 7.54/7.43, 4.32/1.75, 1.75/1.48, 1.48/0.98",
        hmbc="8.04/166.7, 4.32/166.7, 4.32/30.8, 4.32/19.3, 0.98/19.3, 0.98/30.8, 8.04/132.8, 7.43/130.5",
    ),
]


def canonical(smiles: str) -> str:
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def run(case: dict, two_d: bool, time_limit: float) -> tuple:
    from elucidate.parse import load_problem
    from elucidate.solve import solve

    extra = {k: case[k] for k in ("hsqc", "cosy", "hmbc")} if two_d else {}
    problem = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent="CDCl3", **extra)
    start = time.monotonic()
    result = solve(problem, top=100000, time_limit_s=time_limit)
    elapsed = time.monotonic() - start
    truth = canonical(case["smiles"])
    rank = next((c.rank for c in result.candidates if canonical(c.smiles) == truth), None)
    counts = dict(result.counts)
    turned = sum(n for k, n in result.rejected_counts if k.startswith(("HSQC", "COSY", "HMBC")))
    return counts["generated"], turned, elapsed, result.complete, rank, len(result.candidates), len(result.relaxed)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=60.0, help="per solve, seconds (default 60)")
    ap.add_argument("--only", default="", help="run cases whose name contains this text")
    args = ap.parse_args(argv)
    print(f"{'case':22} {'data':6} {'built':>7} {'2D-out':>7} {'time s':>7} {'complete':>8} {'rank':>5} {'ranked':>7} {'relax':>5}")
    total = {False: 0.0, True: 0.0}
    for case in CASES:
        if args.only and args.only not in case["name"]:
            continue
        for two_d in (False, True):
            built, turned, elapsed, complete, rank, ranked, relaxed = run(case, two_d, args.time_limit)
            total[two_d] += elapsed
            print(f"{case['name']:22} {'1D+2D' if two_d else '1D':6} {built:7d} {turned:7d} {elapsed:7.2f} "
                  f"{'yes' if complete else 'no':>8} {rank if rank else '-':>5} {ranked:7d} {relaxed:5d}")
    print(f"total time  1D {total[False]:.1f} s   1D+2D {total[True]:.1f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
