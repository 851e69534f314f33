"""What the chemist sees of a batch run: a progress bar and an index page.

- :class:`BatchProgress` — the :class:`elucidate.batch.BatchEvents` of the
  CLI: on a terminal a rich bar on stderr (cases done/total, the case(s)
  being solved, elapsed and estimated remaining time); otherwise one plain
  line per finished case, so that a log file shows the run.
- :func:`render_index` — ``index.html`` linking the per-case reports, with
  the summary table and the caution.  It holds no timings, so the same
  results give the same bytes.
"""

from __future__ import annotations

import sys
import time
from html import escape
from typing import Any, Sequence, TextIO

from elucidate import CAUTION, __version__

__all__ = ["BatchProgress", "render_index"]


class BatchProgress:
    """Progress of a batch on a stream (default ``sys.stderr``).

    Parameters
    ----------
    stream : text stream, optional
    bar : bool, optional
        Force the rich bar on (True) or off (False); by default it is drawn
        only when the stream is a terminal.
    """

    def __init__(self, stream: TextIO | None = None, *, bar: bool | None = None) -> None:
        self._stream = stream if stream is not None else sys.stderr
        isatty = getattr(self._stream, "isatty", None)
        self._use_bar = bar if bar is not None else bool(isatty and isatty())
        self._running: list[str] = []
        self._done = 0
        self._total = 0
        self._progress: Any = None
        self._task: Any = None
        self._t0 = time.monotonic()

    def begin(self, total: int, skipped: int) -> None:
        self._total = total
        self._t0 = time.monotonic()
        if skipped:
            self._line(f"{skipped} case(s) already solved with the same input: skipped")
        if not total:
            return
        if self._use_bar:
            from rich.console import Console
            from rich.progress import (
                BarColumn,
                MofNCompleteColumn,
                Progress,
                TextColumn,
                TimeElapsedColumn,
                TimeRemainingColumn,
            )

            console = Console(file=self._stream, stderr=self._stream is sys.stderr)
            self._progress = Progress(
                TextColumn("cases"),
                BarColumn(),
                MofNCompleteColumn(),
                TextColumn("elapsed"),
                TimeElapsedColumn(),
                TextColumn("left"),
                TimeRemainingColumn(),
                TextColumn("{task.description}"),
                console=console,
                transient=False,
            )
            self._progress.start()
            self._task = self._progress.add_task("", total=total)

    def started(self, name: str) -> None:
        self._running.append(name)
        self._refresh()

    def finished(self, name: str, error: str | None, elapsed_s: float) -> None:
        if name in self._running:
            self._running.remove(name)
        self._done += 1
        status = f"failed: {error}" if error else "ok"
        if self._progress is not None:
            if error:
                self._progress.console.print(f"{name}: {status}", markup=False, highlight=False)
            self._progress.update(self._task, completed=self._done)
            self._refresh()
        else:
            self._line(f"[{self._done}/{self._total}] {name}: {status} ({elapsed_s:.1f} s)")

    def end(self) -> None:
        if self._progress is not None:
            self._progress.stop()
            self._progress = None

    def _refresh(self) -> None:
        if self._progress is None:
            return
        now = ", ".join(self._running)
        if len(now) > 40:
            now = now[:39] + "…"
        self._progress.update(self._task, description=now)

    def _line(self, text: str) -> None:
        self._stream.write(text + "\n")
        self._stream.flush()


def render_index(entries: Sequence[tuple[str, dict[str, str]]], *, total: int | None = None) -> str:
    """``index.html`` of a batch: one row per solved case, linking its page.

    Parameters
    ----------
    entries : sequence of (stem, row)
        The case's file stem and its ``summary.csv`` row, in input order.
    total : int, optional
        Number of cases in the batch (to say how many are still missing).
    """
    rows = []
    for stem, row in entries:
        name = escape(row.get("case", stem))
        link = name if row.get("error") else f'<a href="{escape(stem)}.html">{name}</a>'
        verdict = escape(row.get("verdict", ""))
        complete = {"true": "yes", "false": "<b>no</b>"}.get(row.get("complete", ""), "")
        rows.append(
            f"<tr><td>{link}</td><td>{escape(row.get('formula', ''))}</td>"
            f'<td class="smiles">{escape(row.get("best_smiles", ""))}</td>'
            f'<td class="num">{escape(row.get("fit", ""))}</td><td>{verdict}</td><td>{complete}</td>'
            f'<td class="err">{escape(row.get("error", ""))}</td></tr>'
        )
    missing = ""
    if total is not None and total > len(entries):
        missing = f"<p>{total - len(entries)} of {total} cases are not solved yet.</p>"
    failed = sum(1 for _, r in entries if r.get("error"))
    lines = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        "<title>Batch results — structure hypotheses</title>",
        "<style>"
        "body{margin:0 auto;max-width:1180px;padding:16px 24px;color:#1e2b33;background:#f7f5f0;"
        'font:15px/1.45 "DejaVu Sans","Liberation Sans",Helvetica,Arial,sans-serif}'
        "h1{font-size:22px;color:#0d5c63}table{border-collapse:collapse}"
        "th,td{padding:4px 10px;border-bottom:1px solid #d9d4c7;text-align:left;vertical-align:top}"
        "th{font-size:13px;background:#efece4}td.num{text-align:right}"
        '.smiles{font-family:"DejaVu Sans Mono",monospace;font-size:13px;word-break:break-all}'
        ".err{color:#a3361f}.caution{background:#fbeee6;border-left:5px solid #a3361f;padding:9px 14px;"
        "margin:14px 0;font-size:14px}"
        "</style>",
        "</head>",
        "<body>",
        "<h1>Batch results</h1>",
        f'<div class="caution"><b>Caution.</b> {escape(CAUTION)}</div>',
        f"<p>{len(entries)} case(s) solved, {failed} failed. Fit: lower is better.</p>",
        missing,
        "<table><thead><tr><th>case</th><th>formula</th><th>best candidate</th><th>fit</th>"
        "<th>verdict</th><th>complete</th><th>error</th></tr></thead><tbody>",
        *rows,
        "</tbody></table>",
        f"<footer><p>Written by elucidate {escape(__version__)}.</p></footer>",
        "</body>",
        "</html>",
        "",
    ]
    return "\n".join(line for line in lines if line != "") + "\n"
