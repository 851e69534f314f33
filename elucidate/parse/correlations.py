"""2D cross peaks (HSQC, COSY, HMBC, NOESY) -> :class:`~elucidate.model.CrossPeak`.

A cross peak is a pair of shifts: 1H then 13C for the heteronuclear
experiments (``"7.26/128.5"``), two 1H shifts for COSY and NOESY
(``"4.12/1.26"``).  Three ways to give a list:

* text: ``"7.26/128.5, 2.35/21.1"`` (items separated by commas, semicolons
  or new lines; an item may end with a note in brackets,
  ``"3.67/174.8 (weak)"``; ``w``, ``m``, ``s``, ``weak``, ``medium``,
  ``strong`` there are kept as the intensity);
* a table (CSV/TSV) with loose column names: ``dH``/``dC`` (also ``1H``,
  ``13C``, ``F2``/``F1``, ``δH``, ``δC``) for HSQC/HMBC, ``H1``/``H2`` (also
  ``dH1``/``dH2``, ``F2``/``F1``) for COSY/NOESY, optional ``intensity`` and
  ``note``;
* inline TOML rows: ``[{dH = 3.67, dC = 174.8, note = "OCH3 to C=O"}]``,
  or a list of ``"dH/dC"`` strings or ``[dH, dC]`` pairs;
* a JCAMP-DX file carrying a 2D peak table (:func:`jcamp_cross_peaks`);
  any other JCAMP-DX file is refused in one line.

Each shift is matched to the 1D signals (:func:`match_correlations`): a 1H
shift to the :attr:`Problem.h1` signal whose range (or centre) it lies within
:data:`H1_MATCH_PPM`, a 13C shift to the :attr:`Problem.c13` line within
:data:`C13_MATCH_PPM`.  A shift that matches no signal, or more than one, is
a warning naming the peak; the peak is kept (shown) but used in no
constraint.

Without a 13C list, the δC of the HSQC/HMBC cross peaks supply the 13C lines
(:func:`c13_from_cross_peaks`), with a warning saying so.
"""

from __future__ import annotations

import csv
import io
import math
import re
from dataclasses import dataclass
from typing import Any, Sequence

from elucidate.errors import InputError
from elucidate.model import HETERONUCLEAR, C13Signal, CrossPeak, H1Signal
from elucidate.parse.lexing import NUMBER, short, to_float
from elucidate.parse.peaks import C13_SHIFT_RANGE, H1_SHIFT_RANGE
from elucidate.parse.tables import _cells, _delimiter

__all__ = [
    "H1_MATCH_PPM",
    "C13_MATCH_PPM",
    "MAX_CROSS_PEAKS",
    "RawPeak",
    "read_correlation_text",
    "correlation_table",
    "inline_correlations",
    "looks_like_correlation_table",
    "match_correlations",
    "FROM_CROSS_PEAKS",
    "c13_from_cross_peaks",
    "is_from_cross_peaks",
    "jcamp_cross_peaks",
]

#: A 1H shift of a cross peak matches a signal within this many ppm of its
#: range (or of its centre when it has no range).  Cross peaks are read off
#: a 2D map at roughly the digital resolution of its 1H axis, a few
#: hundredths of a ppm (common practice).
H1_MATCH_PPM = 0.03
#: A 13C shift of a cross peak matches a 13C line within this many ppm (the
#: indirect 13C axis of HSQC/HMBC spectra is coarsely digitised; common
#: practice).
C13_MATCH_PPM = 0.5
#: More cross peaks than this in one list is not a peak list.
MAX_CROSS_PEAKS = 300

_INTENSITY = {"w": "weak", "weak": "weak", "vw": "very weak", "m": "medium", "medium": "medium",
              "s": "strong", "strong": "strong", "vs": "very strong"}
_ITEM = re.compile(
    r"\s*(?P<a>" + NUMBER + r")\s*(?:ppm)?\s*/\s*(?P<b>" + NUMBER + r")\s*(?:ppm)?\s*(?:\((?P<note>[^()]*)\))?\s*"
)

