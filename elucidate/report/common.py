"""Small pieces shared by the terminal, HTML and SD renderers.

Signal letters, the colour palette, number formatting, the largest deviation
of a candidate and first-order multiplet lines (n+1 rule).  Pure functions,
no I/O, nothing heavy imported.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import replace
from math import comb
from pathlib import Path

from elucidate.model import (
    Assignment,
    C13Assignment,
    Candidate,
    Environment,
    H1Signal,
    Problem,
    SolveResult,
    multiplicity_pattern,
)

__all__ = [
    "write_text",
    "PALETTE",
    "UNASSIGNED_COLOUR",
    "signal_letter",
    "signal_colour",
    "tint",
    "fmt_ppm",
    "fmt_delta",
    "fmt_count",
    "readback",
    "search_summary",
    "largest_deviation",
    "table_rows",
    "environment_by_index",
    "dept_name",
    "c13_label",
    "c13_colour",
    "fmt_c13",
    "c13_rows",
    "C13_HEAD",
    "multiplet_lines",
    "observed_lines",
    "predicted_lines",
]

#: Signal colours, in the order signals are listed (high ppm first).  Our own
#: set: saturated enough to tell apart on white, none too light for text.
PALETTE: tuple[str, ...] = (
    "#0f7b73",  # deep teal
    "#d2691e",  # burnt orange
    "#7b4fa0",  # plum
    "#c23b5a",  # raspberry
    "#2f67b1",  # cobalt
    "#5f8f2e",  # moss
    "#a98210",  # mustard
    "#8b5a3c",  # umber
    "#1d98c8",  # sky
    "#c45ba3",  # orchid
    "#46606e",  # slate
    "#9b2f2f",  # brick
)

#: Colour of a predicted environment that no observed signal explains.
UNASSIGNED_COLOUR = "#9aa3a8"


def signal_letter(index: int) -> str:
    """Letter naming observed signal ``index`` (0 → ``a``, 25 → ``z``, 26 → ``aa``).

    Examples
    --------
    >>> [signal_letter(i) for i in (0, 1, 25, 26, 27)]
    ['a', 'b', 'z', 'aa', 'ab']
    """
    if index < 0:
        raise ValueError(f"signal index must be >= 0, got {index}")
    letters = ""
    n = index
    while True:
        letters = chr(ord("a") + n % 26) + letters
        n = n // 26 - 1
        if n < 0:
            return letters


def signal_colour(index: int | None) -> str:
    """Hex colour of observed signal ``index`` (``None``: unassigned grey)."""
    if index is None:
        return UNASSIGNED_COLOUR
    return PALETTE[index % len(PALETTE)]


def tint(colour: str, amount: float) -> tuple[float, float, float]:
    """RGB (0–1 floats) of ``colour`` mixed with white; ``amount`` = share of white."""
    r, g, b = (int(colour[i : i + 2], 16) / 255 for i in (1, 3, 5))
    return tuple(round(c + (1 - c) * amount, 4) for c in (r, g, b))  # type: ignore[return-value]


def fmt_ppm(value: float | None) -> str:
    """A shift to two decimals (the common way 1H shifts are quoted), ``–`` if absent."""
    return "–" if value is None else f"{value:.2f}"


def fmt_delta(value: float | None) -> str:
    """A signed deviation in ppm, e.g. ``+0.12``; ``–`` if absent."""
    if value is None:
        return "–"
    text = f"{value:+.2f}"
    return "±0.00" if text in ("+0.00", "-0.00") else text


def fmt_count(value: float) -> str:
    """An H count: ``3`` for 3.0, ``2.5`` for 2.5."""
    return str(int(round(value))) if abs(value - round(value)) < 1e-6 else f"{value:.1f}"


def readback(problem: Problem) -> str:
    """One line echoing what was understood, e.g. ``C9H10O2, DoU 5, 3 signals, 10 H``."""
    dou = problem.formula.dou
    dou_text = str(int(dou)) if dou == int(dou) else f"{dou:.1f}"
    n = len(problem.h1)
    parts = [
        problem.formula.hill,
        f"DoU {dou_text}",
        f"{n} signal{'s' if n != 1 else ''}",
        f"{fmt_count(problem.h_total)} H",
    ]
    if problem.c13:
        parts.append(f"{len(problem.c13)} 13C signal{'s' if len(problem.c13) != 1 else ''}")
    text = ", ".join(parts)
    where = [p for p in (problem.solvent, f"{problem.field_mhz:g} MHz" if problem.field_mhz else None) if p]
    if where:
        text += f" ({', '.join(where)})"
    return text


def search_summary(result: SolveResult) -> str:
    """What the search did, e.g. ``10 distinct structures built, 9 ranked,
    1 rejected``; counts the solver did not report are left out."""
    counts = dict(result.counts)
    built = counts.get("unique", counts.get("generated"))
    ranked = counts.get("ranked")
    n_rej = sum(n for _, n in result.rejected_counts)
    parts = []
    if built is not None:
        parts.append(f"{built} distinct structure{'s' if built != 1 else ''} built")
    if ranked is not None:
        parts.append(f"{ranked} ranked")
    else:
        n = len(result.candidates)
        parts.append(f"{n} candidate{'s' if n != 1 else ''}")
    parts.append(f"{n_rej} rejected")
    text = ", ".join(parts)
    if ranked is not None and ranked > len(result.candidates):
        text += f"; the best {len(result.candidates)} shown"
    return text


def table_rows(candidate: Candidate) -> list[Assignment]:
    """The candidate's assignments as rows for a table: observed signals in
    order, then what was not observed; two parts of one environment given to
    the same signal (the two H of a CH2 split by the solver) become one row."""
    merged: dict[tuple[int, int | None], Assignment] = {}
    for a in candidate.assignments:
        key = (a.environment, a.signal)
        if key in merged:
            m = merged[key]
            merged[key] = replace(m, h_count=m.h_count + a.h_count, cost=m.cost + a.cost)
        else:
            merged[key] = a
    return sorted(
        merged.values(),
        key=lambda a: (a.signal is None, a.signal if a.signal is not None else 0, a.predicted * -1, a.environment),
    )


def largest_deviation(candidate: Candidate) -> Assignment | None:
    """The assignment with the largest |δ pred − δ obs| (first one on ties)."""
    best: Assignment | None = None
    for a in candidate.assignments:
        if a.observed is None:
            continue
        if best is None or abs(a.predicted - a.observed) > abs(best.predicted - best.observed) + 1e-9:  # type: ignore[operator]
            best = a
    return best


def environment_by_index(candidate: Candidate) -> dict[int, Environment]:
    """The candidate's predicted environments keyed by their ``index``."""
    if candidate.prediction is None:
        return {}
    return {e.index: e for e in candidate.prediction.environments}


