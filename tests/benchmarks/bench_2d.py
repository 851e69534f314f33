"""Benchmark: what 2D correlations do to the search on C10-C17 literature unknowns.

Run from the repository root::

    python tests/benchmarks/bench_2d.py [--time-limit S] [--only TEXT] [--jobs N] [--no-wrong]

Each case is solved three times: with its 1D data alone, with 1D + 2D, and
with 1D + 2D where one HMBC cross peak is deliberately wrong (its 1H end
moved to another signal, the first such move in list order that the true
structure cannot meet in the strict reading).  Per case the script prints structures built
(generated) with and without 2D and their ratio, time, whether the search
completed, the rank of the true structure, whether 1D alone is "hard" (at
least 100 candidates or incomplete), and what happened with the wrong peak:
``found r<rank> after <the relaxation steps listed>``, ``said`` (the output
names the wrong peak as met by no candidate) or ``LOST``.  Then a summary:
found %, top-1 %, median time, complete, median cut ratio.  Not collected by
pytest: timings are printed, never asserted.

Sources: ``data/unknowns_2d.toml`` (1D literature spectra recalled from
memory; cross peaks implied by each true structure, not measured: see
``make_2d_cases.py``) and the three cases below, whose cross peaks were
written by hand from the structure (HSQC one bond, COSY vicinal 3J H-H, HMBC
2J/3J H-C; common practice).
"""

from __future__ import annotations

import argparse
import statistics
import sys
import time
import tomllib
from concurrent.futures import ProcessPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

HAND_WRITTEN = [
    dict(
        name="4-phenylbutan-2-one",
        smiles="CC(=O)CCc1ccccc1",
        formula="C10H12O",
        solvent="CDCl3",
        # from memory (literature spectrum, CDCl3)
        h1="7.31-7.26 (m, 2H), 7.22-7.17 (m, 3H), 2.90 (t, J = 7.6 Hz, 2H), 2.76 (t, J = 7.6 Hz, 2H), 2.14 (s, 3H)",
        c13="207.9, 141.0, 128.5, 128.3, 126.1, 45.2, 30.1, 29.7",
        # implied by the structure (HSQC 2.14/30.1 is ambiguous against 29.7 and is left out by the reader)
        hsqc="7.28/128.5, 7.19/128.3, 7.19/126.1, 2.90/29.7, 2.76/45.2, 2.14/30.1",
        cosy="2.90/2.76",
        hmbc="2.14/207.9, 2.14/45.2, 2.76/207.9, 2.90/207.9, 2.90/141.0, 2.76/141.0, 2.90/128.3",
    ),
    dict(
        name="butyl benzoate",
        smiles="CCCCOC(=O)c1ccccc1",
        formula="C11H14O2",
        solvent="CDCl3",
        # from memory (literature spectrum, CDCl3)
        h1="8.04 (d, J = 7.6 Hz, 2H), 7.54 (t, J = 7.4 Hz, 1H), 7.43 (t, J = 7.6 Hz, 2H), 4.32 (t, J = 6.6 Hz, 2H), "
        "1.75 (quint, J = 6.8 Hz, 2H), 1.48 (sext, J = 7.4 Hz, 2H), 0.98 (t, J = 7.4 Hz, 3H)",
        c13="166.7, 132.8, 130.5, 129.5, 128.3, 64.8, 30.8, 19.3, 13.8",
        hsqc="8.04/129.5, 7.54/132.8, 7.43/128.3, 4.32/64.8, 1.75/30.8, 1.48/19.3, 0.98/13.8",
        cosy="8.04/7.43, 7.54/7.43, 4.32/1.75, 1.75/1.48, 1.48/0.98",
        hmbc="8.04/166.7, 4.32/166.7, 4.32/30.8, 4.32/19.3, 0.98/19.3, 0.98/30.8, 8.04/132.8, 7.43/130.5",
    ),
]
#: 1D alone is "hard" when it leaves at least this many candidates (or does not complete)
HARD_CANDIDATES = 100


