"""1H and 13C peak lists as chemists write them -> normalised signals.

A 1H list is read the way it appears in a paper or a notebook::

    1H NMR (400 MHz, CDCl3) δ 7.36–7.28 (m, 5H), 5.11 (s, 2H), 2.09 (s, 3H).

The optional header gives the field and the solvent.  Signals are separated by
commas or semicolons; each is a shift or a range (hyphen or en dash, either
order) with details in parentheses: multiplicity, ``J = a, b Hz`` (or ``J a
Hz``), the H count ``nH`` (before or after the multiplicity) and, after the H
count, an assignment.  Relative integrals (``1.00``, ``0.67``) are scaled to the
formula's H count with a warning.  A signal annotated as the solvent, water or
an impurity (``7.26 (CHCl3)``, ``1.56 (br s, H2O)``, ``(solvent)``) needs no H
count and is set aside (:attr:`PeakList.set_aside`), not counted.  Every error
names the offending token and its 1-based position in the text.

Tables (CSV/TSV, JCAMP-DX) are read into the same :class:`RawH1` rows and
finished by :func:`finish_h1`, so every input route gives the same signals.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from typing import Any, Sequence

from elucidate.errors import InputError
from elucidate.model import C13Signal, Formula, H1Signal, SetAside, multiplicity_pattern
from elucidate.parse.annotations import (
    mentioned_substance,
    read_annotation,
    set_aside_record,
    set_aside_warnings,
)
from elucidate.parse.formula import MAX_HEAVY_ATOMS
from elucidate.parse.lexing import (
    DEPT_LABELS,
    J_START_RE,
    MAX_J_HZ,
    NUMBER,
    NUMBER_EXP_RE,
    NUMBER_RE,
    OFF_RESONANCE_H,
    read_couplings,
    read_shift,
    short,
    to_float,
)
from elucidate.parse.multiplicity import normalise_multiplicity

__all__ = [
    "H1_SHIFT_RANGE",
    "C13_SHIFT_RANGE",
    "MAX_H_PER_SIGNAL",
    "RawH1",
    "RawC13",
    "PeakList",
    "parse_h1",
    "parse_c13",
    "read_h1_text",
    "read_c13_text",
    "finish_h1",
    "finish_c13",
    "h1_peak_list",
    "c13_peak_list",
]

#: Accepted 1H shifts (ppm); outside this the list is probably not 1H.
H1_SHIFT_RANGE = (-5.0, 20.0)
#: Accepted 13C shifts (ppm).
C13_SHIFT_RANGE = (-20.0, 250.0)
#: Largest H count one signal may be given as ("nH").
MAX_H_PER_SIGNAL = 100.0
#: Largest relative (unitless) integral accepted.
MAX_RELATIVE_INTEGRAL = 1.0e6
#: A scaled integral this close to a whole number counts as that number of H.
INTEGER_TOLERANCE = 0.2

_INTEGRAL = re.compile(r"(" + NUMBER + r"(?:[eE][+\-]?[0-9]+)?)\s*H(?:'?s)?", re.IGNORECASE)
_HZ_NUMBER = re.compile(r"(" + NUMBER + r")\s*Hz", re.IGNORECASE)
_DELTA = r"(?:δ|delta|d(?=\s*[=:]))\s*[HC]?\s*(?:\(\s*ppm\s*\)|/\s*ppm|,?\s*ppm)?\s*[:=]?"
_HEADER = re.compile(
    r"\s*(?P<nucleus>1\s*H|¹\s*H|13\s*C|¹³\s*C|proton|carbon|H|C)?\s*(?:\{\s*(?:1|¹)\s*H\s*\})?"
    r"\s*[-‐ ]?\s*NMR\b\s*"
    r"(?:spectrum\s*)?(?:\((?P<inner>[^()]*)\))?\s*[:,]?\s*(?:" + _DELTA + r")?",
    re.IGNORECASE,
)
_DELTA_ONLY = re.compile(r"\s*" + _DELTA, re.IGNORECASE)
# "δH (400 MHz; CDCl3) 7.30 (5 H, m)": the header without "NMR"
_DELTA_HEADER = re.compile(
    r"\s*(?:δ|delta)\s*(?P<nucleus>[HC])?\s*\((?P<inner>[^()]*)\)\s*[:,]?\s*(?:ppm\b)?\s*[:=]?",
    re.IGNORECASE,
)
# Where a pasted characterisation paragraph moves on to other data.
_OTHER_DATA = re.compile(
    r"(?:1\s*H|¹\s*H|13\s*C|¹³\s*C|19\s*F|¹⁹\s*F|31\s*P|³¹\s*P|29\s*Si)"
    r"\s*(?:\{[^}]*\})?\s*[-‐ ]?\s*NMR\b"
    r"|(?:HRMS|HR-MS|LRMS|MS|IR|FTIR|FT-IR|UV|Anal\.?|Elemental analysis|m\.\s*p\.|mp|Rf|R_f)\b",
    re.IGNORECASE,
)
_MHZ = re.compile(r"(" + NUMBER + r")\s*MHz", re.IGNORECASE)
_TEMPERATURE = re.compile(NUMBER + r"\s*(?:K|°\s*C|ºC|C)", re.IGNORECASE)


# ----------------------------------------------------------------- raw rows


@dataclass
class RawH1:
    """One 1H signal as read, before normalisation and scaling.

    ``where`` says where it came from for messages (``"position 12"``,
    ``"line 3"``); ``absolute`` is True when the integral was written as an
    H count (``2H``) rather than a relative number.
    """

    low: float
    high: float
    multiplicity: str
    couplings: list[float]
    integral: float
    absolute: bool
    broad: bool = False
    apparent: bool = False
    assignment: str | None = None
    text: str = ""
    where: str = ""
    notes: list[str] = field(default_factory=list)
    set_aside: str | None = None  # the annotation (``CHCl3``, ``solvent``) if it is not the compound's


@dataclass
class RawC13:
    """One 13C signal as read.

    ``letter`` is an off-resonance multiplicity (s/d/t/q) that set
    ``attached_h``; ``has_j`` says the details gave a J (a C–F/C–P coupling).
    """

    shift: float
    carbons: int = 1
    attached_h: int | None = None
    text: str = ""
    where: str = ""
    set_aside: str | None = None
    letter: str | None = None
    has_j: bool = False
    notes: list[str] = field(default_factory=list)


@dataclass(frozen=True)
class PeakList:
    """Result of reading a peak list: signals, warnings, and what the header said.

    ``set_aside`` holds the signals annotated as solvent, water or an
    impurity (their reasons judged with the header's solvent); their
    warnings are not in ``warnings`` (see :func:`set_aside_warnings`).
    """

    signals: tuple[Any, ...]
    warnings: tuple[str, ...] = ()
    field_mhz: float | None = None
    solvent: str | None = None
    set_aside: tuple[SetAside, ...] = ()


# ----------------------------------------------------------- public entries


def parse_h1(text: str, *, formula: Formula | None = None) -> tuple[tuple[H1Signal, ...], list[str]]:
    """Read a 1H peak list written as text.

    Parameters
    ----------
    text : str
        The characterisation line, with or without the ``1H NMR (400 MHz,
        CDCl3) δ`` header.
    formula : Formula, optional
        When given, relative integrals are scaled to its H count and the total
        is checked against it.

    Returns
    -------
    signals : tuple of H1Signal
        Sorted high to low shift.
    warnings : list of str

    Raises
    ------
    InputError
        Naming the bad token and its 1-based position.

    Examples
    --------
    >>> sigs, warns = parse_h1("4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    >>> [(s.shift, s.multiplicity, s.couplings, s.h_count) for s in sigs]
    [(4.12, 'q', (7.1,), 2.0), (2.05, 's', (), 3.0), (1.26, 't', (7.1,), 3.0)]
    """
    peaks = read_h1_text(text, formula=formula)
    return peaks.signals, list(peaks.warnings) + _set_aside_notes(peaks)


def parse_c13(text: str) -> tuple[tuple[C13Signal, ...], list[str]]:
    """Read a 13C list: ``171.1, 60.4 (CH2), 21.0`` with optional ``(2C)`` and DEPT labels.

    Labels CH3/CH2/CH/C (also Cq, quaternary) set ``attached_h``; off-resonance
    letters s/d/t/q do too, unless the details give a J (then they describe a
    C–F or C–P coupling).  Signals are sorted high to low.

    Examples
    --------
    >>> sigs, _ = parse_c13("13C NMR (101 MHz, CDCl3) δ 171.1 (C), 60.4 (CH2), 21.0, 14.2 (CH3)")
    >>> [(s.shift, s.attached_h) for s in sigs]
    [(171.1, 0), (60.4, 2), (21.0, None), (14.2, 3)]
    """
    peaks = read_c13_text(text)
    return peaks.signals, list(peaks.warnings) + _set_aside_notes(peaks)


def _set_aside_notes(peaks: PeakList) -> list[str]:
    from elucidate.parse.solvents import normalise_solvent

    solvent = normalise_solvent(peaks.solvent)[0] if peaks.solvent else None
    return set_aside_warnings(peaks.set_aside, solvent)


def read_h1_text(text: str, *, formula: Formula | None = None) -> PeakList:
    """Like :func:`parse_h1` but also returns the field and solvent from the header."""
    if not isinstance(text, str):
        raise InputError(f"1H list must be text, not {type(text).__name__}")
    start, field_mhz, solvent, nucleus = _header(text, "1H list")
    if nucleus == "C":
        raise InputError("1H list: the header says 13C NMR; give a 13C list with --c13 (or c13 =)")
    chunks, notes = _until_other_data(_split_top(text, start, "1H list"), "1H list")
    raws = [_h1_signal(chunk, pos) for chunk, pos in chunks]
    if not raws:
        raise InputError("1H list is empty: no signals found (expected e.g. '7.26 (s, 5H)')")
    return h1_peak_list(raws, formula, notes, field_mhz, solvent)


def read_c13_text(text: str) -> PeakList:
    """Like :func:`parse_c13` but also returns the solvent from the header."""
    if not isinstance(text, str):
        raise InputError(f"13C list must be text, not {type(text).__name__}")
    start, _field, solvent, nucleus = _header(text, "13C list")
    if nucleus == "H":
        raise InputError("13C list: the header says 1H NMR; give a 1H list with --h1 (or h1 =)")
    raws: list[RawC13] = []
    chunks, notes = _until_other_data(_split_top(text, start, "13C list"), "13C list")
    for chunk, pos in chunks:
        raws.extend(_c13_chunk(chunk, pos))
    if not raws:
        raise InputError("13C list is empty: no shifts found (expected e.g. '171.1, 60.4, 21.0')")
    return c13_peak_list(raws, notes, solvent)


def h1_peak_list(
    raws: Sequence[RawH1],
    formula: Formula | None,
    notes: Sequence[str] = (),
    field_mhz: float | None = None,
    solvent: str | None = None,
) -> PeakList:
    """Finish raw 1H rows into a :class:`PeakList`, the annotated ones set aside."""
    signals, warnings = finish_h1(raws, formula)
    aside = _set_aside("1H", [(r.low, r.high, r.text, r.set_aside, r.where) for r in raws], solvent)
    return PeakList(signals, tuple(list(notes) + warnings), field_mhz, solvent, aside)


def c13_peak_list(raws: Sequence[RawC13], notes: Sequence[str] = (), solvent: str | None = None) -> PeakList:
    """Finish raw 13C rows into a :class:`PeakList`, the annotated ones set aside."""
    signals, warnings = finish_c13(raws)
    aside = _set_aside("13C", [(r.shift, r.shift, r.text, r.set_aside, r.where) for r in raws], solvent)
    return PeakList(signals, tuple(list(notes) + warnings), None, solvent, aside)


def _set_aside(
    nucleus: str, rows: list[tuple[float, float, str, str | None, str]], solvent: str | None
) -> tuple[SetAside, ...]:
    from elucidate.parse.solvents import normalise_solvent

    name = normalise_solvent(solvent)[0] if solvent else None
    return tuple(
        set_aside_record(nucleus, round((lo + hi) / 2, 4), text, label, where, name)
        for lo, hi, text, label, where in rows
        if label is not None
    )


def _until_other_data(chunks: list[tuple[str, int]], what: str) -> tuple[list[tuple[str, int]], list[str]]:
    """Stop at a chunk that starts other data (``13C NMR …``, ``HRMS …``), with a note."""
    for k, (chunk, pos) in enumerate(chunks):
        if k and _OTHER_DATA.match(chunk):
            note = (
                f"{what}: text from position {pos + 1} ('{short(chunk, 20)}') is other data and was "
                f"not read; give a 1H list with --h1 and a 13C list with --c13"
            )
            return chunks[:k], [note]
    return chunks, []


# ------------------------------------------------------------ finishing


def finish_h1(raws: Sequence[RawH1], formula: Formula | None) -> tuple[tuple[H1Signal, ...], list[str]]:
    """Validate, scale and sort raw 1H rows into :class:`H1Signal` records."""
    if not raws:
        raise InputError("1H list is empty: no signals")
    warnings: list[str] = []
    for raw in raws:
        if raw.set_aside is not None:
            _check_h1_shift(raw)
    kept = [raw for raw in raws if raw.set_aside is None]
    if not kept:
        raise InputError(
            f"1H list: every signal is annotated as solvent, water or an impurity "
            f"(e.g. '{short(raws[0].text)}' at {raws[0].where}); no signal of the compound is left"
        )
    raws = kept
    for raw in raws:
        _check_h1_raw(raw)
        warnings.extend(raw.notes)
    counts, scale_warnings, total_stated = _h_counts(raws, formula)
    warnings.extend(scale_warnings)
    signals = []
    for raw, count in zip(raws, counts):
        lo, hi = sorted((raw.low, raw.high))
        signals.append(
            H1Signal(
                shift=round((lo + hi) / 2, 4),
                shift_low=lo,
                shift_high=hi,
                multiplicity=raw.multiplicity,
                couplings=tuple(sorted(raw.couplings, reverse=True)),
                h_count=count,
                integral=float(raw.integral),
                broad=raw.broad,
                apparent=raw.apparent,
                assignment=raw.assignment,
                text=raw.text,
            )
        )
        warnings.extend(_multiplicity_warnings(signals[-1]))
    signals.sort(key=lambda s: -s.shift)  # stable: ties keep the written order
    if formula is not None:
        total = sum(s.h_count for s in signals)
        n_h = formula["H"]
        if abs(total - n_h) > 0.01 and not total_stated:
            if total < n_h:
                why = "missing exchangeable OH/NH, overlapping signals or an integral too low"
            else:
                why = "an integral too high or a signal from an impurity or the solvent"
            warnings.append(
                f"1H integrals add up to {total:g} H but {formula.hill} has {n_h} H ({why})"
            )
    return tuple(signals), warnings


def finish_c13(raws: Sequence[RawC13]) -> tuple[tuple[C13Signal, ...], list[str]]:
    """Validate and sort raw 13C rows into :class:`C13Signal` records."""
    if not raws:
        raise InputError("13C list is empty: no shifts")
    lo, hi = C13_SHIFT_RANGE
    for raw in raws:
        if not (math.isfinite(raw.shift) and lo <= raw.shift <= hi):
            raise InputError(
                f"13C shift '{raw.shift:g}' at {raw.where} is outside the 13C range ({lo:g} to {hi:g} ppm)"
            )
    kept = [raw for raw in raws if raw.set_aside is None]
    if not kept:
        raise InputError(
            f"13C list: every signal is annotated as solvent or an impurity "
            f"(e.g. '{short(raws[0].text)}' at {raws[0].where}); no signal of the compound is left"
        )
    warnings: list[str] = [note for raw in kept for note in raw.notes]
    warnings.extend(_letters_in_coupled_list(kept))
    out = []
    for raw in kept:
        if not 1 <= raw.carbons <= MAX_HEAVY_ATOMS:
            raise InputError(
                f"13C carbon count '{raw.carbons}' at {raw.where} must be 1 to {MAX_HEAVY_ATOMS}"
            )
        out.append(C13Signal(raw.shift, raw.carbons, raw.attached_h, raw.text))
    out.sort(key=lambda s: -s.shift)
    return tuple(out), warnings


def _letters_in_coupled_list(raws: Sequence[RawC13]) -> list[str]:
    """Off-resonance letters are attached-H counts only in a list that gives no J.

    In a list where some signals carry J values (C–F or C–P couplings), a
    bare ``d`` or ``q`` may be a coupling whose J was left out: such letters
    are not read as attached H (common practice: DEPT labels are
    unambiguous, multiplicity letters are not).
    """
    if not any(r.has_j for r in raws):
        return []
    dropped = [r for r in raws if r.letter is not None and not r.has_j]
    for r in dropped:
        r.attached_h = None
    if not dropped:
        return []
    shown = ", ".join(f"{r.shift:g} ({r.letter})" for r in dropped[:4]) + (" …" if len(dropped) > 4 else "")
    return [
        f"13C list: the letters at {shown} were not read as attached-H counts because other "
        "signals give J values (C–F or C–P couplings); write CH3/CH2/CH/C to give the carbon type"
    ]


# --------------------------------------------------------------- header


def _header(text: str, what: str) -> tuple[int, float | None, str | None, str | None]:
    """Where the signals start, and the field/solvent/nucleus the header states."""
    m = _HEADER.match(text)
    if m is None or not re.search(r"NMR", m.group(0), re.IGNORECASE):
        m = _DELTA_HEADER.match(text)
        if m is None or m.group("inner").strip().lower() == "ppm":
            d = _DELTA_ONLY.match(text)
            return (d.end() if d else 0), None, None, None
    nucleus = None
    if m.group("nucleus"):
        nucleus = "C" if "C" in m.group("nucleus").upper() or "3" in m.group("nucleus") else "H"
        if m.group("nucleus").lower() == "proton":
            nucleus = "H"
    field_mhz = solvent = None
    inner = m.group("inner")
    if inner:
        offset = m.start("inner")
        for part, pos in _split_flat(inner, offset):
            p = part.strip()
            if not p:
                continue
            f = _MHZ.fullmatch(p)
            if f:
                value = to_float(f.group(1), f"{what}: field", f"position {pos + 1}")
                if not 10 <= value <= 2000:
                    raise InputError(
                        f"{what}: field '{p}' at position {pos + 1} is not a spectrometer "
                        "frequency (10–2000 MHz)"
                    )
                field_mhz = value
            elif _TEMPERATURE.fullmatch(p):
                continue
            elif solvent is None:
                solvent = p
    return m.end(), field_mhz, solvent, nucleus


# ------------------------------------------------------------ splitting


def _split_top(text: str, start: int, what: str) -> list[tuple[str, int]]:
    """Split at commas/semicolons outside parentheses; check brackets balance."""
    chunks: list[tuple[str, int]] = []
    depth = 0
    opened: list[int] = []
    begin = start
    for i in range(start, len(text)):
        ch = text[i]
        if ch in "([":
            depth += 1
            opened.append(i)
        elif ch in ")]":
            if depth == 0:
                raise InputError(f"{what}: unmatched '{ch}' at position {i + 1}")
            depth -= 1
            opened.pop()
        elif ch in ",;" and depth == 0:
            chunks.append((text[begin:i], begin))
            begin = i + 1
    if depth:
        pos = opened[-1]
        raise InputError(
            f"{what}: '{text[pos]}' at position {pos + 1} is never closed ('{short(text[pos:])}' — "
            f"missing '{')' if text[pos] == '(' else ']'}')"
        )
    chunks.append((text[begin:], begin))
    out = []
    for chunk, pos in chunks:
        stripped = chunk.strip()
        if stripped in ("", "."):
            continue
        lead = len(chunk) - len(chunk.lstrip())
        out.append((stripped, pos + lead))
    return out


def _split_flat(text: str, offset: int) -> list[tuple[str, int]]:
    """Split details at commas/semicolons outside nested parentheses."""
    parts = []
    depth = 0
    begin = 0
    for i, ch in enumerate(text):
        if ch in "([":
            depth += 1
        elif ch in ")]":
            depth = max(0, depth - 1)
        elif ch in ",;" and depth == 0:
            parts.append((text[begin:i], offset + begin))
            begin = i + 1
    parts.append((text[begin:], offset + begin))
    out = []
    for part, pos in parts:
        lead = len(part) - len(part.lstrip())
        out.append((part.strip(), pos + lead))
    return out


# --------------------------------------------------------------- signals


def _paren_body(chunk: str, i: int, pos: int, what: str) -> tuple[str | None, int, int]:
    """Details in parentheses after the shift: (body, body offset, end index)."""
    j = i
    while j < len(chunk) and chunk[j].isspace():
        j += 1
    if j >= len(chunk) or chunk[j] not in "([":
        return None, 0, j
    close = {"(": ")", "[": "]"}[chunk[j]]
    depth = 0
    for k in range(j, len(chunk)):
        if chunk[k] in "([":
            depth += 1
        elif chunk[k] in ")]":
            depth -= 1
            if depth == 0:
                if chunk[k] != close:
                    raise InputError(
                        f"{what}: '{chunk[k]}' at position {pos + k + 1} does not close '{chunk[j]}'"
                    )
                return chunk[j + 1 : k], pos + j + 1, k + 1
    raise InputError(f"{what}: '(' at position {pos + j + 1} is never closed")


def _tail_check(chunk: str, i: int, pos: int, what: str) -> None:
    rest = chunk[i:].strip()
    if rest in ("", "."):
        return
    k = i + (len(chunk[i:]) - len(chunk[i:].lstrip()))
    raise InputError(
        f"{what}: unexpected '{short(rest)}' at position {pos + k + 1} (signals are written "
        "'shift (mult, J = … Hz, nH)' and separated by commas or semicolons)"
    )


def _h1_signal(chunk: str, pos: int) -> RawH1:
    what = "1H list"
    a, b, i = read_shift(chunk, pos, what)
    body, body_pos, i = _paren_body(chunk, i, pos, what)
    _tail_check(chunk, i, pos, what)
    where = f"position {pos + 1}"
    if body is None:
        raise InputError(
            f"{what}: signal '{short(chunk)}' at {where} has no details: give at least the H "
            "count, e.g. '7.26 (s, 1H)'"
        )
    raw = RawH1(a, b, "", [], 0.0, True, text=chunk.rstrip(" ."), where=where)
    _h1_details(raw, body, body_pos, chunk, where)
    return raw


def _h1_details(raw: RawH1, body: str, body_pos: int, chunk: str, where: str) -> None:
    what = "1H list"
    label: str | None = None
    integral: float | None = None
    absolute = True
    j_open = False
    assignment: list[str] = []
    parts = [(part, ppos) for part, ppos in _split_flat(body, body_pos) if part]
    for k, (part, ppos) in enumerate(parts):
        at = f"position {ppos + 1}"
        if j_open and integral is None and k == len(parts) - 1 and _j_list_full(label, raw.couplings):
            # "(d, J = 8.0, 0.98)": the multiplicity has all its J, so the last bare
            # number is the (relative) integral, not another coupling constant.
            j_open = False
        # 1. coupling constants
        jm = J_START_RE.fullmatch(part)
        if jm and not normalise_multiplicity(part):
            values, closed = read_couplings(jm.group("rest"), ppos + jm.start("rest"))
            raw.couplings.extend(values)
            j_open = not closed
            continue
        if _HZ_NUMBER.fullmatch(part) or (j_open and NUMBER_RE.fullmatch(part)):
            values, closed = read_couplings(part, ppos)
            raw.couplings.extend(values)
            j_open = not closed
            continue
        j_open = False
        # 2. H count
        im = _INTEGRAL.fullmatch(part)
        if im:
            if integral is not None:
                raise InputError(f"{what}: second H count '{part}' at {at} in signal '{short(chunk)}'")
            integral = _integral_value(im.group(1), part, at, absolute=True)
            absolute = True
            continue
        # 3. multiplicity (and the flags br / app)
        mult = normalise_multiplicity(part)
        if mult is not None and (not mult.label or not label):
            if mult.label:
                label = mult.label
            raw.broad = raw.broad or mult.broad
            raw.apparent = raw.apparent or mult.apparent
            if mult.note:
                raw.notes.append(f"1H signal at {where}: {mult.note}")
            continue
        # 4. a bare number: a relative integral
        if NUMBER_EXP_RE.fullmatch(part.replace("−", "-")):
            if integral is not None:
                raise InputError(
                    f"{what}: extra number '{part}' at {at} in signal '{short(chunk)}' "
                    "(a J value needs 'J' before it or 'Hz' after it)"
                )
            integral = _integral_value(part, part, at, absolute=False)
            absolute = False
            continue
        # 5. the solvent, water or an impurity: the signal is set aside
        note = read_annotation(part)
        if note is not None:
            raw.set_aside = raw.set_aside or note.label
            continue
        # 6. anything after the H count is the assignment
        if integral is not None:
            assignment.append(part)
            continue
        raise InputError(
            f"{what}: '{short(part)}' at {at} is not a multiplicity, a J value or an H count"
        )
    if raw.set_aside is not None:
        raw.multiplicity = label or ("s" if raw.broad else "m")
        raw.integral = integral or 0.0
        raw.absolute = absolute
        raw.assignment = ", ".join(assignment) if assignment else None
        return
    if integral is None:
        raise InputError(
            f"{what}: signal '{short(chunk)}' at {where} has no H count (e.g. '2H')"
        )
    named = mentioned_substance(", ".join(assignment)) if assignment else None
    if named:
        raw.notes.append(
            f"1H signal '{short(chunk)}' at {where} names {named} beside other text: kept as a "
            f"signal of the compound (a signal written as only '({named})' would be set aside)"
        )
    if not label:
        if raw.broad:
            label = "s"
        else:
            label = "m"
            raw.notes.append(f"1H signal '{short(chunk)}' at {where} has no multiplicity: read as m")
    raw.multiplicity = label
    raw.integral = integral
    raw.absolute = absolute
    raw.assignment = ", ".join(assignment) if assignment else None


def _j_list_full(label: str | None, couplings: list[float]) -> bool:
    pattern = multiplicity_pattern(label) if label else None
    return pattern is not None and label != "s" and len(couplings) >= len(pattern)


def _integral_value(number: str, token: str, at: str, *, absolute: bool) -> float:
    value = to_float(number, "1H list: integral", at)
    limit = MAX_H_PER_SIGNAL if absolute else MAX_RELATIVE_INTEGRAL
    if not 0 < value <= limit:
        raise InputError(
            f"1H list: integral '{short(token)}' at {at} is not a plausible H count "
            f"(0 < n ≤ {limit:g})"
        )
    return value


def _check_h1_shift(raw: RawH1) -> None:
    lo, hi = H1_SHIFT_RANGE
    for value in (raw.low, raw.high):
        if not (math.isfinite(value) and lo <= value <= hi):
            raise InputError(
                f"1H shift '{value:g}' at {raw.where} is outside the 1H range ({lo:g} to {hi:g} ppm)"
            )


def _check_h1_raw(raw: RawH1) -> None:
    _check_h1_shift(raw)
    if not (math.isfinite(raw.integral) and raw.integral > 0):
        raise InputError(f"1H integral '{raw.integral:g}' at {raw.where} must be a positive number")
    limit = MAX_H_PER_SIGNAL if raw.absolute else MAX_RELATIVE_INTEGRAL
    if raw.integral > limit:
        raise InputError(
            f"1H integral '{raw.integral:g}' at {raw.where} is not a plausible H count (0 < n ≤ {limit:g})"
        )
    for j in raw.couplings:
        if not (math.isfinite(j) and 0 < j <= MAX_J_HZ):
            raise InputError(
                f"J '{j:g}' at {raw.where} is not a coupling constant (0 < J ≤ {MAX_J_HZ:g} Hz)"
            )


def _multiplicity_warnings(sig: H1Signal) -> list[str]:
    out = []
    if sig.multiplicity == "s" and sig.couplings:
        out.append(f"1H signal at {sig.shift:g} ppm is a singlet but lists J values")
    pattern = multiplicity_pattern(sig.multiplicity)
    if pattern and sig.multiplicity != "s" and len(sig.couplings) > len(pattern):
        out.append(
            f"1H signal at {sig.shift:g} ppm ({sig.multiplicity}) lists {len(sig.couplings)} J "
            f"values for {len(pattern)} coupling(s)"
        )
    return out


# ------------------------------------------------------------- integrals


def _h_counts(raws: Sequence[RawH1], formula: Formula | None) -> tuple[list[float], list[str], bool]:
    """H per signal: as written, or relative integrals scaled to the formula.

    The flag is True when a warning already states how the total compares
    with the formula (the integrals were rescaled).
    """
    values = [float(r.integral) for r in raws]
    relative = any(not r.absolute for r in raws) or any(abs(v - round(v)) > 0.05 for v in values)
    if not relative:
        return values, [], False
    if formula is None:
        note = "1H integrals look relative and no formula was given: H counts left as written"
        return values, [note], False
    n_h = formula["H"]
    if n_h == 0:
        raise InputError(f"formula {formula.hill} has no H, but a 1H peak list was given")
    total = sum(values)
    shown = ", ".join(f"{v:g}" for v in values[:4]) + (", …" if len(values) > 4 else "")
    # Largest whole-number total <= formula H that makes every signal a whole number of H;
    # at most the H that could sit on O, S, N, P (exchangeable, often unseen) may be missing.
    exchangeable = formula["O"] + formula["S"] + 2 * (formula["N"] + formula["P"])
    lowest = max(len(values), n_h - exchangeable, 1)
    for target in range(n_h, lowest - 1, -1):
        factor = target / total
        scaled = [v * factor for v in values]
        if all(round(x) >= 1 and abs(x - round(x)) <= INTEGER_TOLERANCE for x in scaled):
            counts = [float(round(x)) for x in scaled]
            if abs(factor - 1) < 1e-9:
                return counts, [], False
            msg = (
                f"relative 1H integrals ({shown}) scaled ×{factor:.3g} to whole H counts "
                f"totalling {target} H"
            )
            if target < n_h:
                msg += (
                    f"; {formula.hill} has {n_h} H, so {n_h - target} H are not seen "
                    "(exchangeable OH/NH?)"
                )
            return counts, [msg], True
    factor = n_h / total
    counts = [round(v * factor, 2) for v in values]
    return counts, [
        f"relative 1H integrals ({shown}) do not scale to whole numbers of H; scaled ×{factor:.3g} "
        f"to the {n_h} H of {formula.hill} as {', '.join(f'{c:g}' for c in counts[:6])}"
    ], True


# ------------------------------------------------------------------- 13C


# "2C", "2 C", "x2", "2x", "2 x CH", "2CH", "2 CH3", "CH3 x 2" (× already turned into x; lower case)
_C13_TYPE = r"(?:ch3|ch2|ch|cq|c)"
_CARBON_COUNT = re.compile(
    r"(?P<n1>[0-9]{1,6})\s*c"
    r"|x\s*(?P<n2>[0-9]{1,6})|(?P<n3>[0-9]{1,6})\s*x"
    r"|(?P<n4>[0-9]{1,6})\s*(?:x\s*)?(?P<t1>" + _C13_TYPE + r")"
    r"|(?P<t2>" + _C13_TYPE + r")\s*x\s*(?P<n5>[0-9]{1,6})"
)


def _c13_chunk(chunk: str, pos: int) -> list[RawC13]:
    """One comma-separated chunk: one or more ``shift [(details)]`` separated by spaces."""
    out = []
    i = 0
    what = "13C list"
    while i < len(chunk):
        while i < len(chunk) and chunk[i].isspace():
            i += 1
        if i >= len(chunk) or chunk[i:].strip() == ".":
            break
        a, b, j = read_shift(chunk[i:], pos + i, what)
        if a != b:
            raise InputError(
                f"{what}: '{short(chunk[i:i + j])}' at position {pos + i + 1} is a range; "
                "13C shifts are single values"
            )
        body, body_pos, k = _paren_body(chunk[i:], j, pos + i, what)
        raw = RawC13(a, text="", where=f"position {pos + i + 1}")
        if body is not None:
            _c13_details(raw, body, body_pos)
        raw.text = chunk[i : i + k].strip()
        out.append(raw)
        i += k
        nxt = chunk[i:].lstrip()
        if nxt and not NUMBER_RE.match(nxt) and not re.match(r"(?:δ|delta)", nxt) and nxt != ".":
            _tail_check(chunk, i, pos, what)
    return out


def _c13_key(part: str) -> str:
    """A 13C detail in comparison form: lower case, × as x, subscripts as digits."""
    key = part.lower().replace("×", " x ").replace("₃", "3").replace("₂", "2")
    return " ".join(key.split())


def _c13_details(raw: RawC13, body: str, body_pos: int) -> None:
    parts = _split_flat(body, body_pos)
    raw.has_j = any(J_START_RE.fullmatch(p) for p, _ in parts)
    dept: tuple[int, str] | None = None  # (attached H, as written)
    count: str | None = None
    letter: tuple[str, str] | None = None
    for part, ppos in parts:
        at = f"position {ppos + 1}"
        key = _c13_key(part)
        if not key:
            continue
        m = _CARBON_COUNT.fullmatch(key)
        label = None
        if m:
            digits = next(g for g in (m.group(f"n{i}") for i in range(1, 6)) if g)
            if count is not None and int(digits) != raw.carbons:
                raise InputError(
                    f"13C list: carbon count '{part}' at {at} contradicts '{count}' in the same signal"
                )
            raw.carbons, count = int(digits), part
            if not 1 <= raw.carbons <= MAX_HEAVY_ATOMS:
                raise InputError(f"13C list: carbon count '{part}' at {at} must be 1 to {MAX_HEAVY_ATOMS}")
            label = m.group("t1") or m.group("t2")
            if label is None:
                continue
        elif key in DEPT_LABELS:
            label = key
        if label is not None:
            h = DEPT_LABELS[label]
            if dept is not None and dept[0] != h:
                raise InputError(
                    f"13C list: carbon type '{part}' at {at} contradicts '{dept[1]}' in the same signal"
                )
            dept = (h, part)
            continue
        if key in OFF_RESONANCE_H and not raw.has_j:
            letter = (key, part)
            continue
        if read_annotation(part) is not None:
            raw.set_aside = raw.set_aside or " ".join(part.split())
            continue
        # anything else (assignments such as C=O, J to F/P) is kept in the text only
    if dept is not None:
        raw.attached_h = dept[0]
        if letter is not None and OFF_RESONANCE_H[letter[0]] != dept[0]:
            raw.notes.append(
                f"13C signal at {raw.where}: '{letter[1]}' does not match the carbon type "
                f"'{dept[1]}'; the carbon type is used"
            )
    elif letter is not None:
        raw.attached_h = OFF_RESONANCE_H[letter[0]]
        raw.letter = letter[1]
