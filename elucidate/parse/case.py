"""One unknown from a TOML case file and/or command-line options -> :class:`Problem`.

Case-file keys (all optional except ``formula`` and ``h1``; see docs/parse.md)::

    name = "QC-2291"                  # shown in reports; default: the file name
    description = "..."               # free text
    formula = "C9H10O2"
    solvent = "CDCl3"
    field_mhz = 400                   # 1H frequency (also: field)
    h1 = "7.36–7.28 (m, 5H), ..."     # text, or "@peaks.csv" / "@peaks.jdx"
    c13 = "171.1, 60.4, 21.0"         # text or "@file"
    require = ["C(=O)O"]              # SMARTS every candidate must contain
    forbid = ["[OX2H]"]               # SMARTS no candidate may contain
    c13_complete = true               # every distinct carbon has its own 13C line
    hsqc = "3.67/51.5, 2.32/27.5"     # 2D cross peaks dH/dC (also hmbc); "@file.csv" or
    cosy = "2.32/1.14"                # inline rows [{dH = 3.67, dC = 51.5}]; cosy/noesy: dH/dH

``h1`` and ``c13`` may also be tables: ``[h1]`` with one of ``text``, ``file``
or ``peaks`` (an array of inline tables with the same loose column names as a
CSV file).  Files named in a case file are found relative to it.
"""

from __future__ import annotations

import contextlib
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterator, Sequence

from elucidate.errors import InputError
from elucidate.model import HETERONUCLEAR, C13Signal, Formula, H1Signal, Problem, SetAside
from elucidate.parse.annotations import set_aside_record, set_aside_warnings
from elucidate.parse.correlations import (
    C13_MATCH_PPM,
    RawPeak,
    c13_from_cross_peaks,
    correlation_table,
    inline_correlations,
    jcamp_cross_peaks,
    looks_like_correlation_table,
    match_correlations,
    read_correlation_text,
)
from elucidate.parse.formula import parse_formula
from elucidate.parse.jcamp import jcamp_c13_rows, jcamp_h1_rows, looks_like_jcamp, read_jcamp
from elucidate.parse.lexing import short
from elucidate.parse.peaks import PeakList, c13_peak_list, h1_peak_list, read_c13_text, read_h1_text
from elucidate.parse.solvents import c13_solvent_warnings, h1_solvent_warnings, normalise_solvent
from elucidate.parse.tables import c13_rows, column_role, h1_rows, looks_like_table, row_to_c13, row_to_h1

__all__ = [
    "CASE_KEYS",
    "MAX_FILE_BYTES",
    "load_problem",
    "problem_from_toml",
    "read_peak_file",
    "read_peak_text",
    "validate_smarts",
]

#: Keys a case file may have at its top level.
CASE_KEYS = (
    "name", "description", "formula", "solvent", "field_mhz", "field", "h1", "c13", "require", "forbid",
    "c13_complete", "hsqc", "cosy", "hmbc", "noesy",
)
#: Case-file keys (and options) holding 2D cross peaks, with their experiment.
_CORRELATION_KEYS = {"hsqc": "HSQC", "cosy": "COSY", "hmbc": "HMBC", "noesy": "NOESY"}
_SPECTRUM_KEYS = ("text", "file", "peaks")
#: Peak files larger than this are refused (a peak list is a few kB).
MAX_FILE_BYTES = 5_000_000
_JCAMP_SUFFIXES = (".jdx", ".dx", ".jcamp", ".jcm")
_TABLE_SUFFIXES = (".csv", ".tsv", ".tab")


@dataclass
class _Source:
    """Where a spectrum comes from: text, a file, or inline rows."""

    kind: str  # "text" | "file" | "peaks"
    value: Any
    base: Path
    origin: str  # for messages


@dataclass
class _Settings:
    name: str | None = None
    description: str | None = None
    formula: str | None = None
    solvent: str | None = None
    field_mhz: float | None = None
    h1: _Source | None = None
    c13: _Source | None = None
    require: tuple[str, ...] = ()
    forbid: tuple[str, ...] = ()
    formula_origin: str = "--formula"
    c13_complete: bool = False
    c13_complete_origin: str = "--c13-complete"
    correlations: dict[str, _Source] = field(default_factory=dict)  # case key -> source