def cases() -> list[dict]:
    data = tomllib.loads((ROOT / "tests/benchmarks/data/unknowns_2d.toml").read_text())["case"]
    return HAND_WRITTEN + data


def canonical(smiles: str) -> str:
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def wrong_hmbc(case: dict) -> tuple[str, str] | None:
    """(the HMBC list with one peak moved to another 1H signal, the moved peak's label)."""
    from elucidate.constrain.correlations import correlation_evidence
    from elucidate.constrain.evidence import Graph
    from elucidate.parse import load_problem

    base = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent=case["solvent"])
    truth = Graph.from_smiles(case["smiles"])
    items = [x.strip() for x in case["hmbc"].split(",") if x.strip()]
    for k, item in enumerate(items):
        h, c = item.split("/")
        for sig in base.h1:
            if abs(sig.shift - float(h)) < 0.005 or sig.broad:
                continue
            moved = f"{sig.shift:.2f}/{float(c):.1f}"
            if moved in items:
                continue
            listed = ", ".join(items[:k] + [moved] + items[k + 1:])
            extra = {key: case[key] for key in ("hsqc", "cosy") if case.get(key)}
            probe = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent=case["solvent"],
                                 hmbc=listed, **extra)
            if not any(c.label == f"HMBC {moved}" and c.matched for c in probe.correlations):
                continue
            # the strict reading turns the truth down: only a relaxation can find it
            if correlation_evidence(probe)[0].reason(truth) is not None:
                return listed, f"HMBC {sig.shift:.2f}/{float(c):.1f}"
    return None


def run(case: dict, mode: str, time_limit: float) -> dict:
    from elucidate.parse import load_problem
    from elucidate.report.correlations import unmet_by_all
    from elucidate.solve import solve

    extra = {k: case[k] for k in ("hsqc", "cosy", "hmbc") if case.get(k)} if mode != "1D" else {}
    wrong_label = ""
    if mode == "wrong":
        got = wrong_hmbc(case)
        if got is None:
            return {"skipped": True}
        extra["hmbc"], wrong_label = got
    problem = load_problem(formula=case["formula"], h1=case["h1"], c13=case["c13"], solvent=case["solvent"], **extra)
    start = time.monotonic()
    result = solve(problem, top=100000, time_limit_s=time_limit)
    elapsed = time.monotonic() - start
    truth = canonical(case["smiles"])
    rank = next((c.rank for c in result.candidates if canonical(c.smiles) == truth), None)
    counts = dict(result.counts)
    said = bool(wrong_label) and wrong_label in unmet_by_all(result)
    return dict(
        built=counts["generated"], elapsed=elapsed, complete=result.complete, rank=rank,
        ranked=len(result.candidates), relaxed=list(result.relaxed), wrong=wrong_label, said=said,
        used=sum(1 for c in problem.correlations if c.matched), peaks=len(problem.correlations),
    )