# normalised column header -> role; "h"/"c" for heteronuclear lists, "h1"/"h2" for 1H/1H lists
_HETERO_COLUMNS = {
    "h": ("dh", "h", "1h", "deltah", "shifth", "hshift", "h1shift", "deltah1h", "proton", "protonshift", "f2",
          "dhppm", "deltahppm", "1hppm", "hppm"),
    "c": ("dc", "c", "13c", "deltac", "shiftc", "cshift", "c13", "carbon", "carbonshift", "f1", "dcppm",
          "deltacppm", "13cppm", "cppm"),
}
_HOMO_COLUMNS = {
    "h1": ("h1", "dh1", "deltah1", "shift1", "delta1", "ha", "dha", "f2", "proton1", "1", "h1ppm", "dh1ppm"),
    "h2": ("h2", "dh2", "deltah2", "shift2", "delta2", "hb", "dhb", "f1", "proton2", "2", "h2ppm", "dh2ppm"),
}
_COMMON_COLUMNS = {
    "intensity": ("intensity", "int", "strength", "i", "intens"),
    "note": ("note", "notes", "comment", "comments", "assignment", "remark", "remarks"),
}


@dataclass(frozen=True)
class RawPeak:
    """A cross peak as read, before matching to the 1D signals."""

    kind: str
    shift1: float
    shift2: float
    intensity: str = ""
    note: str = ""
    where: str = ""


def _norm(header: str) -> str:
    h = header.strip().lower().replace("δ", "delta")
    return re.sub(r"[^a-z0-9]", "", h)


def _columns(kind: str) -> dict[str, tuple[str, ...]]:
    out = dict(_HETERO_COLUMNS if kind in HETERONUCLEAR else _HOMO_COLUMNS)
    out.update(_COMMON_COLUMNS)
    return out


def _role(header: str, kind: str) -> str | None:
    key = _norm(header)
    for role, names in _columns(kind).items():
        if key in names:
            return role
    return None


def _ends(kind: str) -> tuple[str, str]:
    return ("h", "c") if kind in HETERONUCLEAR else ("h1", "h2")


def _example(kind: str) -> str:
    return "7.26/128.5" if kind in HETERONUCLEAR else "4.12/1.26"


def _checked(kind: str, a: float, b: float, where: str) -> tuple[float, float]:
    lo, hi = H1_SHIFT_RANGE
    if not lo <= a <= hi:
        raise InputError(f"{where}: 1H shift {a:g} is outside {lo:g} to {hi:g} ppm")
    lo2, hi2 = C13_SHIFT_RANGE if kind in HETERONUCLEAR else H1_SHIFT_RANGE
    nucleus = "13C" if kind in HETERONUCLEAR else "1H"
    if not lo2 <= b <= hi2:
        hint = " (is it a 1H/13C list given as COSY?)" if nucleus == "1H" and b > hi2 else ""
        raise InputError(f"{where}: {nucleus} shift {b:g} is outside {lo2:g} to {hi2:g} ppm{hint}")
    return a, b


def _note(text: str | None) -> tuple[str, str]:
    """(intensity, note) from a bracketed remark."""
    if not text:
        return "", ""
    t = " ".join(text.split())
    return (_INTENSITY[t.lower()], "") if t.lower() in _INTENSITY else ("", t)


def _split_items(text: str) -> list[tuple[int, str]]:
    """Items separated by , ; or new lines outside brackets, with their offsets."""
    items: list[tuple[int, str]] = []
    depth = 0
    start = 0
    for i, ch in enumerate(text + ","):
        if ch == "(":
            depth += 1
        elif ch == ")":
            depth = max(0, depth - 1)
        elif ch in ",;\n" and depth == 0:
            items.append((start, text[start:i]))
            start = i + 1
    return [(pos, item) for pos, item in items if item.strip()]


def read_correlation_text(text: str, kind: str, origin: str = "") -> list[RawPeak]:
    """Cross peaks from text such as ``"7.26/128.5, 2.35/21.1 (w)"``.

    Parameters
    ----------
    text : str
        The list.
    kind : {"HSQC", "COSY", "HMBC", "NOESY"}
    origin : str
        Where the text comes from, for messages (default: ``"<kind> list"``).

    Returns
    -------
    list of RawPeak

    Raises
    ------
    InputError
        Naming the first item that is not a cross peak and its position.

    Examples
    --------
    >>> [(p.shift1, p.shift2, p.intensity) for p in read_correlation_text("3.67/174.8 (w), 1.14/27.5", "HMBC")]
    [(3.67, 174.8, 'weak'), (1.14, 27.5, '')]
    """
    if not isinstance(text, str):
        raise InputError(f"{origin or kind}: a cross-peak list must be text, not {type(text).__name__}")
    what = origin or f"{kind} list"
    items = _split_items(text)
    if not items:
        raise InputError(f"{what}: no cross peaks (write them as {_example(kind)}, ...)")
    if len(items) > MAX_CROSS_PEAKS:
        raise InputError(f"{what}: {len(items)} cross peaks, more than {MAX_CROSS_PEAKS}")
    out = []
    for n, (pos, item) in enumerate(items, start=1):
        m = _ITEM.fullmatch(item)
        where = f"{what} item {n}"
        at = f"{where} (position {pos + len(item) - len(item.lstrip()) + 1})"
        if m is None:
            raise InputError(
                f"{at}: '{short(item.strip())}' is not a cross peak (write {_example(kind)})"
            )
        a = to_float(m.group("a"), "shift", at)
        b = to_float(m.group("b"), "shift", at)
        a, b = _checked(kind, a, b, at)
        intensity, note = _note(m.group("note"))
        out.append(RawPeak(kind, a, b, intensity, note, where))
    return out