def load_problem(
    case: Path | str | None = None,
    *,
    formula: str | None = None,
    h1: str | None = None,
    c13: str | None = None,
    solvent: str | None = None,
    field_mhz: float | None = None,
    require: Sequence[str] = (),
    forbid: Sequence[str] = (),
    c13_complete: bool | None = None,
    hsqc: str | None = None,
    cosy: str | None = None,
    hmbc: str | None = None,
    noesy: str | None = None,
) -> Problem:
    """Read one unknown: a case file, options, or both (options win).

    Parameters
    ----------
    case : path, optional
        TOML case file.
    formula, h1, c13, solvent, field_mhz, require, forbid
        Override the case file's keys.  ``h1``/``c13`` are peak-list text or
        ``@path`` to a CSV/TSV table, a JCAMP-DX file or a text file.
    c13_complete : bool, optional
        True: the 13C list is complete (every distinct carbon has its own
        line); overrides the case file's ``c13_complete``.
    hsqc, cosy, hmbc, noesy : str, optional
        2D cross peaks as text (``"7.26/128.5, 2.35/21.1"``; dH/dH for
        COSY and NOESY) or ``@path`` to a CSV/TSV table; override the case
        file's keys.  See :mod:`elucidate.parse.correlations`.

    Returns
    -------
    Problem
        Validated and normalised; ``Problem.warnings`` lists what a chemist
        should check (rescaled integrals, signals at solvent/water positions,
        H total differing from the formula, ...).

    Raises
    ------
    InputError
        One line naming the bad input and where it is.
    """
    options = {"hsqc": hsqc, "cosy": cosy, "hmbc": hmbc, "noesy": noesy}
    for label, value in (("--formula", formula), ("--h1", h1), ("--c13", c13), ("--solvent", solvent),
                         *((f"--{k}", v) for k, v in options.items())):
        if value is not None and not isinstance(value, str):
            raise InputError(f"{label} must be text, not {type(value).__name__}")
    if field_mhz is not None and (isinstance(field_mhz, bool) or not isinstance(field_mhz, (int, float))):
        raise InputError(f"--field must be a number of MHz, not {type(field_mhz).__name__}")
    if c13_complete is not None and not isinstance(c13_complete, bool):
        raise InputError(f"--c13-complete must be true or false, not {type(c13_complete).__name__}")
    require = (require,) if isinstance(require, str) else tuple(require)
    forbid = (forbid,) if isinstance(forbid, str) else tuple(forbid)
    settings = _Settings()
    if case is not None:
        path = Path(case)
        settings = _settings_from_toml(_read_text(path, "case file"), path.parent, str(path))
        if settings.name is None:
            settings.name = path.stem
    here = Path.cwd()
    if formula is not None:
        settings.formula = formula
        settings.formula_origin = "--formula"
    if h1 is not None:
        settings.h1 = _text_or_file(h1, here, "--h1")
    if c13 is not None:
        settings.c13 = _text_or_file(c13, here, "--c13")
    if solvent is not None:
        settings.solvent = solvent
    if field_mhz is not None:
        settings.field_mhz = float(field_mhz)
    if require:
        settings.require = tuple(require)
    if forbid:
        settings.forbid = tuple(forbid)
    if c13_complete is not None:
        settings.c13_complete = c13_complete
        settings.c13_complete_origin = "--c13-complete"
    for key, value in options.items():
        if value is not None:
            settings.correlations[key] = _text_or_file(value, here, f"--{key}")
    return _problem(settings)


def problem_from_toml(text: str, base: Path | None = None, origin: str = "case file") -> Problem:
    """A :class:`Problem` from the text of a TOML case file (files relative to ``base``)."""
    settings = _settings_from_toml(text, base or Path.cwd(), origin)
    return _problem(settings)