def _job(args: tuple) -> tuple:
    i, mode, limit = args
    return i, mode, run(cases()[i], mode, limit)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=20.0, help="per solve, seconds (default 20)")
    ap.add_argument("--only", default="", help="run cases whose name contains this text")
    ap.add_argument("--jobs", type=int, default=1, help="solves run side by side (default 1)")
    ap.add_argument("--no-wrong", action="store_true", help="skip the deliberately-wrong-peak runs")
    args = ap.parse_args(argv)
    all_cases = cases()
    chosen = [i for i, c in enumerate(all_cases) if args.only in c["name"]]
    modes = ("1D", "2D") + (() if args.no_wrong else ("wrong",))
    work = [(i, m, args.time_limit) for i in chosen for m in modes]
    out: dict[tuple[int, str], dict] = {}
    if args.jobs > 1:
        with ProcessPoolExecutor(args.jobs) as pool:
            for i, m, r in pool.map(_job, work):
                out[i, m] = r
    else:
        for w in work:
            i, m, r = _job(w)
            out[i, m] = r
    print(f"{'case':34} {'C':>3} {'1D built':>8} {'2D built':>8} {'cut':>7} {'1D s':>6} {'2D s':>6} "
          f"{'1D':>4} {'2D':>4} {'rank1D':>6} {'rank2D':>6} {'1D cand':>7} {'hard':>4} {'2D used':>7}  wrong peak")
    ratios, times, found, top1, complete, hard_n = [], [], 0, 0, 0, 0
    wrong_ok, wrong_n, wrong_incomplete = 0, 0, 0
    for i in chosen:
        case = all_cases[i]
        one, two = out[i, "1D"], out[i, "2D"]
        hard = one["ranked"] >= HARD_CANDIDATES or not one["complete"]
        hard_n += hard
        ratio = one["built"] / max(1, two["built"])
        ratios.append(ratio)
        times.append(two["elapsed"])
        found += two["rank"] is not None
        top1 += two["rank"] == 1
        complete += two["complete"]
        wtext = ""
        if "wrong" in modes:
            w = out[i, "wrong"]
            if w.get("skipped"):
                wtext = "no HMBC peak to move"
            else:
                wrong_n += 1
                if w["rank"] is not None and w["relaxed"]:
                    step = ("HMBC class dropped" if any("the HMBC cross peaks" in r for r in w["relaxed"])
                            else "4J/overlap reading" if any("4-bond" in r for r in w["relaxed"]) else "1D relaxed")
                    wtext = f"{w['wrong']}: found r{w['rank']} after {len(w['relaxed'])} listed step(s), {step}"
                    wrong_ok += 1
                elif w["said"]:
                    wtext = f"{w['wrong']}: said (met by no candidate)"
                    wrong_ok += 1
                elif w["rank"] is not None:
                    wtext = f"{w['wrong']}: found r{w['rank']} with no relaxation"
                    wrong_ok += 1
                elif not w["complete"]:
                    # the output says the search is incomplete and the answer may be missing
                    wtext = f"{w['wrong']}: not found, run incomplete (said so), {w['ranked']} ranked"
                    wrong_incomplete += 1
                else:
                    wtext = f"{w['wrong']}: LOST silently ({w['ranked']} ranked)"
        n_c = int(case["formula"][1:].split("H")[0])
        cut = f"{ratio:.1f}x" if one["complete"] else f">={ratio:.1f}x"
        print(f"{case['name'][:34]:34} {n_c:3d} {one['built']:8d} {two['built']:8d} {cut:>7} {one['elapsed']:6.1f} "
              f"{two['elapsed']:6.1f} {'yes' if one['complete'] else 'no':>4} {'yes' if two['complete'] else 'no':>4} "
              f"{one['rank'] or '-':>6} {two['rank'] or '-':>6} {one['ranked']:7d} {'yes' if hard else 'no':>4} "
              f"{two['used']:3d}/{two['peaks']:<3d}  {wtext}")
    n = len(chosen)
    if not n:
        return 0
    print(f"cases {n}  1D hard (>= {HARD_CANDIDATES} candidates or incomplete) {hard_n}/{n}")
    print(f"with 2D: found {found}/{n} ({100 * found / n:.0f} %)  top-1 {top1}/{n} ({100 * top1 / n:.0f} %)  "
          f"complete {complete}/{n}  median time {statistics.median(times):.2f} s  max {max(times):.2f} s")
    print(f"structures built 1D / 1D+2D: median cut ratio {statistics.median(ratios):.1f}x "
          f"(a lower bound where 1D did not complete)")
    if wrong_n:
        print(f"wrong cross peak: true structure found after a listed relaxation or the wrong peak named "
              f"in {wrong_ok}/{wrong_n}; incomplete runs (output says the answer may be missing) "
              f"{wrong_incomplete}; lost silently {wrong_n - wrong_ok - wrong_incomplete}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