def looks_like_correlation_table(text: str, kind: str) -> bool:
    """True when the first non-comment line is a header naming both shift columns."""
    for line in text.splitlines():
        s = line.strip().lstrip("\ufeff")
        if not s or s.startswith("#"):
            continue
        cells = _cells(s, _delimiter(s))
        roles = {_role(c, kind) for c in cells}
        return set(_ends(kind)) <= roles
    return False


def correlation_table(text: str, name: str, kind: str) -> tuple[list[RawPeak], list[str]]:
    """Cross peaks from a CSV/TSV table with a header row, and warnings
    about columns not used.

    Raises
    ------
    InputError
        For a header without both shift columns, or a bad cell (file and line named).
    """
    text = text.lstrip("\ufeff")
    body = [(i + 1, line) for i, line in enumerate(text.splitlines())
            if line.strip() and not line.lstrip().startswith("#")]
    if not body:
        raise InputError(f"{name}: the table is empty (expected a header row and cross peaks)")
    header_no, header_line = body[0]
    delimiter = _delimiter(header_line)
    headers = [h.strip() for h in _cells(header_line, delimiter)]
    roles: list[str] = []
    warnings: list[str] = []
    for h in headers:
        role = _role(h, kind)
        if role is None or role in roles:
            if h:
                warnings.append(f"{name}: column '{short(h)}' not used")
            roles.append("")
            continue
        roles.append(role)
    first, second = _ends(kind)
    if first not in roles or second not in roles:
        names = "dH and dC" if kind in HETERONUCLEAR else "H1 and H2"
        raise InputError(
            f"{name} line {header_no}: a {kind} table needs the columns {names} "
            f"(header: {', '.join(repr(h) for h in headers[:6])})"
        )
    peaks = []
    reader = csv.reader(io.StringIO("\n".join(line for _, line in body[1:])), delimiter=delimiter)
    try:
        for (line_no, _), cells in zip(body[1:], reader):
            where = f"{name} line {line_no}"
            row = {r: c.strip() for r, c in zip(roles, cells) if r and c.strip()}
            peaks.append(_row_peak(row, kind, where, decimal_comma=delimiter == ";"))
    except csv.Error as err:
        raise InputError(f"{name}: not a readable table ({err})") from err
    if not peaks:
        raise InputError(f"{name}: the table has a header but no cross peaks")
    if len(peaks) > MAX_CROSS_PEAKS:
        raise InputError(f"{name}: {len(peaks)} cross peaks, more than {MAX_CROSS_PEAKS}")
    return peaks, warnings


def _row_peak(row: dict[str, str], kind: str, where: str, decimal_comma: bool = False) -> RawPeak:
    first, second = _ends(kind)
    values = []
    for role in (first, second):
        cell = row.get(role, "")
        if not cell:
            raise InputError(f"{where}: no {'13C' if role == 'c' else '1H'} shift")
        if decimal_comma and re.fullmatch(r"[+\-−]?[0-9]+,[0-9]+", cell):
            cell = cell.replace(",", ".")
        values.append(to_float(cell, "shift", where))
    a, b = _checked(kind, values[0], values[1], where)
    intensity = row.get("intensity", "")
    intensity = _INTENSITY.get(intensity.lower(), intensity)
    return RawPeak(kind, a, b, intensity, row.get("note", ""), where)