def read_peak_file(path: Path, nucleus: str, formula: Formula | None = None) -> PeakList:
    """Read a 1H or 13C peak file: JCAMP-DX, CSV/TSV table, or plain text.

    The kind is taken from the suffix (``.jdx .dx .jcamp``; ``.csv .tsv``),
    else from the content (``##`` records; a header row of known column names;
    otherwise the text is read like ``--h1``/``--c13`` text).
    """
    return read_peak_text(_read_text(path, f"{nucleus} file"), path.name, nucleus, formula)


def read_peak_text(text: str, name: str, nucleus: str, formula: Formula | None = None) -> PeakList:
    """Read the contents of a peak file called ``name`` (see :func:`read_peak_file`).

    Parameters
    ----------
    text : str
        File contents.
    name : str
        File name: its suffix picks the reader, and messages name it.
    nucleus : {"1H", "13C"}
    formula : Formula, optional
        For scaling relative 1H integrals.
    """
    if nucleus not in ("1H", "13C"):
        raise InputError(f"nucleus must be 1H or 13C, not '{short(str(nucleus))}'")
    suffix = Path(name).suffix.lower()
    if suffix in _JCAMP_SUFFIXES or (suffix not in _TABLE_SUFFIXES and looks_like_jcamp(text)):
        doc = read_jcamp(text, name, nucleus)
        if nucleus == "1H":
            field_mhz = doc.observe_mhz if doc.nucleus in (None, "1H") else None
            return h1_peak_list(jcamp_h1_rows(doc), formula, (), field_mhz, doc.solvent)
        return c13_peak_list(jcamp_c13_rows(doc), (), doc.solvent)
    if suffix in _TABLE_SUFFIXES or looks_like_table(text):
        if nucleus == "1H":
            rows, notes = h1_rows(text, name)
            return h1_peak_list(rows, formula, notes)
        c_rows, notes = c13_rows(text, name)
        return c13_peak_list(c_rows, notes)
    try:
        if nucleus == "1H":
            return read_h1_text(text, formula=formula)
        return read_c13_text(text)
    except InputError as err:
        raise InputError(f"{name}: {err}") from None


def validate_smarts(patterns: Sequence[str], option: str) -> tuple[str, ...]:
    """Check every pattern parses as SMARTS (RDKit); return them stripped.

    Raises
    ------
    InputError
        Naming the first pattern that does not parse, and its place in the list.
    """
    out = []
    for i, pattern in enumerate(patterns, start=1):
        if not isinstance(pattern, str):
            raise InputError(f"{option} #{i} must be a SMARTS string, not {type(pattern).__name__}")
        p = pattern.strip()
        if not p:
            raise InputError(f"{option} #{i} is empty (expected a SMARTS pattern, e.g. C(=O)O)")
        if _smarts_mol(p) is None:
            raise InputError(f"{option} #{i}: '{short(p, 60)}' is not valid SMARTS")
        out.append(p)
    return tuple(out)


# ------------------------------------------------------------------ helpers


@contextlib.contextmanager
def _rdkit_quiet() -> Iterator[None]:
    from rdkit import RDLogger

    RDLogger.DisableLog("rdApp.*")
    try:
        yield
    finally:
        RDLogger.EnableLog("rdApp.*")


def _smarts_mol(pattern: str) -> Any:
    from rdkit import Chem

    with _rdkit_quiet():
        return Chem.MolFromSmarts(pattern)


def _read_text(path: Path, what: str) -> str:
    try:
        if not path.is_file():
            raise InputError(f"{what} '{path}' not found (or not a file)")
        size = path.stat().st_size
        if size > MAX_FILE_BYTES:
            raise InputError(f"{what} '{path}' is {size} bytes: too large for a peak list or case file")
        data = path.read_bytes()
    except OSError as err:
        raise InputError(f"{what} '{path}' cannot be read ({err.strerror or err})") from err
    if b"\x00" in data:
        raise InputError(f"{what} '{path}' is a binary file, not text")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        return data.decode("latin-1")


