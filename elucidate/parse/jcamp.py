"""JCAMP-DX peak tables (a small reader of our own).

Reads the parts of a JCAMP-DX file that describe a peak list (McDonald &
Wilks, Appl. Spectrosc. 1988, 42, 151; IUPAC JCAMP-DX NMR recommendations):

* ``##PEAK TABLE=(XY..XY)``, ``(XYW..XYW)``, ``(XYM..XYM)`` (and ``XYMW``);
* ``##PEAK ASSIGNMENTS=(XYA)``, ``(XYMA)``, ``(XYWA)``, ``(XYMWA)``;
* ``##.OBSERVE FREQUENCY=`` (MHz), ``##.OBSERVE NUCLEUS=^1H``,
  ``##.SOLVENT NAME=``, ``##XUNITS=`` (PPM or HZ), ``##XFACTOR=``, ``##YFACTOR=``.

Labels compare upper-case with spaces, dashes, slashes and underscores
removed; ``$$`` starts a comment.  Each peak is taken as one signal: X the
shift, Y its integral (relative, scaled like any relative integral), M the
multiplicity (S D T Q M U, U = unknown), W the width (read, not used), A the
assignment.  A full spectrum (``##XYDATA``) is refused: no peak picking here.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from elucidate.errors import InputError
from elucidate.parse.annotations import read_annotation
from elucidate.parse.lexing import OFF_RESONANCE_H, short, to_float
from elucidate.parse.multiplicity import normalise_multiplicity
from elucidate.parse.peaks import RawC13, RawH1

__all__ = [
    "MAX_PEAKS",
    "LINE_SPACING_HZ",
    "JcampPeak",
    "JcampPeaks",
    "norm_label",
    "looks_like_jcamp",
    "read_jcamp",
    "jcamp_h1_rows",
    "jcamp_c13_rows",
]

#: More rows than this is a line list of a whole spectrum, not a signal table.
MAX_PEAKS = 200
#: Peaks closer than this (Hz) look like lines of one multiplet (a typical 3J is 6–8 Hz).
LINE_SPACING_HZ = 10.0

_NUCLEI = {"1H": "1H", "H1": "1H", "H": "1H", "13C": "13C", "C13": "13C"}
_LDR = re.compile(r"##([^=]*)=(.*)", re.DOTALL)
_VARLIST = re.compile(r"\s*\(\s*([A-Z]+)\s*(?:\.\.\s*([A-Z]+)\s*)?\)", re.IGNORECASE)


@dataclass(frozen=True)
class JcampPeak:
    """One row of a JCAMP-DX peak table (``x`` in ppm after unit conversion)."""

    x: float
    y: float | None
    m: str | None
    w: float | None
    a: str | None
    line: int


@dataclass(frozen=True)
class JcampPeaks:
    """The peak table of a JCAMP-DX file and what its header says."""

    name: str
    title: str
    nucleus: str | None
    observe_mhz: float | None
    solvent: str | None
    variables: str
    peaks: tuple[JcampPeak, ...]


def norm_label(label: str) -> str:
    """JCAMP-DX label comparison form: upper case, no spaces - / _.

    >>> norm_label(".Observe Frequency")
    '.OBSERVEFREQUENCY'
    """
    return re.sub(r"[\s\-/_]", "", label).upper()


def looks_like_jcamp(text: str) -> bool:
    """True when the first non-blank line is a ``##LABEL=`` record."""
    for line in text.splitlines():
        s = line.strip().lstrip("\ufeff")
        if s:
            return s.startswith("##")
    return False


def read_jcamp(text: str, name: str, nucleus: str | None = None) -> JcampPeaks:
    """Read the peak table of a JCAMP-DX text.

    Parameters
    ----------
    text : str
        File contents.
    name : str
        File name for messages.
    nucleus : {"1H", "13C"}, optional
        In a file with several blocks, prefer the first peak table whose
        ``##.OBSERVE NUCLEUS=`` is this one (or is not stated).

    Raises
    ------
    InputError
        If there is no peak table, a value is not a number, a row is cut
        short, or X is in Hz without an observe frequency.
    """
    records = _records(text, name)
    blocks = _blocks(records)
    tables = [b for b in blocks if any(label in ("PEAKTABLE", "PEAKASSIGNMENTS") for label, _, _ in b)]
    if tables:
        for block in tables:
            stated = next((v for label, v, _ in block if label == ".OBSERVENUCLEUS"), None)
            if nucleus is None or stated is None or _nucleus(stated) == nucleus:
                return _peaks(block, name)
        return _peaks(tables[0], name)  # the nucleus check then names the mismatch
    if any(label in ("XYDATA", "DATATABLE", "XYPOINTS") for block in blocks for label, _, _ in block):
        raise InputError(
            f"{name}: holds a full spectrum (XYDATA), not a peak table; export the peak list "
            "(##PEAK TABLE=) or type it in"
        )
    raise InputError(f"{name}: no ##PEAK TABLE= or ##PEAK ASSIGNMENTS= record found")