def inline_correlations(value: Any, kind: str, where: str) -> list[RawPeak]:
    """Cross peaks from a TOML array: tables (``{dH = 3.67, dC = 174.8}``),
    ``"dH/dC"`` strings or ``[dH, dC]`` pairs."""
    if not isinstance(value, list) or not value:
        raise InputError(
            f"{where}: give a non-empty array of cross peaks, e.g. "
            + ('[{dH = 7.26, dC = 128.5}]' if kind in HETERONUCLEAR else '[{H1 = 4.12, H2 = 1.26}]')
        )
    if len(value) > MAX_CROSS_PEAKS:
        raise InputError(f"{where}: {len(value)} cross peaks, more than {MAX_CROSS_PEAKS}")
    out = []
    for i, item in enumerate(value, start=1):
        at = f"{where} peak {i}"
        if isinstance(item, str):
            out.extend(read_correlation_text(item, kind, at))
            continue
        if isinstance(item, list):
            if len(item) != 2 or not all(_is_number(v) for v in item):
                raise InputError(f"{at}: a cross peak as a list needs two numbers, e.g. [{_example(kind).replace('/', ', ')}]")
            a, b = _checked(kind, float(item[0]), float(item[1]), at)
            out.append(RawPeak(kind, a, b, "", "", at))
            continue
        if not isinstance(item, dict):
            raise InputError(f"{at}: each cross peak must be a table such as {{dH = 7.26, dC = 128.5}}")
        row: dict[str, str] = {}
        for k, v in item.items():
            role = _role(k, kind)
            if role is None:
                raise InputError(f"{at}: unknown key '{short(k)}'")
            if role in row:
                raise InputError(f"{at}: '{short(k)}' repeats the {role} of this peak")
            if isinstance(v, bool) or not isinstance(v, (int, float, str)):
                raise InputError(f"{at}: '{short(k)}' must be a number or text")
            if isinstance(v, float) and not math.isfinite(v):
                raise InputError(f"{at}: '{short(k)}' is not a finite number")
            row[role] = repr(v) if isinstance(v, (int, float)) else v.strip()
        out.append(_row_peak(row, kind, at))
    return out


def _is_number(v: Any) -> bool:
    return not isinstance(v, bool) and isinstance(v, (int, float)) and math.isfinite(v)


# ------------------------------------------------------------------ matching


def _h1_matches(shift: float, h1: Sequence[H1Signal]) -> list[int]:
    return [
        i for i, s in enumerate(h1)
        if min(s.shift_low, s.shift_high, s.shift) - H1_MATCH_PPM - 1e-9
        <= shift <= max(s.shift_low, s.shift_high, s.shift) + H1_MATCH_PPM + 1e-9
    ]


def _c13_matches(shift: float, c13: Sequence[C13Signal]) -> list[int]:
    return [i for i, c in enumerate(c13) if abs(c.shift - shift) <= C13_MATCH_PPM + 1e-9]


#: Text of a 13C line taken from the cross peaks when no 13C list is given.
FROM_CROSS_PEAKS = "from the HSQC/HMBC cross peaks"


def c13_from_cross_peaks(raws: Sequence[RawPeak]) -> tuple[tuple[C13Signal, ...], dict[float, int]]:
    """13C lines read off the δC axis of HSQC/HMBC cross peaks (no 13C list given).

    The distinct δC values are grouped by single linkage within
    :data:`C13_MATCH_PPM`: two cross peaks whose δC differ by no more than the
    matching tolerance may be the same carbon, so they make one line (at the
    mean of its distinct values).  Lines are therefore at least that far
    apart, and only then are taken as different carbons; carbons closer than
    that show as one line (a weaker, never a wrong, reading).

    Returns
    -------
    lines : tuple of C13Signal
        High to low, ``text`` ending in :data:`FROM_CROSS_PEAKS`.
    index : dict
        Each δC value read -> the index of its line.

    Examples
    --------
    >>> lines, index = c13_from_cross_peaks([RawPeak("HSQC", 7.28, 128.5), RawPeak("HMBC", 2.14, 207.9),
    ...                                      RawPeak("HMBC", 7.19, 128.3), RawPeak("HSQC", 2.14, 30.1)])
    >>> [c.shift for c in lines], index[128.3]
    ([207.9, 128.4, 30.1], 1)
    """
    values = sorted({r.shift2 for r in raws if r.kind in HETERONUCLEAR}, reverse=True)
    groups: list[list[float]] = []
    for v in values:
        if groups and groups[-1][-1] - v <= C13_MATCH_PPM + 1e-9:
            groups[-1].append(v)
        else:
            groups.append([v])
    lines = []
    index: dict[float, int] = {}
    for i, g in enumerate(groups):
        centre = round(sum(g) / len(g), 1)
        span = f"{g[-1]:.1f}-{g[0]:.1f}" if len(g) > 1 else f"{g[0]:.1f}"
        lines.append(C13Signal(centre, 1, None, f"{span} ({FROM_CROSS_PEAKS})"))
        for v in g:
            index[v] = i
    return tuple(lines), index