def _text_or_file(value: str, base: Path, origin: str) -> _Source:
    if value.startswith("@"):
        name = value[1:].strip()
        if not name:
            raise InputError(f"{origin} '@' needs a file name after it, e.g. @peaks.csv")
        return _Source("file", name, base, origin)
    return _Source("text", value, base, origin)


def _settings_from_toml(text: str, base: Path, origin: str) -> _Settings:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise InputError(f"{origin}: not valid TOML ({err})") from None
    unknown = [k for k in doc if k not in CASE_KEYS]
    if unknown:
        raise InputError(
            f"{origin}: unknown key '{short(unknown[0])}' (known: {', '.join(CASE_KEYS)})"
        )
    s = _Settings(formula_origin=origin)
    for key in ("name", "description", "formula", "solvent"):
        if key in doc:
            setattr(s, key, _string(doc[key], key, origin))
    if "field_mhz" in doc and "field" in doc:
        raise InputError(f"{origin}: give either 'field_mhz' or 'field', not both")
    for key in ("field_mhz", "field"):
        if key in doc:
            value = doc[key]
            if isinstance(value, bool) or not isinstance(value, (int, float)):
                raise InputError(f"{origin}: '{key}' must be a number of MHz, e.g. 400")
            s.field_mhz = float(value)
    for key in ("h1", "c13"):
        if key in doc:
            setattr(s, key, _spectrum(doc[key], key, base, origin))
    for key in ("require", "forbid"):
        if key in doc:
            value = doc[key]
            if isinstance(value, str):
                value = [value]
            if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
                raise InputError(f"{origin}: '{key}' must be a list of SMARTS strings")
            setattr(s, key, tuple(value))
    for key in _CORRELATION_KEYS:
        if key in doc:
            s.correlations[key] = _spectrum(doc[key], key, base, origin)
    if "c13_complete" in doc:
        if not isinstance(doc["c13_complete"], bool):
            raise InputError(f"{origin}: 'c13_complete' must be true or false (no quotes)")
        s.c13_complete = doc["c13_complete"]
        s.c13_complete_origin = f"{origin}, c13_complete"
    return s


def _string(value: Any, key: str, origin: str) -> str:
    if not isinstance(value, str):
        raise InputError(f"{origin}: '{key}' must be a string (in quotes)")
    return value


def _spectrum(value: Any, key: str, base: Path, origin: str) -> _Source:
    where = f"{origin}, {key}"
    if isinstance(value, str):
        return _text_or_file(value, base, where)
    if isinstance(value, list):
        return _Source("peaks", value, base, where)
    if not isinstance(value, dict):
        raise InputError(f"{where}: give text, \"@file\", or a table with text, file or peaks")
    unknown = [k for k in value if k not in _SPECTRUM_KEYS]
    if unknown:
        raise InputError(f"{where}: unknown key '{short(unknown[0])}' (known: {', '.join(_SPECTRUM_KEYS)})")
    given = [k for k in _SPECTRUM_KEYS if k in value]
    if len(given) != 1:
        raise InputError(f"{where}: give exactly one of text, file or peaks")
    kind = given[0]
    if kind == "peaks":
        return _Source("peaks", value["peaks"], base, where)
    text = _string(value[kind], f"{key}.{kind}", origin)
    return _Source(kind, text.lstrip("@") if kind == "file" else text, base, where)


def _cell(value: Any, where: str) -> str:
    if isinstance(value, bool):
        raise InputError(f"{where}: true/false is not a peak value")
    if isinstance(value, (int, float)):
        if isinstance(value, float) and not math.isfinite(value):
            raise InputError(f"{where}: '{value}' is not a finite number")
        return repr(value)
    if isinstance(value, str):
        return value
    if isinstance(value, list):
        return ", ".join(_cell(v, where) for v in value)
    raise InputError(f"{where}: a peak value must be a number, text or a list of numbers")