def multiplet_lines(groups: Iterable[tuple[int, float]]) -> list[tuple[float, float]]:
    """Lines of a first-order multiplet: (offset in Hz from the centre, intensity).

    Each group is ``(n, J)``: ``n`` equivalent partners coupling with ``J`` Hz,
    splitting every line into ``n + 1`` lines with binomial intensities (the
    n+1 rule, Pascal's triangle — common practice).  Intensities sum to 1.

    Examples
    --------
    >>> multiplet_lines([(1, 7.0)])
    [(-3.5, 0.5), (3.5, 0.5)]
    >>> [round(i * 8) for _, i in multiplet_lines([(3, 7.0)])]
    [1, 3, 3, 1]
    """
    lines: dict[float, float] = {0.0: 1.0}
    for n, j in groups:
        if n < 0 or j < 0:
            raise ValueError(f"bad coupling group ({n}, {j})")
        if n == 0 or j == 0:
            continue
        total = 2**n
        new: dict[float, float] = {}
        for off, inten in lines.items():
            for k in range(n + 1):
                pos = round(off + (k - n / 2) * j, 6)
                new[pos] = new.get(pos, 0.0) + inten * comb(n, k) / total
        lines = new
    return [(pos, round(inten, 9)) for pos, inten in sorted(lines.items())]


