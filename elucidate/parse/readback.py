"""The read-back of ``elucidate read``: what was understood, as text or JSON.

Formatting only; no parsing here.  The text is plain (no colour) so it can be
pasted into a notebook or an e-mail.
"""

from __future__ import annotations

from typing import Any

from elucidate import CAUTION
from elucidate.model import Problem
from elucidate.parse.correlations import is_from_cross_peaks
from elucidate.parse.formula import MAX_HEAVY_ATOMS

__all__ = ["readback_text", "readback_json"]


def readback_json(problem: Problem) -> dict[str, Any]:
    """``Problem.to_json()`` plus derived figures a program may want."""
    out = problem.to_json()
    out["heavy_atoms"] = problem.formula.heavy_atoms
    out["formula_h"] = problem.formula["H"]
    out["h1_count"] = len(problem.h1)
    out["c13_carbons"] = sum(s.carbons for s in problem.c13)
    out["correlations_used"] = sum(1 for c in problem.correlations if c.matched and c.kind != "NOESY")
    out["caution"] = CAUTION
    return out


def _num(value: float, digits: int = 2) -> str:
    return f"{value:.{digits}f}"


def _count(value: float) -> str:
    return f"{value:g}"


def readback_text(problem: Problem) -> str:
    """A plain-text read-back of a :class:`Problem`."""
    f = problem.formula
    lines: list[str] = []
    if problem.name:
        lines.append(f"Case         {problem.name}")
    if problem.description:
        lines.append(f"Description  {' '.join(problem.description.split())}")
    elements = ", ".join(f"{el} {n}" for el, n in f.counts)
    lines.append(f"Formula      {f.hill}  ({elements}; {f.heavy_atoms} heavy atoms, limit {MAX_HEAVY_ATOMS})")
    lines.append(f"DoU          {f.dou:g}  (rings + pi bonds)")
    lines.append(f"Solvent      {problem.solvent or 'not given'}")
    lines.append(f"Field        {_count(problem.field_mhz) + ' MHz' if problem.field_mhz else 'not given'}")
    lines.append("")
    lines.append(
        f"1H signals   {len(problem.h1)}, {_count(problem.h_total)} H (formula {f['H']} H)"
    )
    header = ("#", "shift", "range", "mult", "J (Hz)", "nH", "integral", "assignment")
    rows = []
    for i, s in enumerate(problem.h1, start=1):
        rng = f"{_num(s.shift_high)}–{_num(s.shift_low)}" if s.shift_low < s.shift_high else ""
        mult = ("app " if s.apparent else "") + ("br " if s.broad else "") + s.multiplicity
        rows.append(
            (
                str(i),
                _num(s.shift, 3 if round(s.shift, 2) != s.shift else 2),
                rng,
                mult,
                ", ".join(f"{j:.1f}" for j in s.couplings),
                _count(s.h_count),
                _count(s.integral),
                s.assignment or "",
            )
        )
    lines.extend(_table(header, rows))
    lines.append("")
    if problem.c13:
        n_c = sum(s.carbons for s in problem.c13)
        derived = all(is_from_cross_peaks(s) for s in problem.c13)
        lines.append(f"13C signals  {len(problem.c13)}, {n_c} C (formula {f['C']} C)"
                     + ("; read off the HSQC/HMBC cross peaks (no 13C list given)" if derived else ""))
        kinds = {3: "CH3", 2: "CH2", 1: "CH", 0: "C"}
        c_rows = [
            (
                str(i),
                f"{s.shift:.1f}" if round(s.shift, 1) == s.shift else f"{s.shift:g}",
                str(s.carbons),
                kinds.get(s.attached_h, "") if s.attached_h is not None else "",
            )
            for i, s in enumerate(problem.c13, start=1)
        ]
        lines.extend(_table(("#", "shift", "nC", "type"), c_rows))
        lines.append(
            "13C complete " + (
                "yes (every distinct carbon has its own line)" if problem.c13_complete
                else "not stated (lines may overlap)"
            )
        )
    else:
        lines.append("13C signals  none given")
    lines.append("")
    lines.extend(_correlation_lines(problem))
    if problem.set_aside:
        lines.append(f"Set aside    {len(problem.set_aside)} (not signals of the compound)")
        lines.extend(
            f"  - {a.nucleus} {a.text}: {a.reason}" + (f" ({a.where})" if a.where else "")
            for a in problem.set_aside
        )
    else:
        lines.append("Set aside    none")
    lines.append("")
    lines.append(f"Require      {'; '.join(problem.require) if problem.require else 'none'}")
    lines.append(f"Forbid       {'; '.join(problem.forbid) if problem.forbid else 'none'}")
    lines.append("")
    if problem.warnings:
        lines.append(f"Warnings     {len(problem.warnings)}")
        lines.extend(f"  - {w}" for w in problem.warnings)
    else:
        lines.append("Warnings     none")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def _correlation_lines(problem: Problem) -> list[str]:
    """The 2D cross peaks, each with the 1D signals it was matched to."""
    if not problem.correlations:
        return ["2D           none given", ""]
    kinds = []
    for c in problem.correlations:
        if c.kind not in kinds:
            kinds.append(c.kind)
    counts = ", ".join(f"{sum(1 for c in problem.correlations if c.kind == k)} {k}" for k in kinds)
    lines = [f"2D           {len(problem.correlations)} cross peaks ({counts})"]
    rows = []
    for n, c in enumerate(problem.correlations, start=1):
        hetero = c.kind in ("HSQC", "HMBC")
        first = f"1H #{c.signal1 + 1} ({problem.h1[c.signal1].shift:.2f})" if c.signal1 is not None else "-"
        if c.signal2 is None:
            second = "-"
        elif hetero:
            second = f"13C #{c.signal2 + 1} ({problem.c13[c.signal2].shift:.1f})"
        else:
            second = f"1H #{c.signal2 + 1} ({problem.h1[c.signal2].shift:.2f})"
        use = "NOESY: shown only (through space)" if c.kind == "NOESY" else (
            "constraint" if c.matched else "not used (see warnings)")
        extra = "; ".join(x for x in (c.intensity, c.note) if x)
        rows.append((str(n), c.kind, c.label.split(" ", 1)[1], first, second, use, extra))
    lines.extend(_table(("#", "kind", "shifts", "matches", "and", "use", "note"), rows))
    lines.append(
        "             matched within 0.03 ppm of a 1H signal's range and 0.5 ppm of a 13C line"
    )
    lines.append("")
    return lines


def _table(header: tuple[str, ...], rows: list[tuple[str, ...]]) -> list[str]:
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(header)]
    def fmt(cells: tuple[str, ...]) -> str:
        return "  " + "  ".join(c.ljust(w) for c, w in zip(cells, widths)).rstrip()
    return [fmt(header), *(fmt(r) for r in rows)]