def _records(text: str, name: str) -> list[tuple[str, str, int]]:
    """(normalised label, value, line number) for each ##LABEL= record.

    Continuation lines are joined with line-number markers so that messages
    about a peak can name its own line.
    """
    heads: list[tuple[str, int]] = []
    values: list[list[str]] = []
    for n, line in enumerate(text.lstrip("\ufeff").splitlines(), start=1):
        if "$$" in line:
            line = line[: line.index("$$")]
        s = line.strip()
        if s.startswith("##"):
            m = _LDR.match(s)
            if m is None:
                raise InputError(f"{name} line {n}: '{short(s)}' has no '=' (expected ##LABEL=value)")
            heads.append((norm_label(m.group(1)), n))
            values.append([m.group(2).strip()])
        elif s and heads:
            values[-1].append(f"\x00{n}\x00" + s)
        elif s:
            raise InputError(f"{name} line {n}: '{short(s)}' comes before any ##LABEL= record")
    if not heads:
        raise InputError(f"{name}: not a JCAMP-DX file (no ##LABEL= records)")
    return [(label, "\n".join(parts), n) for (label, n), parts in zip(heads, values)]


def _blocks(records: list[tuple[str, str, int]]) -> list[list[tuple[str, str, int]]]:
    blocks: list[list[tuple[str, str, int]]] = [[]]
    for rec in records:
        if rec[0] == "TITLE" and blocks[-1]:
            blocks.append([])
        blocks[-1].append(rec)
    return blocks


def _lines(value: str, first_line: int) -> list[tuple[int, str]]:
    """Split a record value into (line number, text) using the markers from _records."""
    out = []
    for i, piece in enumerate(value.split("\n")):
        m = re.match(r"\x00([0-9]+)\x00(.*)", piece, re.DOTALL)
        if m:
            out.append((int(m.group(1)), m.group(2)))
        else:
            out.append((first_line if i == 0 else first_line + i, piece))
    return out


def _clean(value: str) -> str:
    return re.sub(r"\x00[0-9]+\x00", "", value).strip()