def is_from_cross_peaks(line: C13Signal) -> bool:
    """Whether a 13C line was read off the cross peaks (:func:`c13_from_cross_peaks`)."""
    return line.text.endswith(f"({FROM_CROSS_PEAKS})")


def _describe(indices: list[int], shifts: list[float], digits: int) -> str:
    return ", ".join(f"{shifts[i]:.{digits}f}" for i in indices)


def match_correlations(
    raws: Sequence[RawPeak], h1: Sequence[H1Signal], c13: Sequence[C13Signal],
    c13_index: dict[float, int] | None = None,
) -> tuple[tuple[CrossPeak, ...], list[str]]:
    """Match each cross peak's shifts to the 1D signals.

    Returns
    -------
    peaks : tuple of CrossPeak
        In input order, duplicates (same kind and matched signals) removed.
    warnings : list of str
        One per shift that matches no signal or several, and per COSY/NOESY
        peak on the diagonal (both shifts in one signal).

    When ``c13`` was read off the cross peaks themselves
    (:func:`c13_from_cross_peaks`), ``c13_index`` maps each δC to its line
    and takes the place of the tolerance.

    Examples
    --------
    >>> from elucidate.parse import parse_h1
    >>> h1, _ = parse_h1("4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    >>> peaks, warnings = match_correlations([RawPeak("COSY", 4.12, 1.26)], h1, ())
    >>> (peaks[0].signal1, peaks[0].signal2, warnings)
    (0, 2, [])
    """
    out: list[CrossPeak] = []
    warnings: list[str] = []
    seen: set[tuple] = set()
    h_shifts = [s.shift for s in h1]
    c_shifts = [c.shift for c in c13]
    no_c13 = 0
    for raw in raws:
        hetero = raw.kind in HETERONUCLEAR
        probe = CrossPeak(raw.kind, raw.shift1, raw.shift2)
        name = probe.label + (f" ({raw.where})" if raw.where else "")
        first = _h1_matches(raw.shift1, h1)
        if hetero and c13_index is not None:
            second = [c13_index[raw.shift2]] if raw.shift2 in c13_index else []
        else:
            second = _c13_matches(raw.shift2, c13) if hetero else _h1_matches(raw.shift2, h1)
        s1 = first[0] if len(first) == 1 else None
        s2 = second[0] if len(second) == 1 else None
        issues = []
        if not first:
            issues.append(f"1H {raw.shift1:.2f} matches no 1H signal (within {H1_MATCH_PPM} ppm)")
        elif len(first) > 1:
            issues.append(
                f"1H {raw.shift1:.2f} matches {len(first)} 1H signals ({_describe(first, h_shifts, 2)})"
            )
        if hetero and not c13:
            no_c13 += 1
        elif not second:
            what = f"13C line (within {C13_MATCH_PPM} ppm)" if hetero else f"1H signal (within {H1_MATCH_PPM} ppm)"
            issues.append(f"{'13C' if hetero else '1H'} {raw.shift2:g} matches no {what}")
        elif len(second) > 1:
            what = "13C lines" if hetero else "1H signals"
            shown = _describe(second, c_shifts, 1) if hetero else _describe(second, h_shifts, 2)
            issues.append(f"{'13C' if hetero else '1H'} {raw.shift2:g} matches {len(second)} {what} ({shown})")
        if not hetero and s1 is not None and s1 == s2:
            issues.append(f"both shifts lie in the 1H signal at {h_shifts[s1]:.2f} (diagonal)")
            s2 = None
        if issues:
            warnings.append(f"{name}: " + "; ".join(issues) + ": not used")
        peak = CrossPeak(raw.kind, raw.shift1, raw.shift2, s1, s2, raw.intensity, raw.note, raw.where)
        key = (raw.kind, s1, s2) if peak.matched else (raw.kind, raw.shift1, raw.shift2, raw.where)
        if not hetero and peak.matched:
            key = (raw.kind, min(s1, s2), max(s1, s2))  # type: ignore[type-var]
        if key in seen:
            continue
        seen.add(key)
        out.append(peak)
    if no_c13:
        warnings.append(
            f"{no_c13} HSQC/HMBC cross peak(s) cannot be matched: no 13C list given (use --c13 or 'c13 =')"
        )
    return tuple(out), warnings


