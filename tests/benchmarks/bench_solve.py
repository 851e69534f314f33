"""Benchmark: solve the literature unknowns and report where the truth ranks.

Run from the repository root::

    python tests/benchmarks/bench_solve.py                      # both files, with and without 13C
    python tests/benchmarks/bench_solve.py --band C15-C20 --carbon with --jobs 2
    python tests/benchmarks/bench_solve.py --only phenacetin --only carvone --time-limit 30
    python tests/benchmarks/bench_solve.py --data tests/benchmarks/data/unknowns.toml --time-limit 60

Reads the case files (``--data``, may be given several times; default
tests/benchmarks/data/unknowns.toml and unknowns_large.toml: name, formula,
h1, c13, solvent, smiles, group, source per case) and runs the public
``elucidate.solve.solve`` on each, once with the 13C list and once without
(``--carbon``).  Per case it prints the rank of the true structure among ALL
ranked candidates (not only the top ten returned), how many were ranked,
whether the search was complete, the relaxations taken and the case's wall
time.  Then one table per 13C setting with, per size band (<= C9, C10-C14,
C15-C20): cases, found, top-1, top-3, complete, median and max time.

Cases run in worker processes, ``--jobs N`` of them at a time (default 1);
every time printed is that case's own wall time (on a shared 2-core machine
parallel runs slow each other down).  A case that overruns its time limit by
far (1.5 x limit + 30 s) is stopped, its worker replaced, and the case
counted as not found.  Not collected by pytest: timings are printed,
never asserted.
"""

from __future__ import annotations

import argparse
import multiprocessing as mp
import statistics
import sys
import time
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

DATA_DIR = ROOT / "tests" / "benchmarks" / "data"
DEFAULT_DATA = (DATA_DIR / "unknowns.toml", DATA_DIR / "unknowns_large.toml")

#: Size bands by carbon count: (name used by --band, label printed, lowest C, highest C).
BANDS: tuple[tuple[str, str, int, int], ...] = (
    ("C1-C9", "<= C9", 0, 9),
    ("C10-C14", "C10-C14", 10, 14),
    ("C15-C20", "C15-C20", 15, 20),
    ("C21+", "> C20", 21, 10**6),
)
#: Candidates returned by solve (the CLI default); the search prunes against this top.
TOP = 10
#: A case still running this long past its own limit is stopped (seconds, and a factor).
GRACE_S = 30.0
GRACE_FACTOR = 1.5

__all__ = ["main"]


@dataclass(frozen=True)
class Job:
    """One case in one 13C setting."""

    index: int
    name: str
    formula: str
    h1: str
    c13: str | None
    solvent: str | None
    smiles: str
    carbons: int
    band: str
    carbon: str  # "with" or "without"
    time_limit: float


@dataclass(frozen=True)
class Outcome:
    """What one job gave."""

    job: Job
    rank: int | None
    ranked: int
    complete: bool
    relaxed: int
    seconds: float
    top1: str
    error: str = ""


# ------------------------------------------------------------------ cases


