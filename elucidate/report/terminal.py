"""What the chemist reads in the terminal after ``solve`` or ``explain``.

A read-back of the input, the top candidates (rank, SMILES, fit, largest
deviation), the rejection summary and the caution.  On a terminal the tables
are drawn with rich; when stdout is a file or a pipe the same content is
written as plain, aligned text (no colour codes, no box characters), so it
can be pasted into a notebook or diffed.
"""

from __future__ import annotations

import sys
from collections.abc import Sequence
from typing import Any, TextIO

from elucidate import CAUTION
from elucidate.model import Candidate, Problem, Rejection, SolveResult
from elucidate.report.common import (
    C13_HEAD,
    c13_rows,
    fmt_delta,
    fmt_ppm,
    largest_deviation,
    readback,
    search_summary,
    signal_colour,
    signal_letter,
    table_rows,
)
from elucidate.report.correlations import correlation_lines

__all__ = ["render_solve", "render_explain", "solve_lines", "explain_lines"]


# ----------------------------------------------------------------- content


def _status(result: SolveResult) -> str:
    head = "Search complete" if result.complete else "Search INCOMPLETE"
    text = f"{head}: {search_summary(result)}."
    if result.stopped_by:
        text += f" Stopped by the {result.stopped_by}: the answer may be missing."
    return text


def _deviation_text(problem: Problem, candidate: Candidate) -> str:
    worst = largest_deviation(candidate)
    if worst is None or worst.observed is None:
        return "–"
    where = ""
    if worst.signal is not None and 0 <= worst.signal < len(problem.h1):
        sig = problem.h1[worst.signal]
        where = f" at {signal_letter(worst.signal)} {fmt_ppm(sig.shift)} {sig.multiplicity}"
    return f"{fmt_delta(worst.predicted - worst.observed)} ppm{where}"


def _candidate_rows(result: SolveResult, top: int | None) -> list[tuple[str, ...]]:
    shown = result.candidates if top is None else result.candidates[:top]
    return [
        (
            str(c.rank),
            c.smiles,
            f"{c.score:.2f}",
            c.verdict,
            _deviation_text(result.problem, c),
        )
        for c in shown
    ]


_CAND_HEAD = ("rank", "SMILES", "fit", "verdict", "largest deviation")


def _rejection_rows(result: SolveResult) -> list[tuple[str, str]]:
    return [(str(n), reason) for reason, n in result.rejected_counts]


def _notes(result: SolveResult) -> list[str]:
    out = [f"relaxed: {r}" for r in result.relaxed]
    warnings = list(result.problem.warnings) + [w for w in result.warnings if w not in result.problem.warnings]
    out += [f"warning: {w}" for w in warnings]
    return out


def _align(rows: Sequence[Sequence[str]], right: Sequence[bool]) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    lines = []
    for row in rows:
        cells = [
            cell.rjust(w) if r else cell.ljust(w) for cell, w, r in zip(row, widths, right)
        ]
        lines.append("  ".join(cells).rstrip())
    return lines


def solve_lines(result: SolveResult, *, top: int | None = None) -> list[str]:
    """The plain-text rendering of a :class:`SolveResult`, line by line."""
    if not isinstance(result, SolveResult):
        raise TypeError(f"expected a SolveResult, got {type(result).__name__}")
    lines = [readback(result.problem), _status(result), ""]
    rows = _candidate_rows(result, top)
    if rows:
        lines.append("Candidates (fit: lower is better)")
        lines += _align([_CAND_HEAD, *rows], (True, False, True, False, False))
        if top is not None and len(result.candidates) > top:
            lines.append(f"... {len(result.candidates) - top} more (see --json or --report)")
        best = result.candidates[0]
        if best.assignments:
            lines += ["", f"Best candidate, signal by signal: {best.smiles}"]
            lines += _align(_assignment_rows(best), _ASSIGN_RIGHT)
            c13 = _c13_table_rows(result.problem, best)
            if c13:
                lines += ["", "13C, line by line (H: DEPT obs/pred)"]
                lines += _align(c13, _C13_RIGHT)
            lines += [f"note: {n}" for n in best.notes]
    else:
        lines.append("No candidate is consistent with the data.")
    lines += correlation_lines(result)
    lines += _measurement_lines(result)
    rej = _rejection_rows(result)
    if rej:
        total = sum(n for _, n in result.rejected_counts)
        lines += ["", f"Rejected ({total})"]
        lines += _align(rej, (True, False))
    notes = _notes(result)
    if notes:
        lines += ["", *notes]
    lines += ["", f"Caution: {CAUTION}"]
    return lines