# ----------------------------------------------------------------- JCAMP-DX

_AXES = {"F2": "direct", "X": "direct", "F1": "indirect", "Y": "indirect"}


def jcamp_cross_peaks(text: str, name: str, kind: str) -> list[RawPeak]:
    r"""Cross peaks from a JCAMP-DX file that carries a 2D peak table.

    Read: a block with ``##NUM DIM=2`` (or a ``##DATA TYPE=`` naming a 2D
    experiment) and ``##PEAK TABLE=(F2,F1,Y..F2,F1,Y)`` -- the direct (1H)
    axis F2, the indirect axis F1 (13C for HSQC/HMBC, 1H for COSY/NOESY),
    then an optional intensity; ``(F1,F2,...)`` is read in its own order and
    ``(XY..XY)``/``(XYZ..XYZ)`` as X = F2, Y = F1 (JCAMP-DX NMR
    conventions, common practice).  Shifts must be in ppm.  Any other
    JCAMP-DX file (a 1D peak table, a 2D data matrix) is refused with one
    line.

    Examples
    --------
    >>> doc = "##TITLE=HSQC\n##JCAMP-DX=6.0\n##DATA TYPE=NMR PEAK TABLE\n##NUM DIM=2\n" \
    ...       "##PEAK TABLE=(F2,F1,Y..F2,F1,Y)\n4.12, 60.5, 100\n1.26, 14.2, 80\n##END="
    >>> [(p.shift1, p.shift2) for p in jcamp_cross_peaks(doc, "hsqc.jdx", "HSQC")]
    [(4.12, 60.5), (1.26, 14.2)]
    """
    from elucidate.parse.jcamp import _blocks, _clean, _lines, _records

    for block in _blocks(_records(text, name)):
        header = {label: (value, line) for label, value, line in block}
        dims = _clean(header.get("NUMDIM", ("", 0))[0])
        datatype = _clean(header.get("DATATYPE", ("", 0))[0]).upper()
        two_d = dims == "2" or any(k in datatype for k in ("2D", "HSQC", "HMQC", "HMBC", "COSY", "NOESY"))
        if not two_d or "PEAKTABLE" not in header:
            continue
        value, line = header["PEAKTABLE"]
        first, *rows = _lines(value, line)
        symbols = re.findall(r"F1|F2|[A-Z]", re.sub(r"\.\..*", "", first[1].upper()))
        axes = [_AXES.get(sym) for sym in symbols[:2]]
        if sorted(a for a in axes if a) != ["direct", "indirect"]:
            raise InputError(f"{name} line {line}: 2D peak table '{short(first[1])}' does not name its two "
                             "shift axes (expected (F2,F1,Y..F2,F1,Y))")
        for key in ("UNITS", "XUNITS", "F1UNITS", "F2UNITS"):
            if key in header and "HZ" in _clean(header[key][0]).upper():
                raise InputError(f"{name} line {header[key][1]}: 2D peak table in Hz; give the shifts in ppm")
        direct = axes.index("direct")
        peaks = []
        for n, row in rows:
            cells = [c for c in re.split(r"[,;\s]+", row.strip()) if c]
            if not cells:
                continue
            where = f"{name} line {n}"
            if len(cells) < 2:
                raise InputError(f"{where}: '{short(row)}' needs two shifts")
            a = to_float(cells[direct], "1H shift", where)
            b = to_float(cells[1 - direct], "13C shift" if kind in HETERONUCLEAR else "1H shift", where)
            a, b = _checked(kind, a, b, where)
            intensity = cells[2] if len(cells) > 2 else ""
            peaks.append(RawPeak(kind, a, b, "", "", where) if not intensity else
                         RawPeak(kind, a, b, "", f"intensity {intensity}", where))
        if not peaks:
            raise InputError(f"{name}: the 2D peak table has no rows")
        if len(peaks) > MAX_CROSS_PEAKS:
            raise InputError(f"{name}: {len(peaks)} cross peaks, more than {MAX_CROSS_PEAKS}")
        return peaks
    raise InputError(
        f"{name}: JCAMP-DX file without a 2D peak table (##NUM DIM=2 and ##PEAK TABLE=(F2,F1,Y..F2,F1,Y)); "
        f"give the {kind} cross peaks as text ({_example(kind)}, ...) or a table"
    )