def _peaks(block: list[tuple[str, str, int]], name: str) -> JcampPeaks:
    header = {label: (_clean(value), line) for label, value, line in block}
    title = header.get("TITLE", ("", 0))[0]
    datatype = header.get("DATATYPE", ("", 0))[0]
    if datatype and "NMR" not in datatype.upper() and "PEAK" not in datatype.upper():
        line = header["DATATYPE"][1]
        raise InputError(f"{name} line {line}: DATA TYPE '{short(datatype)}' is not NMR data")
    nucleus = None
    if ".OBSERVENUCLEUS" in header:
        nucleus = _nucleus(header[".OBSERVENUCLEUS"][0])
    observe = None
    if ".OBSERVEFREQUENCY" in header:
        value, line = header[".OBSERVEFREQUENCY"]
        observe = to_float(value, "observe frequency", f"{name} line {line}")
        if not 1 <= observe <= 2000:
            raise InputError(f"{name} line {line}: observe frequency '{value}' is not 1–2000 MHz")
    solvent = None
    for key in (".SOLVENTNAME", ".SOLVENT", "SOLVENTNAME"):
        if key in header and header[key][0]:
            solvent = header[key][0]
            break
    xfactor = yfactor = 1.0
    for key in ("XFACTOR", "YFACTOR"):
        if key in header:
            value, line = header[key]
            f = to_float(value, key, f"{name} line {line}")
            if f == 0:
                raise InputError(f"{name} line {line}: {key} must not be 0")
            if key == "XFACTOR":
                xfactor = f
            else:
                yfactor = f
    xunits = header.get("XUNITS", ("PPM", 0))[0].upper().replace(" ", "")
    if xunits not in ("PPM", "HZ", ""):
        raise InputError(f"{name} line {header['XUNITS'][1]}: XUNITS '{xunits}' is neither PPM nor HZ")
    if xunits == "HZ" and observe is None:
        raise InputError(f"{name}: X is in Hz but there is no ##.OBSERVE FREQUENCY= to convert to ppm")
    to_ppm = (1.0 / observe) if (xunits == "HZ" and observe) else 1.0

    rec = next(((label, value, line) for label, value, line in block if label == "PEAKTABLE"), None)
    if rec is None:
        rec = next((label, value, line) for label, value, line in block if label == "PEAKASSIGNMENTS")
    label, value, line = rec
    lines = _lines(value, line)
    first_no, first = lines[0]
    m = _VARLIST.match(first)
    if m is None:
        raise InputError(
            f"{name} line {first_no}: '{short(first)}' does not name the columns, e.g. (XY..XY) or (XYM..XYM)"
        )
    variables = m.group(1).upper()
    if m.group(2) and m.group(2).upper() != variables:
        raise InputError(
            f"{name} line {first_no}: '({m.group(1)}..{m.group(2)})' is not a JCAMP-DX variable list"
        )
    known = set("XYWMA")
    if not variables.startswith("X") or set(variables) - known or len(set(variables)) != len(variables):
        raise InputError(f"{name} line {first_no}: peak columns '{variables}' not understood (X, Y, W, M, A)")
    lines[0] = (first_no, first[m.end():])
    if label == "PEAKASSIGNMENTS" or "A" in variables:
        tuples = _assignment_tuples(lines, name)
    else:
        tuples = _flat_tuples(lines, len(variables), name)
    peaks = []
    for values, n in tuples:
        if len(values) != len(variables):
            raise InputError(
                f"{name} line {n}: peak has {len(values)} values for the columns ({variables})"
            )
        row = dict(zip(variables, values))
        where = f"{name} line {n}"
        x = to_float(row["X"], "shift", where) * xfactor * to_ppm
        y = to_float(row["Y"], "intensity", where) * yfactor if row.get("Y", "").strip() else None
        w = to_float(row["W"], "width", where) if row.get("W", "").strip() else None
        mult = row.get("M", "").strip() or None
        assignment = row.get("A", "").strip().strip("<>").strip() or None
        peaks.append(JcampPeak(x, y, mult, w, assignment, n))
        if len(peaks) > MAX_PEAKS:
            raise InputError(
                f"{name}: more than {MAX_PEAKS} peaks — this looks like the line list of a whole "
                "spectrum; give one row per signal"
            )
    if not peaks:
        raise InputError(f"{name} line {line}: the peak table is empty")
    return JcampPeaks(name, title, nucleus, observe, solvent, variables, tuple(peaks))


def _nucleus(value: str) -> str:
    raw = _clean(value).replace("^", "").replace(" ", "").upper()
    return _NUCLEI.get(raw, raw)


def _flat_tuples(lines: list[tuple[int, str]], width: int, name: str) -> list[tuple[list[str], int]]:
    tokens: list[tuple[str, int]] = []
    for n, text in lines:
        for tok in re.split(r"[,;\s]+", text.strip()):
            if tok:
                tokens.append((tok, n))
    if len(tokens) % width:
        n = tokens[-1][1] if tokens else 0
        raise InputError(
            f"{name} line {n}: the peak table ends part-way through a peak "
            f"({len(tokens)} values for {width} per peak)"
        )
    return [([t for t, _ in tokens[i : i + width]], tokens[i][1]) for i in range(0, len(tokens), width)]


def _assignment_tuples(lines: list[tuple[int, str]], name: str) -> list[tuple[list[str], int]]:
    """Entries ``(x, y, m, <text>)``, one or more per line, commas inside <> kept."""
    out: list[tuple[list[str], int]] = []
    for n, text in lines:
        i = 0
        s = text.strip()
        while i < len(s):
            if s[i].isspace() or s[i] == ";":
                i += 1
                continue
            if s[i] != "(":
                raise InputError(f"{name} line {n}: '{short(s[i:])}' is not a (x, y, …) peak entry")
            values: list[str] = []
            buf = ""
            in_text = False
            j = i + 1
            while j < len(s):
                ch = s[j]
                if in_text:
                    buf += ch
                    if ch == ">":
                        in_text = False
                elif ch == "<":
                    in_text = True
                    buf += ch
                elif ch == ",":
                    values.append(buf.strip())
                    buf = ""
                elif ch == ")":
                    values.append(buf.strip())
                    break
                else:
                    buf += ch
                j += 1
            else:
                raise InputError(f"{name} line {n}: '(' at column {i + 1} is never closed")
            out.append((values, n))
            i = j + 1
    return out