def observed_lines(signal: H1Signal) -> list[tuple[float, float]] | None:
    """Multiplet lines of an observed signal from its letters and J values.

    ``None`` when they cannot be drawn: not first order (``m``, broad) or the
    J values do not match the letters one to one.
    """
    pattern = multiplicity_pattern(signal.multiplicity)
    if pattern is None:
        return None
    if pattern == (1,):
        return [(0.0, 1.0)]
    if len(signal.couplings) != len(pattern):
        return None
    return multiplet_lines((count - 1, j) for count, j in zip(pattern, signal.couplings))


def predicted_lines(environment: Environment) -> list[tuple[float, float]] | None:
    """Multiplet lines of a predicted environment from its coupling partners.

    ``None`` for a non-singlet without partners (nothing to draw from).
    """
    if not environment.couplings:
        if environment.multiplicity in ("s", "") or environment.exchangeable:
            return [(0.0, 1.0)]
        return None
    return multiplet_lines((c.h_count, c.j_hz) for c in environment.couplings)



def write_text(target: Path, text: str, option: str) -> Path:
    """Write a report file; an :class:`InputError` naming ``option`` and the
    path if it cannot be written."""
    from elucidate.errors import InputError

    try:
        with open(target, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
    except OSError as err:
        raise InputError(f"{option} {target}: cannot write the file ({err.strerror})") from err
    return target


# ---------------------------------------------------------------------- 13C


def dept_name(attached_h: int | None) -> str:
    """``C``, ``CH``, ``CH2``, ``CH3`` for 0–3 attached H; ``–`` if unknown.

    Examples
    --------
    >>> dept_name(2), dept_name(None)
    ('CH2', '–')
    """
    if attached_h is None:
        return "–"
    return ("C", "CH", "CH2", "CH3")[attached_h] if 0 <= attached_h <= 3 else f"CH{attached_h}"


def c13_label(index: int) -> str:
    """Name of observed 13C line ``index`` in tables and spectra: its number
    in the list (high ppm first), so it cannot be mistaken for a 1H letter.

    Examples
    --------
    >>> c13_label(0), c13_label(11)
    ('1', '12')
    """
    if index < 0:
        raise ValueError(f"13C line index must be >= 0, got {index}")
    return str(index + 1)


def c13_colour(index: int | None) -> str:
    """Colour of observed 13C line ``index`` (the same palette; ``None``: grey)."""
    return signal_colour(index)


def fmt_c13(value: float | None) -> str:
    """A 13C shift to one decimal (as 13C shifts are quoted), ``–`` if absent."""
    return "–" if value is None else f"{value:.1f}"


#: Column heads of the 13C assignment table (terminal and HTML).
C13_HEAD: tuple[str, ...] = ("line", "δ obs", "δ pred", "Δ", "H obs/pred", "carbons")


def _atoms_text(atoms: tuple[int, ...]) -> str:
    return ", ".join(f"C{i}" for i in atoms) if atoms else "–"


def c13_rows(problem: Problem, candidate: Candidate) -> list[tuple[C13Assignment, tuple[str, ...]]]:
    """The candidate's 13C assignment as table rows, observed lines in order
    (high ppm first), then the carbons no line was given to.

    Each row is (record, cells) with the cells of :data:`C13_HEAD`: line
    number, δ observed, δ predicted, Δ = pred − obs, attached H observed
    (DEPT) / predicted, and the carbon atoms (``C<index>``, indices in the
    SMILES order, from 0).
    """
    out = []
    recs = sorted(
        candidate.c13_assignments,
        key=lambda r: (r.line is None, r.line if r.line is not None else 0, -(r.predicted or 0.0), r.atoms),
    )
    for r in recs:
        delta = None if r.deviation is None else f"{r.deviation:+.1f}".replace("+0.0", "±0.0").replace("-0.0", "±0.0")
        h_obs = dept_name(r.h_observed) if r.line is not None and r.line < len(problem.c13) else "–"
        h_pred = dept_name(r.h_predicted) if r.atoms else "–"
        atoms = _atoms_text(r.atoms)
        if r.atoms and r.carbons < len(r.atoms):
            atoms += f" ({r.carbons} of {len(r.atoms)})"
        out.append((
            r,
            (
                c13_label(r.line) if r.line is not None else "–",
                fmt_c13(r.observed),
                fmt_c13(r.predicted),
                delta or "–",
                f"{h_obs}/{h_pred}",
                atoms,
            ),
        ))
    return out
