"""How long the report takes: HTML page, SD file and terminal text for a
result with many candidates.  Prints figures; asserts nothing.

    python tests/benchmarks/bench_report.py [n_candidates]
"""

from __future__ import annotations

import sys
import time
from dataclasses import replace
from pathlib import Path

_HERE = Path(__file__).resolve()
sys.path.insert(0, str(_HERE.parents[1]))  # report_fixtures
sys.path.insert(1, str(_HERE.parents[2]))  # the checkout, when elucidate is not installed

from report_fixtures import ethyl_acetate_result, ethyl_benzoate_result  # noqa: E402

from elucidate.report import render_html, sdf_text  # noqa: E402
from elucidate.report.terminal import solve_lines  # noqa: E402


def main(n: int) -> None:
    base = ethyl_acetate_result()
    pool = list(base.candidates) + list(ethyl_benzoate_result().candidates)
    cands = tuple(replace(pool[i % len(pool)], rank=i + 1) for i in range(n))
    result = replace(base, candidates=cands)
    for name, fn in (
        ("html", lambda: render_html(result)),
        ("sdf", lambda: sdf_text(result)),
        ("terminal", lambda: "\n".join(solve_lines(result))),
    ):
        t0 = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t0
        print(f"{name:9s} {n:4d} candidates  {dt * 1000:8.1f} ms  {len(out.encode()) / 1024:8.1f} KiB")


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 10)