def _check_nucleus(doc: JcampPeaks, wanted: str) -> None:
    if doc.nucleus and doc.nucleus != wanted:
        raise InputError(
            f"{doc.name}: .OBSERVE NUCLEUS is {doc.nucleus}, but it was given as the {wanted} list"
        )


def jcamp_h1_rows(doc: JcampPeaks) -> list[RawH1]:
    """1H signals from a JCAMP-DX peak table (Y read as the relative integral)."""
    _check_nucleus(doc, "1H")
    rows = []
    for p in doc.peaks:
        where = f"{doc.name} line {p.line}"
        aside = _annotation(p)
        if aside is not None:
            rows.append(RawH1(p.x, p.x, "m", [], p.y or 0.0, False, text=f"{p.x:g} ({aside})",
                              where=where, set_aside=aside))
            continue
        if p.y is None:
            raise InputError(f"{where}: peak at {p.x:g} ppm has no Y (integral): cannot count its H")
        label, broad, apparent, notes = "m", False, False, []
        if p.m:
            mult = normalise_multiplicity("m" if p.m.upper() == "U" else p.m)
            if mult is None:
                raise InputError(f"{where}: '{short(p.m)}' is not a multiplicity (S, D, T, Q, M, U)")
            label = mult.label or ("s" if mult.broad else "m")
            broad, apparent = mult.broad, mult.apparent
            if mult.note:
                notes.append(f"{where}: {mult.note}")
        text = f"{p.x:g}, {p.y:g}" + (f", {p.m}" if p.m else "") + (f", <{p.a}>" if p.a else "")
        rows.append(RawH1(p.x, p.x, label, [], p.y, False, broad, apparent, p.a, text, where, notes))
    close = _close_lines(doc)
    kept = [r for r in rows if r.set_aside is None]
    if close and kept:
        kept[0].notes.append(
            f"{doc.name}: peaks {close} lie within {LINE_SPACING_HZ:g} Hz of each other — if they are "
            "the lines of one multiplet, give one row per signal (each row is read as a signal)"
        )
    return rows


def _close_lines(doc: JcampPeaks) -> str:
    """Neighbouring peaks closer than a typical J: a line list rather than signals."""
    limit = LINE_SPACING_HZ / (doc.observe_mhz or 400.0)
    xs = sorted({p.x for p in doc.peaks}, reverse=True)
    pairs = [(a, b) for a, b in zip(xs, xs[1:]) if a - b < limit]
    if not pairs:
        return ""
    shown = ", ".join(f"{a:.3f}/{b:.3f}" for a, b in pairs[:3])
    return shown + (" …" if len(pairs) > 3 else "")


def jcamp_c13_rows(doc: JcampPeaks) -> list[RawC13]:
    """13C signals from a JCAMP-DX peak table (M = S/D/T/Q read as 0/1/2/3 attached H)."""
    _check_nucleus(doc, "13C")
    rows = []
    for p in doc.peaks:
        where = f"{doc.name} line {p.line}"
        attached = None
        aside = _annotation(p)
        if aside is not None:
            rows.append(RawC13(p.x, 1, None, f"{p.x:g} ({aside})", where, set_aside=aside))
            continue
        if p.m:
            key = p.m.strip().lower()
            if key in OFF_RESONANCE_H:
                attached = OFF_RESONANCE_H[key]
            elif key not in ("m", "u"):
                raise InputError(f"{where}: '{short(p.m)}' is not a 13C multiplicity (S, D, T, Q, M, U)")
        rows.append(RawC13(p.x, 1, attached, f"{p.x:g}" + (f", {p.m}" if p.m else ""), where))
    return rows


def _annotation(p: JcampPeak) -> str | None:
    """The peak's assignment text, when it names the solvent, water or an impurity."""
    note = read_annotation(p.a) if p.a else None
    return note.label if note is not None else None