def _inline_rows(value: Any, nucleus: str, where: str) -> list[tuple[str, dict[str, str]]]:
    if not isinstance(value, list) or not value:
        raise InputError(
            f"{where}: 'peaks' must be a non-empty array of tables, "
            'e.g. [{shift = 2.09, mult = "s", h = 3}]'
        )
    rows = []
    for i, peak in enumerate(value, start=1):
        at = f"{where} peak {i}"
        if not isinstance(peak, dict):
            raise InputError(f"{at}: each peak must be a table such as {{shift = 2.09, mult = \"s\", h = 3}}")
        row: dict[str, str] = {}
        for k, v in peak.items():
            role = column_role(k, nucleus)
            if role is None:
                raise InputError(f"{at}: unknown peak key '{short(k)}'")
            if role in row:
                raise InputError(f"{at}: '{short(k)}' repeats the {role} of this peak")
            if role in ("shift", "range") and isinstance(v, list) and len(v) == 2:
                v = f"{_cell(v[0], at)}–{_cell(v[1], at)}"  # shift = [7.36, 7.28]: a range
            cell = _cell(v, at).strip()
            if cell:
                row[role] = cell
        rows.append((at, row))
    return rows


def _read_spectrum(source: _Source, nucleus: str, formula: Formula) -> PeakList:
    if source.kind == "text":
        try:
            if nucleus == "1H":
                return read_h1_text(source.value, formula=formula)
            return read_c13_text(source.value)
        except InputError as err:
            if source.origin.startswith("--"):
                raise
            raise InputError(f"{source.origin}: {err}") from None
    if source.kind == "file":
        path = Path(source.value)
        if not path.is_absolute():
            path = source.base / path
        return read_peak_file(path, nucleus, formula)
    rows = _inline_rows(source.value, nucleus, source.origin)
    if nucleus == "1H":
        return h1_peak_list([row_to_h1(r, at) for at, r in rows], formula)
    return c13_peak_list([row_to_c13(r, at) for at, r in rows])


def _problem(s: _Settings) -> Problem:
    if s.formula is None:
        raise InputError("no formula given (use --formula or 'formula =' in the case file)")
    try:
        formula = parse_formula(s.formula)
    except InputError as err:
        if s.formula_origin.startswith("--"):
            raise
        raise InputError(f"{s.formula_origin}: {err}") from None
    if s.h1 is None:
        raise InputError("no 1H peak list given (use --h1 or 'h1 =' in the case file)")
    warnings: list[str] = []
    h1 = _read_spectrum(s.h1, "1H", formula)
    warnings.extend(h1.warnings)
    c13: PeakList | None = None
    if s.c13 is not None:
        c13 = _read_spectrum(s.c13, "13C", formula)
        warnings.extend(c13.warnings)

    solvent = _choose(
        "solvent",
        s.solvent,
        [("the 1H header", h1.solvent), ("the 13C header", c13.solvent if c13 else None)],
        warnings, same=lambda a, b: normalise_solvent(a)[0] == normalise_solvent(b)[0],
    )
    if solvent is not None:
        solvent, known = normalise_solvent(solvent)
        if not solvent:
            raise InputError("solvent is empty")
        if not known:
            warnings.append(f"solvent '{solvent}' is not in the solvent table: no residual-signal check")
    field_mhz = _choose(
        "field", s.field_mhz, [("the 1H header", h1.field_mhz)], warnings, same=lambda a, b: abs(a - b) < 1
    )
    if field_mhz is not None and not (math.isfinite(field_mhz) and 10 <= field_mhz <= 2000):
        raise InputError(f"field '{field_mhz:g}' MHz is not a spectrometer frequency (10–2000 MHz)")

    set_aside = _final_set_aside(h1.set_aside + (c13.set_aside if c13 else ()), solvent)
    warnings.extend(set_aside_warnings(set_aside, solvent))
    warnings.extend(h1_solvent_warnings(h1.signals, solvent))
    c13_signals: tuple[C13Signal, ...] = c13.signals if c13 else ()
    if s.c13_complete and not c13_signals:
        raise InputError(
            f"{s.c13_complete_origin}: the 13C list is said to be complete, but no 13C list was given "
            "(use --c13 or 'c13 =')"
        )
    if c13_signals:
        warnings.extend(c13_solvent_warnings(c13_signals, solvent))
        n_c = sum(sig.carbons for sig in c13_signals)
        if n_c > formula["C"]:
            warnings.append(
                f"13C list accounts for {n_c} carbons but {formula.hill} has {formula['C']}"
            )
    require = validate_smarts(s.require, "--require")
    forbid = validate_smarts(s.forbid, "--forbid")
    both = sorted(set(require) & set(forbid))
    if both:
        raise InputError(f"SMARTS '{short(both[0], 60)}' is both required and forbidden")
    h1_signals: tuple[H1Signal, ...] = h1.signals
    raw_peaks: list[RawPeak] = []
    for key, kind in _CORRELATION_KEYS.items():
        if key in s.correlations:
            peaks, notes = _read_correlations(s.correlations[key], kind)
            raw_peaks.extend(peaks)
            warnings.extend(notes)
    c13_index = None
    if not c13_signals and any(r.kind in HETERONUCLEAR for r in raw_peaks):
        c13_signals, c13_index = c13_from_cross_peaks(raw_peaks)
        warnings.append(
            f"no 13C list given: {len(c13_signals)} 13C line(s) taken from the δC of the HSQC/HMBC cross peaks "
            f"(δC within {C13_MATCH_PPM} ppm read as one line)"
        )
    correlations, notes = match_correlations(raw_peaks, h1_signals, c13_signals, c13_index)
    warnings.extend(notes)
    return Problem(
        formula=formula,
        h1=h1_signals,
        c13=c13_signals,
        solvent=solvent,
        field_mhz=field_mhz,
        require=require,
        forbid=forbid,
        name=s.name,
        description=s.description,
        warnings=tuple(_unique(warnings)),
        set_aside=set_aside,
        c13_complete=s.c13_complete,
        correlations=correlations,
    )