MEASURE_HEADING = "What to measure next"


def _measurement_lines(result: SolveResult) -> list[str]:
    """The "What to measure next" block (empty when the top candidates are
    already told apart)."""
    found = getattr(result, "next_measurements", ())
    if not found:
        return []
    ranks = ", ".join(str(r) for r in found[0].ranks)
    lines = [
        "",
        MEASURE_HEADING,
        f"Candidates {ranks} fit about equally well. These observations would tell them apart "
        "(figure: predicted difference / typical error):",
    ]
    rows = [("experiment", "observation", "predicted (candidate: value)", "figure")]
    for m in found:
        values = "; ".join(f"{r}: {v}" for r, v in zip(m.ranks, m.predicted))
        rows.append((m.experiment, m.observation, values, m.figure_text()))
    lines += _align(rows, (False, False, False, True))
    return lines


def _assignment_rows(cand: Candidate) -> list[tuple[str, ...]]:
    rows = [("signal", "δ obs", "δ pred", "Δ", "mult obs/pred", "nH")]
    for a in table_rows(cand):
        rows.append(
            (
                signal_letter(a.signal) if a.signal is not None else "–",
                fmt_ppm(a.observed),
                fmt_ppm(a.predicted),
                fmt_delta(None if a.observed is None else a.predicted - a.observed),
                f"{a.multiplicity_observed or '–'}/{a.multiplicity_predicted}",
                str(a.h_count),
            )
        )
    return rows


_ASSIGN_RIGHT = (False, True, True, True, False, True)
_C13_RIGHT = (True, True, True, True, False, False)


def _c13_table_rows(problem: Problem, cand: Candidate) -> list[tuple[str, ...]]:
    """The compact 13C table of a candidate (header first); empty when no
    13C lines were given or the candidate has no 13C assignment."""
    if not problem.c13 or not cand.c13_assignments:
        return []
    return [C13_HEAD, *(cells for _, cells in c13_rows(problem, cand))]


def explain_lines(explanation: Any, problem: Problem | None = None) -> list[str]:
    """Plain-text rendering of an ``explain`` verdict for one structure.

    ``explanation`` is an :class:`elucidate.model.Explanation` or anything
    with ``smiles``, ``verdict`` and ``candidate`` / ``rejection``; ``rank``,
    ``total``, ``reasons``, ``complete`` and ``problem`` are used when present.
    """
    problem = problem if problem is not None else getattr(explanation, "problem", None)
    cand: Candidate | None = getattr(explanation, "candidate", None)
    rej: Rejection | None = getattr(explanation, "rejection", None)
    smiles = getattr(explanation, "smiles", None) or (cand.smiles if cand else rej.smiles if rej else "?")
    verdict = getattr(explanation, "verdict", None) or (cand.verdict if cand else "rejected")
    rank = getattr(explanation, "rank", None)
    total = getattr(explanation, "total", None)
    lines = []
    if problem is not None:
        lines.append(readback(problem))
    head = f"{smiles}: {verdict}"
    if rank:
        head += f", rank {rank}" + (f" of {total}" if total is not None else "")
    elif total is not None:
        head += f", not among the {total} structures ranked under the hard constraints"
    lines.append(head)
    if getattr(explanation, "complete", True) is False:
        lines.append("Search INCOMPLETE: the rank is among the structures seen.")
    lines.append("")
    if cand is not None and cand.assignments:
        lines += _align(_assignment_rows(cand), _ASSIGN_RIGHT)
        lines.append(f"fit {cand.score:.2f} (lower is better)")
    reasons = tuple(getattr(explanation, "reasons", ()) or (rej.reasons if rej is not None else ()))
    lines += [f"reason: {r}" for r in reasons]
    if cand is not None:
        lines += [f"note: {n}" for n in cand.notes if n not in reasons]
    lines += ["", f"Caution: {CAUTION}"]
    return lines


# ----------------------------------------------------------------- output


def _wants_plain(stream: TextIO, plain: bool | None) -> bool:
    if plain is not None:
        return plain
    isatty = getattr(stream, "isatty", None)
    return not (isatty and isatty())


