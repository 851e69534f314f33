"""Benchmark of the parse stage: prints figures, asserts nothing (not collected by pytest).

Run from the repository root:  python tests/benchmarks/bench_parse.py

Prints the time to read the demo cases, to parse long 1H lists, CSV and
JCAMP-DX tables, and the start-up time of `python -m elucidate read`.
"""

from __future__ import annotations

import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from elucidate.parse import load_problem, parse_formula, parse_h1, read_peak_text  # noqa: E402


def timed(label: str, repeat: int, func) -> None:  # type: ignore[no-untyped-def]
    func()  # warm-up (loads the solvent table once)
    start = time.perf_counter()
    for _ in range(repeat):
        func()
    per = (time.perf_counter() - start) / repeat
    print(f"{label:<52} {per * 1e3:9.3f} ms")


def main() -> None:
    cases = sorted((ROOT / "cases").glob("*.toml"))
    timed(f"load_problem, {len(cases)} demo cases", 20, lambda: [load_problem(c) for c in cases])
    formula = parse_formula("C9H10O2")
    line = "1H NMR (400 MHz, CDCl3) δ 7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H)."
    timed("parse_h1, benzyl acetate line", 2000, lambda: parse_h1(line, formula=formula))
    long_line = ", ".join(f"{7 - i * 0.01:.2f} (dd, J = 7.9, 1.7 Hz, 1H)" for i in range(200))
    timed("parse_h1, 200 signals", 20, lambda: parse_h1(long_line))
    csv_text = "shift,mult,J,nH\n" + "".join(f"{7 - i * 0.01:.2f},dd,\"7.9, 1.7\",1\n" for i in range(200))
    timed("CSV table, 200 rows", 20, lambda: read_peak_text(csv_text, "t.csv", "1H"))
    jdx = "##TITLE=t\n##PEAK TABLE=(XYM..XYM)\n" + "".join(f"{7 - i * 0.01:.2f}, 1, D\n" for i in range(200))
    timed("JCAMP-DX peak table, 200 peaks", 20, lambda: read_peak_text(jdx, "t.jdx", "1H"))
    start = time.perf_counter()
    runs = 5
    for _ in range(runs):
        subprocess.run(
            [sys.executable, "-m", "elucidate", "read", str(ROOT / "cases" / "u014.toml"), "--json"],
            cwd=ROOT, check=True, capture_output=True,
        )
    print(f"{'python -m elucidate read cases/u014.toml --json':<52} {(time.perf_counter() - start) / runs * 1e3:9.1f} ms")


if __name__ == "__main__":
    main()