def _read_correlations(source: _Source, kind: str) -> tuple[list[RawPeak], list[str]]:
    """Raw cross peaks of one 2D list (text, a table or text file, or inline rows)."""
    if source.kind == "text":
        return read_correlation_text(source.value, kind, source.origin), []
    if source.kind == "file":
        path = Path(source.value)
        if not path.is_absolute():
            path = source.base / path
        text = _read_text(path, f"{kind} file")
        if looks_like_jcamp(text):
            return jcamp_cross_peaks(text, path.name, kind), []
        if path.suffix.lower() in _TABLE_SUFFIXES or looks_like_correlation_table(text, kind):
            return correlation_table(text, path.name, kind)
        return read_correlation_text(text, kind, path.name), []
    return inline_correlations(source.value, kind, source.origin), []


def _final_set_aside(items: tuple[SetAside, ...], solvent: str | None) -> tuple[SetAside, ...]:
    """The set-aside signals with their reasons judged under the problem's solvent."""
    return tuple(
        set_aside_record(a.nucleus, a.shift, a.text, a.label, a.where, solvent) for a in items
    )


def _choose(what: str, given: Any, found: list[tuple[str, Any]], warnings: list[str], *, same: Any) -> Any:
    """The explicit value if any, else the first one found in the data; warn on disagreement."""
    others = [(where, v) for where, v in found if v is not None]
    if given is not None:
        for where, v in others:
            if not same(given, v):
                warnings.append(
                    f"{what} {_show(given)} given, but {where} says {_show(v)}: using {_show(given)}"
                )
        return given
    if not others:
        return None
    chosen = others[0][1]
    for where, v in others[1:]:
        if not same(chosen, v):
            warnings.append(
                f"{what}: {others[0][0]} says {_show(chosen)} but {where} says {_show(v)}: "
                f"using {_show(chosen)}"
            )
    return chosen


def _show(value: Any) -> str:
    return f"{value:g} MHz" if isinstance(value, float) else str(value)


def _unique(items: list[str]) -> list[str]:
    seen: set[str] = set()
    out = []
    for item in items:
        if item not in seen:
            seen.add(item)
            out.append(item)
    return out
