"""Peak tables with a header row: CSV, TSV or semicolon-separated text.

Column names are matched loosely (case, spaces, units in brackets and
punctuation ignored), so ``δ (ppm)``, ``Shift``, ``ppm`` and ``chemical shift``
all name the shift column.  Rows become the same raw records as the text
parser's, so a table and a characterisation line give identical signals.

1H columns: shift (or a low/high pair, or a range cell such as
``7.36–7.28``), multiplicity, J (``7.9, 1.7``), the H count (``nH``, ``H``)
or a relative ``integral``, and an optional assignment.
13C columns: shift, the carbon count (``nC``, ``carbons``) and the DEPT type
(``CH3``/``CH2``/``CH``/``C``, or 3/2/1/0 attached H).

A row whose assignment is the solvent, water or an impurity (``CHCl3``,
``solvent``, ``impurity``, ``H2O``) is set aside: it needs no H count.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass
from typing import Mapping

from elucidate.errors import InputError
from elucidate.parse.annotations import read_annotation
from elucidate.parse.formula import MAX_HEAVY_ATOMS
from elucidate.parse.lexing import (
    DEPT_LABELS,
    J_START_RE,
    OFF_RESONANCE_H,
    read_couplings,
    read_shift,
    short,
    to_float,
)
from elucidate.parse.multiplicity import normalise_multiplicity
from elucidate.parse.peaks import RawC13, RawH1

__all__ = [
    "MAX_ROWS",
    "Table",
    "column_role",
    "read_table",
    "h1_rows",
    "c13_rows",
    "looks_like_table",
    "row_to_h1",
    "row_to_c13",
]

csv.field_size_limit(1 << 20)

#: More rows than this is not a table of signals.
MAX_ROWS = 200

# Normalised header name -> role.  Order of checks in column_role() handles prefixes.
_EXACT = {
    # shift
    "shift": "shift", "delta": "shift", "deltappm": "shift", "ppm": "shift", "shiftppm": "shift",
    "chemicalshift": "shift", "cs": "shift", "position": "shift", "peak": "shift",
    "centre": "shift", "center": "shift", "deltah": "shift", "deltac": "shift", "x": "shift",
    "d": "shift", "dppm": "shift",
    # range
    "range": "range", "shiftrange": "range", "rangeppm": "range",
    "low": "low", "from": "low", "start": "low", "min": "low", "lo": "low", "shiftlow": "low",
    "shiftfrom": "low", "shiftmin": "low", "lowppm": "low", "lower": "low",
    "high": "high", "to": "high", "end": "high", "max": "high", "hi": "high", "shifthigh": "high",
    "shiftto": "high", "shiftmax": "high", "highppm": "high", "upper": "high",
    # multiplicity
    "mult": "mult", "multiplicity": "mult", "m": "mult", "pattern": "mult", "splitting": "mult",
    "multiplet": "mult", "shape": "mult",
    # couplings
    "j": "j", "jhz": "j", "js": "j", "coupling": "j", "couplings": "j", "couplingconstant": "j",
    "couplingconstants": "j", "jvalue": "j", "jvalues": "j", "jhh": "j",
    # H count (absolute) and integral (relative)
    "nh": "nh", "h": "nh", "hs": "nh", "hcount": "nh", "numberofh": "nh", "protons": "nh",
    "nprotons": "nh", "numberofprotons": "nh", "hydrogens": "nh", "noofh": "nh", "numh": "nh",
    "proton": "nh",
    "integral": "integral", "integrals": "integral", "int": "integral", "integration": "integral",
    "area": "integral", "relativeintegral": "integral", "relint": "integral", "y": "integral",
    # assignment
    "assignment": "assignment", "assign": "assignment", "label": "assignment", "group": "assignment",
    "atom": "assignment", "atoms": "assignment", "note": "assignment", "notes": "assignment",
    "comment": "assignment", "comments": "assignment",
    # 13C
    "nc": "carbons", "carbons": "carbons", "c": "carbons", "ccount": "carbons", "numberofc": "carbons",
    "count": "carbons", "n": "carbons", "numberofcarbons": "carbons",
    "dept": "dept", "type": "dept", "attachedh": "dept", "ch": "dept", "carbontype": "dept",
}
_PREFIX = (
    ("chemicalshift", "shift"), ("shift", "shift"), ("delta", "shift"),
    ("multiplic", "mult"), ("mult", "mult"), ("coupling", "j"), ("jhz", "j"), ("jvalue", "j"),
    ("integ", "integral"), ("assign", "assignment"), ("numberofh", "nh"), ("dept", "dept"),
)


@dataclass(frozen=True)
class Table:
    """A peak table: column roles and the rows as dicts keyed by role."""

    name: str
    roles: tuple[str, ...]
    rows: tuple[tuple[int, dict[str, str]], ...]
    ignored: tuple[str, ...]
    decimal_comma: bool


def _norm(header: str) -> str:
    h = header.strip().lower().replace("δ", "delta")
    return re.sub(r"[^a-z0-9]", "", h)


def column_role(header: str, nucleus: str) -> str | None:
    """The role a column header names (``"shift"``, ``"mult"``, ``"j"``, ``"nh"`` …), or None.

    >>> column_role("δ (ppm)", "1H"), column_role("No. of H", "1H"), column_role("Mult.", "13C")
    ('shift', 'nh', 'dept')
    """
    key = _norm(header)
    if nucleus == "13C" and key in ("h", "nh", "mult", "multiplicity", "hs", "m"):
        return "dept"
    if key in _EXACT:
        return _EXACT[key]
    for prefix, role in _PREFIX:
        if key.startswith(prefix):
            return role
    return None


def looks_like_table(text: str) -> bool:
    """True when the first non-comment line reads like a header of a peak table."""
    for line in text.splitlines():
        s = line.strip().lstrip("\ufeff")
        if not s or s.startswith("#"):
            continue
        cells = _cells(s, _delimiter(s))
        return len(cells) >= 2 and sum(column_role(c, "1H") is not None for c in cells) >= 2 and not re.match(
            r"\s*[+\-−]?[0-9]", s
        )
    return False


def _delimiter(header: str) -> str:
    if "\t" in header:
        return "\t"
    if ";" in header and "," not in header:
        return ";"
    return ","


def _cells(line: str, delimiter: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=delimiter))
    except (csv.Error, StopIteration):
        return [line]


def read_table(text: str, name: str, nucleus: str) -> Table:
    """Split a CSV/TSV text into header roles and rows.

    Parameters
    ----------
    text : str
        File contents.
    name : str
        File name for messages.
    nucleus : {"1H", "13C"}
    """
    text = text.lstrip("\ufeff")
    lines = [(i + 1, line) for i, line in enumerate(text.splitlines())]
    body = [(n, line) for n, line in lines if line.strip() and not line.lstrip().startswith("#")]
    if not body:
        raise InputError(f"{name}: the table is empty (expected a header row and peaks)")
    header_no, header_line = body[0]
    delimiter = _delimiter(header_line)
    headers = [h.strip() for h in _cells(header_line, delimiter)]
    roles: list[str] = []
    ignored: list[str] = []
    seen: dict[str, str] = {}
    for h in headers:
        role = column_role(h, nucleus)
        if role is None or role in seen:
            ignored.append(h)
            roles.append("")
            continue
        seen[role] = h
        roles.append(role)
    if not any(r in seen for r in ("shift", "range", "low")):
        raise InputError(
            f"{name} line {header_no}: no shift column in the header "
            f"({', '.join(repr(h) for h in headers[:8])}); name one 'shift' or 'ppm'"
        )
    rows = []
    decimal_comma = delimiter == ";"
    try:
        reader = csv.reader(io.StringIO("\n".join(line for _, line in body[1:])), delimiter=delimiter)
        for (line_no, _), cells in zip(body[1:], reader):
            if len(cells) > len(headers) and any(c.strip() for c in cells[len(headers):]):
                raise InputError(
                    f"{name} line {line_no}: {len(cells)} cells but the header has {len(headers)} "
                    f"columns (a J list with commas needs quotes, e.g. \"7.9, 1.7\")"
                )
            row = {
                role: cell.strip() for role, cell in zip(roles, cells) if role and cell.strip()
            }
            rows.append((line_no, row))
    except csv.Error as err:
        raise InputError(f"{name}: not a readable table ({err})") from err
    if not rows:
        raise InputError(f"{name}: the table has a header but no peaks")
    if len(rows) > MAX_ROWS:
        raise InputError(
            f"{name}: {len(rows)} rows — more than {MAX_ROWS}; this looks like a line list of a "
            "whole spectrum, give one row per signal"
        )
    return Table(name, tuple(roles), tuple(rows), tuple(ignored), decimal_comma)


def _num(cell: str, what: str, where: str, decimal_comma: bool) -> float:
    if decimal_comma and re.fullmatch(r"[+\-−]?[0-9]+,[0-9]+", cell.strip()):
        cell = cell.replace(",", ".")
    return to_float(cell, what, where)


def row_to_h1(row: Mapping[str, str], where: str, *, decimal_comma: bool = False) -> RawH1:
    """One table row (keys are roles) -> :class:`RawH1`."""
    if "low" in row or "high" in row:
        if "low" not in row or "high" not in row:
            raise InputError(f"{where}: give both ends of the shift range (low and high)")
        a = _num(row["low"], "shift", where, decimal_comma)
        b = _num(row["high"], "shift", where, decimal_comma)
    else:
        cell = row.get("shift") or row.get("range")
        if not cell:
            raise InputError(f"{where}: no shift")
        if decimal_comma:
            cell = re.sub(r"([0-9]),([0-9])", r"\1.\2", cell)
        a, b, end = read_shift(cell, 0, where)
        if cell[end:].strip():
            raise InputError(f"{where}: shift '{short(cell)}' is not a shift or a range")
    mult_cell = row.get("mult", "")
    notes: list[str] = []
    broad = apparent = False
    aside = _annotation(row)
    if aside is not None and "nh" not in row and "integral" not in row:
        mult = normalise_multiplicity(mult_cell) if mult_cell else None
        label = (mult.label if mult else "") or "m"
        text = f"{short(row.get('shift') or row.get('range') or row.get('low', ''))} ({aside})"
        return RawH1(a, b, label, [], 0.0, True, text=text, where=where, set_aside=aside)
    if mult_cell:
        mult = normalise_multiplicity(mult_cell)
        if mult is None:
            raise InputError(f"{where}: '{short(mult_cell)}' is not a multiplicity")
        label, broad, apparent = mult.label, mult.broad, mult.apparent
        if mult.note:
            notes.append(f"{where}: {mult.note}")
        if not label:
            label = "s" if broad else "m"
    else:
        label = "m"
        notes.append(f"{where}: no multiplicity given: read as m")
    couplings: list[float] = []
    j_cell = row.get("j", "")
    if j_cell:
        jm = J_START_RE.fullmatch(j_cell)
        rest = jm.group("rest") if jm else j_cell
        if decimal_comma and re.fullmatch(r"\s*[0-9]+,[0-9]+\s*(?:Hz)?\s*", rest):
            rest = rest.replace(",", ".")
        couplings, _ = read_couplings(rest, 0, lambda i: f"{where} (J column)")
    if "nh" in row:
        cell = re.sub(r"\s*H\s*$", "", row["nh"], flags=re.IGNORECASE)
        integral = _num(cell, "H count", where, decimal_comma)
        absolute = True
    elif "integral" in row:
        cell = row["integral"]
        absolute = bool(re.search(r"H\s*$", cell, re.IGNORECASE))
        cell = re.sub(r"\s*H\s*$", "", cell, flags=re.IGNORECASE)
        integral = _num(cell, "integral", where, decimal_comma)
        # a whole-number integral column may already be an H count: scaling keeps it if it fits
    else:
        raise InputError(f"{where}: no H count or integral (add a column 'nH' or 'integral')")
    text = ", ".join(f"{k}={v}" for k, v in row.items())
    if aside is not None:
        text = f"{short(row.get('shift') or row.get('range') or row.get('low', ''))} ({aside})"
    return RawH1(
        a, b, label, couplings, integral, absolute, broad, apparent,
        row.get("assignment") or None, text, where, notes, aside,
    )


def _annotation(row: Mapping[str, str]) -> str | None:
    """The assignment cell, when it names the solvent, water or an impurity."""
    cell = row.get("assignment", "")
    note = read_annotation(cell) if cell else None
    return note.label if note is not None else None


def row_to_c13(row: Mapping[str, str], where: str, *, decimal_comma: bool = False) -> RawC13:
    """One table row (keys are roles) -> :class:`RawC13`."""
    cell = row.get("shift") or row.get("range") or row.get("low")
    if not cell:
        raise InputError(f"{where}: no shift")
    shift = _num(cell, "13C shift", where, decimal_comma)
    carbons = 1
    if "carbons" in row:
        value = _num(row["carbons"], "carbon count", where, decimal_comma)
        if value != int(value) or not 1 <= value <= MAX_HEAVY_ATOMS:
            raise InputError(
                f"{where}: carbon count '{row['carbons']}' must be a whole number 1 to {MAX_HEAVY_ATOMS}"
            )
        carbons = int(value)
    attached: int | None = None
    dept = row.get("dept", "").strip()
    aside = _annotation(row)
    if aside is None and dept and read_annotation(dept) is not None:
        aside, dept = " ".join(dept.split()), ""
    if aside is not None:
        return RawC13(shift, carbons, None, f"{short(cell)} ({aside})", where, set_aside=aside)
    if dept:
        key = " ".join(dept.lower().split())
        if key in DEPT_LABELS:
            attached = DEPT_LABELS[key]
        elif key in OFF_RESONANCE_H:
            attached = OFF_RESONANCE_H[key]
        elif key in ("0", "1", "2", "3"):
            attached = int(key)
        else:
            raise InputError(f"{where}: '{short(dept)}' is not a carbon type (CH3, CH2, CH, C or 3/2/1/0)")
    text = ", ".join(f"{k}={v}" for k, v in row.items())
    return RawC13(shift, carbons, attached, text, where)


def h1_rows(text: str, name: str) -> tuple[list[RawH1], list[str]]:
    """All 1H rows of a table file, and warnings about ignored columns."""
    table = read_table(text, name, "1H")
    warnings = [f"{name}: column '{h}' not used" for h in table.ignored if h]
    if not any(r in table.roles for r in ("nh", "integral")):
        raise InputError(f"{name}: no H count or integral column (name one 'nH' or 'integral')")
    rows = [
        row_to_h1(row, f"{name} line {line_no}", decimal_comma=table.decimal_comma)
        for line_no, row in table.rows
    ]
    return rows, warnings


def c13_rows(text: str, name: str) -> tuple[list[RawC13], list[str]]:
    """All 13C rows of a table file, and warnings about ignored columns."""
    table = read_table(text, name, "13C")
    warnings = [f"{name}: column '{h}' not used" for h in table.ignored if h]
    rows = [
        row_to_c13(row, f"{name} line {line_no}", decimal_comma=table.decimal_comma)
        for line_no, row in table.rows
    ]
    return rows, warnings