def render_solve(
    result: SolveResult, *, file: TextIO | None = None, plain: bool | None = None, top: int | None = None
) -> None:
    """Write a :class:`SolveResult` for a reader.

    Parameters
    ----------
    result : SolveResult
    file : text stream, optional
        Default ``sys.stdout``.
    plain : bool, optional
        Force plain text (``True``) or rich tables (``False``); by default
        rich on a terminal, plain otherwise.
    top : int, optional
        Show only the first ``top`` candidates.
    """
    if not isinstance(result, SolveResult):
        raise TypeError(f"expected a SolveResult, got {type(result).__name__}")
    stream = file if file is not None else sys.stdout
    if _wants_plain(stream, plain):
        stream.write("\n".join(solve_lines(result, top=top)) + "\n")
        return
    _rich_solve(result, stream, top)


def render_explain(
    explanation: Any, *, problem: Problem | None = None, file: TextIO | None = None, plain: bool | None = None
) -> None:
    """Write an ``explain`` verdict for a reader (see :func:`explain_lines`)."""
    stream = file if file is not None else sys.stdout
    lines = explain_lines(explanation, problem)
    if _wants_plain(stream, plain):
        stream.write("\n".join(lines) + "\n")
        return
    from rich.console import Console
    from rich.text import Text

    console = Console(file=stream, highlight=False)
    console.print(Text(lines[0], style="bold"))
    for line in lines[1:-1]:
        console.print(Text(line))
    console.print(Text(lines[-1], style="yellow"))


def _rich_solve(result: SolveResult, stream: TextIO, top: int | None) -> None:
    from rich import box
    from rich.console import Console
    from rich.table import Table
    from rich.text import Text

    console = Console(file=stream, highlight=False)
    console.print(Text(readback(result.problem), style="bold"))
    console.print(Text(_status(result), style="" if result.complete else "bold red"))
    rows = _candidate_rows(result, top)
    if rows:
        table = Table(title="Candidates (fit: lower is better)", box=box.SIMPLE_HEAD, title_justify="left")
        for name, justify in zip(_CAND_HEAD, ("right", "left", "right", "left", "left")):
            table.add_column(name, justify=justify, overflow="fold")  # type: ignore[arg-type]
        for row in rows:
            style = "green" if row[3] == "consistent" else "yellow"
            table.add_row(row[0], row[1], row[2], Text(row[3], style=style), row[4])
        console.print(table)
        if top is not None and len(result.candidates) > top:
            console.print(f"... {len(result.candidates) - top} more (see --json or --report)")
        best = result.candidates[0]
        if best.assignments:
            rows = _assignment_rows(best)
            table = Table(
                title=f"Best candidate, signal by signal: {best.smiles}", box=box.SIMPLE_HEAD, title_justify="left"
            )
            for name, right in zip(rows[0], _ASSIGN_RIGHT):
                table.add_column(name, justify="right" if right else "left")
            for row in rows[1:]:
                letter = row[0]
                style = signal_colour(ord(letter[0]) - ord("a")) if len(letter) == 1 and letter.isalpha() else ""
                table.add_row(Text(letter, style=f"bold {style}"), *row[1:])
            console.print(table)
            c13 = _c13_table_rows(result.problem, best)
            if c13:
                table = Table(title="13C, line by line (H: DEPT obs/pred)", box=box.SIMPLE_HEAD, title_justify="left")
                for name, right in zip(c13[0], _C13_RIGHT):
                    table.add_column(name, justify="right" if right else "left")
                for row in c13[1:]:
                    table.add_row(*row)
                console.print(table)
            for note in best.notes:
                console.print(Text(f"note: {note}", style="dim"))
    else:
        console.print(Text("No candidate is consistent with the data.", style="bold red"))
    for line in correlation_lines(result):
        style = "bold red" if line.startswith("no candidate meets") else ("bold" if line.startswith("2D cross") else "")
        console.print(Text(line, style=style))
    measure = _measurement_lines(result)
    if measure:
        console.print(Text(measure[1], style="bold"))
        for line in measure[2:]:
            console.print(Text(line))
    rej = _rejection_rows(result)
    if rej:
        total = sum(n for _, n in result.rejected_counts)
        table = Table(title=f"Rejected ({total})", box=box.SIMPLE_HEAD, title_justify="left", show_header=False)
        table.add_column("n", justify="right")
        table.add_column("reason")
        for n, reason in rej:
            table.add_row(n, reason)
        console.print(table)
    for note in _notes(result):
        console.print(Text(note, style="yellow"))
    console.print(Text(f"Caution: {CAUTION}", style="italic"))