def canonical(smiles: str) -> str:
    """Canonical constitution: stereo dropped (solve ranks constitutions)."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    Chem.RemoveStereochemistry(mol)
    return Chem.MolToSmiles(mol)


def carbon_count(smiles: str) -> int:
    from rdkit import Chem

    return sum(1 for a in Chem.MolFromSmiles(smiles).GetAtoms() if a.GetSymbol() == "C")


def band_of(carbons: int) -> str:
    return next(name for name, _, lo, hi in BANDS if lo <= carbons <= hi)


def load_cases(paths: list[Path]) -> list[dict[str, Any]]:
    cases: list[dict[str, Any]] = []
    for path in paths:
        try:
            cases.extend(tomllib.loads(path.read_text(encoding="utf-8"))["case"])
        except (OSError, tomllib.TOMLDecodeError, KeyError) as exc:
            raise SystemExit(f"--data {path}: cannot read cases ({exc})") from None
    return cases


def make_jobs(cases: list[dict[str, Any]], args: argparse.Namespace) -> tuple[dict[str, list[Job]], int]:
    """Jobs per 13C setting after the filters, and the number of cases chosen."""
    chosen = []
    for case in cases:
        if args.only and not any(t in case["name"] or t in case["formula"] for t in args.only):
            continue
        n_c = carbon_count(case["smiles"])
        if args.band and band_of(n_c) not in args.band:
            continue
        chosen.append((case, n_c))
    if args.max_cases:
        chosen = chosen[: args.max_cases]
    settings = ["with", "without"] if args.carbon == "both" else [args.carbon]
    jobs: dict[str, list[Job]] = {}
    for setting in settings:
        jobs[setting] = [
            Job(
                index=i,
                name=case["name"],
                formula=case["formula"],
                h1=case["h1"],
                c13=case.get("c13") if setting == "with" else None,
                solvent=case.get("solvent"),
                smiles=case["smiles"],
                carbons=n_c,
                band=band_of(n_c),
                carbon=setting,
                time_limit=args.time_limit,
            )
            for i, (case, n_c) in enumerate(chosen)
            if setting == "without" or case.get("c13")
        ]
    return jobs, len(chosen)


# ------------------------------------------------------------------ one case


def run_job(job: Job) -> Outcome:
    """Solve one case through the public ``solve``; rank the truth among all ranked."""
    import elucidate.solve as solve_mod
    from elucidate.parse import load_problem

    truth = canonical(job.smiles)
    seen: list[list[str]] = []
    inner = getattr(solve_mod, "_solve", None)

    def recording(*a: Any, **kw: Any) -> Any:
        # solve() returns only the top ten; the full ranking (beyond the top
        # ten, ordered by the cheap bound) is what _solve hands to _result
        run, ranked = inner(*a, **kw)
        seen.append([e.smiles for e in ranked])
        return run, ranked

    t0 = time.perf_counter()
    try:
        problem = load_problem(formula=job.formula, h1=job.h1, c13=job.c13, solvent=job.solvent)
        if inner is not None:
            solve_mod._solve = recording
        try:
            result = solve_mod.solve(problem, top=TOP, time_limit_s=job.time_limit)
        finally:
            if inner is not None:
                solve_mod._solve = inner
    except Exception as exc:  # a bad case or a solver failure: report it, go on
        return Outcome(job, None, 0, False, 0, time.perf_counter() - t0, "-", f"{type(exc).__name__}: {exc}")
    dt = time.perf_counter() - t0
    order = seen[-1] if seen else [c.smiles for c in result.candidates]
    rank = next((i + 1 for i, smi in enumerate(order) if smi == truth), None)
    first = result.candidates[0].smiles if result.candidates else "-"
    return Outcome(job, rank, len(order), result.complete, len(result.relaxed), dt, first)


def _warm_up() -> None:
    """Pay imports and lazily loaded tables before any clock starts.

    Every worker process (and the sequential run, once) solves ethyl acetate
    first, so no case's time includes loading rdkit, ortools or the data
    tables.  Peak list: ethyl acetate in CDCl3 as in unknowns.toml (Gottlieb,
    Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512, recalled from memory).
    """
    from elucidate.parse import load_problem
    from elucidate.solve import solve

    problem = load_problem(
        formula="C4H8O2",
        h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
        c13="171.4, 60.5, 21.0, 14.2",
        solvent="CDCl3",
    )
    solve(problem, top=TOP, time_limit_s=30.0)


def _worker(conn: Any) -> None:
    """Worker process: warm up, say ready, then solve the jobs it is sent until None."""
    _warm_up()
    conn.send("ready")
    while True:
        job = conn.recv()
        if job is None:
            break
        conn.send(run_job(job))
    conn.close()


@dataclass
class _Slot:
    """One worker process and the job it is on (None: idle, or still warming up)."""

    proc: Any
    conn: Any
    ready: bool = False
    job: Job | None = None
    started: float = 0.0


def run_all(jobs: list[Job], n_jobs: int, print_line: Any) -> list[Outcome]:
    """Run jobs on ``n_jobs`` worker processes; print each line in case order.

    Each case runs in a worker process, so one that overruns its time limit
    by far (``time_limit * GRACE_FACTOR + GRACE_S``) can be stopped: its
    worker is terminated (by its own handle) and a fresh one takes its place.
    """
    ctx = mp.get_context("spawn")
    pending = list(jobs)
    slots: list[_Slot] = []
    done: dict[int, Outcome] = {}
    order = [j.index for j in jobs]
    next_print = 0

    def spawn() -> _Slot:
        parent, child = ctx.Pipe()
        proc = ctx.Process(target=_worker, args=(child,), daemon=True)
        proc.start()
        child.close()
        return _Slot(proc, parent)

    def retire(slot: _Slot, stop: bool) -> None:
        if stop:
            slot.proc.terminate()
        slot.proc.join(5)
        slot.conn.close()
        slots.remove(slot)

    try:
        while len(done) < len(jobs):
            while len(slots) < min(n_jobs, len(pending) + sum(s.job is not None for s in slots)):
                slots.append(spawn())
            for slot in list(slots):
                outcome = None
                job = slot.job
                if slot.conn.poll():
                    try:
                        message = slot.conn.recv()
                    except EOFError:
                        message = None
                    if message == "ready":
                        slot.ready = True
                    elif isinstance(message, Outcome):
                        outcome, slot.job = message, None
                    else:
                        if job is not None:
                            outcome = Outcome(job, None, 0, False, 0, time.perf_counter() - slot.started, "-",
                                              "worker died")
                        retire(slot, stop=True)
                        slot = None
                elif not slot.proc.is_alive():
                    if job is not None:
                        outcome = Outcome(job, None, 0, False, 0, time.perf_counter() - slot.started, "-",
                                          f"worker exited ({slot.proc.exitcode})")
                    retire(slot, stop=False)
                    slot = None
                elif job is not None and time.perf_counter() - slot.started > job.time_limit * GRACE_FACTOR + GRACE_S:
                    outcome = Outcome(job, None, 0, False, 0, time.perf_counter() - slot.started, "-",
                                      "stopped: far past its time limit")
                    retire(slot, stop=True)
                    slot = None
                if outcome is not None:
                    done[outcome.job.index] = outcome
                if slot is not None and slot.ready and slot.job is None and pending:
                    slot.job = pending.pop(0)
                    slot.started = time.perf_counter()
                    slot.conn.send(slot.job)
            while next_print < len(order) and order[next_print] in done:
                print_line(done[order[next_print]])
                next_print += 1
            time.sleep(0.02)
    finally:
        for slot in list(slots):
            try:
                slot.conn.send(None)
            except (OSError, ValueError):
                pass
            slot.proc.join(5)
            if slot.proc.is_alive():
                slot.proc.terminate()
                slot.proc.join(5)
    return [done[j.index] for j in jobs]


# ------------------------------------------------------------------ output


HEADER = (
    f"{'case':<34} {'formula':<11} {'C':>2} {'13C':>7} {'rank':>5} {'of':>6} "
    f"{'complete':>8} {'relax':>5} {'time s':>7}  top-1 if wrong"
)


def case_line(o: Outcome) -> str:
    j = o.job
    if o.error:
        tail = f"error: {o.error}"
    else:
        tail = "" if o.rank == 1 else o.top1
    return (
        f"{j.name[:34]:<34} {j.formula:<11} {j.carbons:>2} {j.carbon:>7} {o.rank if o.rank else '-':>5} "
        f"{o.ranked:>6} {str(o.complete):>8} {o.relaxed:>5} {o.seconds:7.2f}  {tail}"
    )


def _pct(k: int, n: int) -> str:
    return f"{k}/{n} ({100 * k / n:.0f} %)" if n else "-"


def band_table(setting: str, outcomes: list[Outcome], skipped: int) -> list[str]:
    title = f"13C {setting}" + (f" ({skipped} cases without a 13C list not run)" if skipped else "")
    lines = [
        title,
        f"{'band':<8} {'cases':>5} {'found':>13} {'top-1':>13} {'top-3':>13} {'complete':>13} {'median s':>9} {'max s':>8}",
    ]
    rows = [(label, [o for o in outcomes if o.job.band == name]) for name, label, _, _ in BANDS]
    rows.append(("all", outcomes))
    for label, group in rows:
        n = len(group)
        if not n and label != "all":
            continue
        if not n:
            lines.append(f"{label:<8} {0:>5}")
            continue
        found = sum(o.rank is not None for o in group)
        top1 = sum(o.rank == 1 for o in group)
        top3 = sum(o.rank is not None and o.rank <= 3 for o in group)
        complete = sum(o.complete for o in group)
        times = [o.seconds for o in group]
        lines.append(
            f"{label:<8} {n:>5} {_pct(found, n):>13} {_pct(top1, n):>13} {_pct(top3, n):>13} "
            f"{_pct(complete, n):>13} {statistics.median(times):9.2f} {max(times):8.2f}"
        )
    return lines


# ------------------------------------------------------------------ main


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--data", type=Path, action="append", default=None,
                    help="case file (TOML); may be given several times (default: unknowns.toml and unknowns_large.toml)")
    ap.add_argument("--carbon", choices=("with", "without", "both"), default="both",
                    help="run with the 13C lists, without them, or both (default)")
    ap.add_argument("--time-limit", type=float, default=120.0, help="per-case time limit in s (default 120)")
    ap.add_argument("--only", action="append", default=None,
                    help="run cases whose name or formula contains this text; may be given several times")
    ap.add_argument("--band", action="append", choices=[b[0] for b in BANDS], default=None,
                    help="run only this size band; may be given several times")
    ap.add_argument("--max-cases", type=int, default=0, help="stop after this many cases (0 = all)")
    ap.add_argument("--jobs", type=int, default=1, help="cases run in parallel processes (default 1)")
    args = ap.parse_args(argv)
    if args.time_limit <= 0:
        print(f"--time-limit {args.time_limit:g}: must be positive", file=sys.stderr)
        return 2
    if args.jobs < 1 or args.max_cases < 0:
        print("--jobs must be at least 1 and --max-cases at least 0", file=sys.stderr)
        return 2

    paths = args.data or list(DEFAULT_DATA)
    cases = load_cases(paths)
    jobs, n_cases = make_jobs(cases, args)
    print(f"data: {', '.join(str(p.relative_to(ROOT) if p.is_absolute() and p.is_relative_to(ROOT) else p) for p in paths)}")
    print(f"time limit {args.time_limit:g} s per case, jobs {args.jobs}, top {TOP}")
    if not any(jobs.values()):
        print("no cases")
        return 1

    tables: list[list[str]] = []
    print()
    print(HEADER)
    for setting, todo in jobs.items():
        outcomes = run_all(todo, args.jobs, lambda o: print(case_line(o), flush=True))
        tables.append(band_table(setting, outcomes, n_cases - len(todo)))
    for table in tables:
        print()
        print("\n".join(table))
    from elucidate import CAUTION

    print()
    print(CAUTION)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
