"""Many unknowns in one run: read a batch, solve each case, keep every result.

A batch is a folder of TOML case files, one TOML file with many ``[[case]]``
tables, or a CSV manifest with one case per row (:func:`read_cases`).  Each
case is solved with :func:`elucidate.solve.solve` in a worker process (or on
a Dask scheduler) and its result is written atomically as
``OUT/<case>.json``; ``OUT/summary.csv`` is rewritten after every case
(:func:`run_batch`).

Resuming: every result carries the SHA-256 of the case's normalised input
(the case keys written back as TOML, plus the bytes of every ``@file`` it
names) and the solve settings.  A second run skips each case whose result
file exists with the same hash and settings, so a run killed at any moment
loses at most the cases that were being solved, and repeats nothing done.

This module only orchestrates: parsing is :mod:`elucidate.parse`, solving
:mod:`elucidate.solve`, HTML :mod:`elucidate.report`.  Progress is reported
through a plain callback object (see :class:`BatchEvents`).
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
import math
import os
import re
import tempfile
import threading
import time
import tomllib
from collections import deque
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Protocol, Sequence

from elucidate import CAUTION
from elucidate.errors import InputError

__all__ = [
    "SUMMARY_COLUMNS",
    "CASE_KEYS",
    "HARD_LIMIT_FACTOR",
    "HARD_LIMIT_GRACE_S",
    "BatchCase",
    "BatchInput",
    "BatchSettings",
    "CaseOutcome",
    "BatchReport",
    "BatchEvents",
    "read_cases",
    "default_out_dir",
    "solve_case",
    "run_batch",
    "toml_text",
]

#: Columns of ``summary.csv``, in order.
SUMMARY_COLUMNS = ("case", "formula", "best_smiles", "fit", "verdict", "complete", "time_s", "error")

#: Keys of a case that are solver input (as in a single case file); any other
#: key (``smiles``, ``group``, ``source`` ...) is ignored and not hashed.
CASE_KEYS = (
    "name", "description", "formula", "solvent", "field_mhz", "field", "h1", "c13", "require", "forbid",
    "c13_complete",
)

#: A worker still busy after ``HARD_LIMIT_FACTOR * time_limit + HARD_LIMIT_GRACE_S``
#: seconds is killed and its case recorded as timed out (the solver's own
#: limit is checked between steps and normally stops the search long before).
HARD_LIMIT_FACTOR = 2.0
HARD_LIMIT_GRACE_S = 30.0

_CSV_ALIASES = {
    "name": "name", "case": "name", "description": "description", "formula": "formula",
    "solvent": "solvent", "field": "field_mhz", "field_mhz": "field_mhz", "mhz": "field_mhz",
    "h1": "h1", "1h": "h1", "c13": "c13", "13c": "c13", "require": "require", "forbid": "forbid",
    "c13_complete": "c13_complete",
}
_TRUE = {"true", "yes", "1", "y"}
_FALSE = {"false", "no", "0", "n"}
_RESERVED_STEMS = {"index", "summary"}


# ------------------------------------------------------------------ records


@dataclass(frozen=True)
class BatchCase:
    """One unknown of a batch, ready to be sent to a worker.

    Attributes
    ----------
    index : int
        Position in the input (0-based); results are listed in this order.
    name : str
        Display name, unique within the batch.
    stem : str
        File stem of its results (``<stem>.json``, ``<stem>.html``).
    toml : str
        The normalised case: its solver keys written back as TOML.
    base : str
        Directory that ``@file`` references are read from.
    origin : str
        Where it comes from, for messages (``"cases.toml, case 3"``).
    input_sha256 : str
        SHA-256 of ``toml`` plus the content of every file it references.
    error : str or None
        A problem found while reading the batch (the case is not solved).
    """

    index: int
    name: str
    stem: str
    toml: str
    base: str
    origin: str
    input_sha256: str
    error: str | None = None


@dataclass(frozen=True)
class BatchInput:
    """What :func:`read_cases` found: the cases and the keys it ignored."""

    cases: tuple[BatchCase, ...]
    ignored_keys: tuple[str, ...] = ()
    kind: str = ""  # "folder" | "toml" | "csv"


@dataclass(frozen=True)
class BatchSettings:
    """Solve settings shared by every case (part of the resume check)."""

    top: int = 10
    time_limit_s: float | None = 60.0
    report: bool = False  # also render one HTML page per case

    def to_json(self) -> dict[str, Any]:
        return {"top": self.top, "time_limit_s": self.time_limit_s}

    @property
    def hard_limit_s(self) -> float | None:
        """Wall-clock limit after which a worker is killed (None: never)."""
        if self.time_limit_s is None:
            return None
        return HARD_LIMIT_FACTOR * self.time_limit_s + HARD_LIMIT_GRACE_S


@dataclass(frozen=True)
class CaseOutcome:
    """A solved (or failed) case: the file contents and its summary row."""

    index: int
    stem: str
    json_text: str
    html_text: str | None
    row: dict[str, str]
    error: str | None
    elapsed_s: float


@dataclass
class BatchReport:
    """What :func:`run_batch` did."""

    out_dir: Path
    total: int = 0
    solved: int = 0
    skipped: int = 0
    failed: list[str] = field(default_factory=list)  # names of cases with an error

    @property
    def ok(self) -> bool:
        return not self.failed


class BatchEvents(Protocol):
    """Progress callbacks of :func:`run_batch` (all optional to act on)."""

    def begin(self, total: int, skipped: int) -> None: ...

    def started(self, name: str) -> None: ...

    def finished(self, name: str, error: str | None, elapsed_s: float) -> None: ...

    def end(self) -> None: ...


class _Silent:
    def begin(self, total: int, skipped: int) -> None:
        pass

    def started(self, name: str) -> None:
        pass

    def finished(self, name: str, error: str | None, elapsed_s: float) -> None:
        pass

    def end(self) -> None:
        pass


# ------------------------------------------------------------ reading input


def default_out_dir(path: Path) -> Path:
    """``<input>-results`` beside the input (a file's suffix dropped).

    >>> default_out_dir(Path("runs/unknowns.toml")).as_posix()
    'runs/unknowns-results'
    """
    path = Path(path)
    stem = path.name if path.is_dir() else path.stem
    return path.parent / f"{stem}-results"


def read_cases(path: Path | str) -> BatchInput:
    """Read a batch: a folder of ``*.toml`` case files, a TOML file of
    ``[[case]]`` tables, or a CSV manifest (one case per row).

    Parameters
    ----------
    path : path
        The folder or file.  A folder's case files are taken in name order
        (not recursive); peak files they name with ``@`` lie beside them.

    Returns
    -------
    BatchInput
        Cases in input order.  A case that cannot be read (bad TOML in one
        file, a non-numeric field in one row) carries ``error`` and the
        others are kept.

    Raises
    ------
    InputError
        The input itself is unusable: missing, empty, not TOML/CSV, no
        cases, a CSV without ``formula`` and ``h1`` columns.
    """
    path = Path(path)
    if path.is_dir():
        return _read_folder(path)
    if not path.is_file():
        raise InputError(f"batch input '{path}' not found (give a folder, a .toml or a .csv file)")
    suffix = path.suffix.lower()
    if suffix == ".toml":
        return _read_multi_toml(path)
    if suffix in (".csv", ".tsv"):
        return _read_manifest(path)
    raise InputError(f"batch input '{path}': expected a folder, a .toml or a .csv file")


def _read_text(path: Path) -> str:
    try:
        data = path.read_bytes()
    except OSError as err:
        raise InputError(f"'{path}' cannot be read ({err.strerror or err})") from err
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError:
        return data.decode("latin-1")


def _read_folder(folder: Path) -> BatchInput:
    files = sorted(p for p in folder.glob("*.toml") if p.is_file())
    if not files:
        raise InputError(f"batch folder '{folder}' has no *.toml case files")
    raw: list[tuple[str, dict[str, Any] | None, str, str | None]] = []
    stems = []
    for p in files:
        origin = p.name
        stems.append(p.stem)
        try:
            doc = tomllib.loads(_read_text(p))
        except (tomllib.TOMLDecodeError, InputError) as err:
            raw.append((p.stem, None, origin, f"{origin}: not valid TOML ({err})"))
            continue
        name = doc.get("name")
        raw.append((name if isinstance(name, str) and name.strip() else p.stem, doc, origin, None))
    return _build(raw, folder, "folder", stems=stems)


def _read_multi_toml(path: Path) -> BatchInput:
    try:
        doc = tomllib.loads(_read_text(path))
    except tomllib.TOMLDecodeError as err:
        raise InputError(f"{path.name}: not valid TOML ({err})") from None
    other = [k for k in doc if k != "case"]
    if other:
        raise InputError(
            f"{path.name}: top-level key '{other[0]}' is not used in a batch file "
            "(give each case as a [[case]] table with its own keys)"
        )
    tables = doc.get("case")
    if not isinstance(tables, list) or not tables:
        raise InputError(f"{path.name}: no [[case]] tables (a batch TOML file holds one [[case]] per unknown)")
    raw = []
    for i, table in enumerate(tables, start=1):
        origin = f"{path.name}, case {i}"
        if not isinstance(table, dict):
            raw.append((f"case-{i}", None, origin, f"{origin}: not a table"))
            continue
        name = table.get("name")
        raw.append((name if isinstance(name, str) and name.strip() else f"case-{i}", table, origin, None))
    return _build(raw, path.parent, "toml")


def _read_manifest(path: Path) -> BatchInput:
    text = _read_text(path)
    delimiter = "\t" if path.suffix.lower() == ".tsv" else ","
    reader = csv.reader(io.StringIO(text), delimiter=delimiter)
    rows = [r for r in reader]
    while rows and not any(c.strip() for c in rows[0]):
        rows.pop(0)
    if not rows:
        raise InputError(f"{path.name}: empty manifest (expected a header row with formula and h1 columns)")
    header = [c.strip().lower() for c in rows[0]]
    roles = [_CSV_ALIASES.get(h) for h in header]
    for need in ("formula", "h1"):
        if need not in roles:
            raise InputError(f"{path.name}: no '{need}' column in the header ({', '.join(header)})")
    ignored = sorted({h for h, r in zip(header, roles) if r is None and h})
    raw = []
    n = 0
    for line_no, cells in enumerate(rows[1:], start=2):
        if not any(c.strip() for c in cells):
            continue
        n += 1
        origin = f"{path.name}, row {line_no}"
        table: dict[str, Any] = {}
        error = None
        for role, cell in zip(roles, cells):
            cell = cell.strip()
            if role is None or not cell:
                continue
            try:
                table[role] = _manifest_value(role, cell, origin)
            except InputError as err:
                error = error or str(err)
        if len(cells) > len(roles) and any(c.strip() for c in cells[len(roles):]):
            error = error or f"{origin}: more cells than header columns (quote cells that contain commas)"
        name = table.get("name") or f"row-{line_no}"
        raw.append((name, table, origin, error))
    if not raw:
        raise InputError(f"{path.name}: the manifest has a header but no cases")
    out = _build(raw, path.parent, "csv")
    return BatchInput(out.cases, tuple(sorted(set(out.ignored_keys) | set(ignored))), "csv")


def _manifest_value(role: str, cell: str, origin: str) -> Any:
    if role == "field_mhz":
        try:
            value = float(cell)
        except ValueError:
            raise InputError(f"{origin}: field '{cell}' is not a number of MHz") from None
        return value
    if role == "c13_complete":
        low = cell.lower()
        if low in _TRUE:
            return True
        if low in _FALSE:
            return False
        raise InputError(f"{origin}: c13_complete '{cell}' must be true or false")
    if role in ("require", "forbid"):
        return cell.split()  # SMARTS contain no spaces
    return cell


def _build(
    raw: Sequence[tuple[str, dict[str, Any] | None, str, str | None]], base: Path, kind: str,
    *, stems: Sequence[str] | None = None,
) -> BatchInput:
    """Cases from (name, table, origin, error) rows; result files are named
    after ``stems`` (a folder's file names) or else after the case names."""
    names: set[str] = set()
    used: set[str] = set()
    ignored: set[str] = set()
    cases = []
    for index, (name, doc, origin, error) in enumerate(raw):
        name = _unique(name.strip() or f"case-{index + 1}", names, " ({})")
        stem = _unique(_stem(stems[index] if stems else name, bool(stems)), used, "-{}")
        text = ""
        digest_parts: list[bytes] = []
        if doc is not None and error is None:
            ignored.update(k for k in doc if k not in CASE_KEYS)
            case = {k: doc[k] for k in CASE_KEYS if k in doc}
            case.setdefault("name", name)
            try:
                text = toml_text(case)
            except InputError as err:
                error = f"{origin}: {err}"
            else:
                digest_parts = [text.encode("utf-8")] + _file_digests(case, base)
        if error is not None:
            digest_parts = [f"error: {error}".encode("utf-8")]
        digest = hashlib.sha256(b"\n".join(digest_parts)).hexdigest()
        cases.append(BatchCase(index, name, stem, text, str(base), origin, digest, error))
    return BatchInput(tuple(cases), tuple(sorted(ignored)), kind)


def _unique(value: str, seen: set[str], pattern: str) -> str:
    out, k = value, 1
    while out.lower() in seen:
        k += 1
        out = value + pattern.format(k)
    seen.add(out.lower())
    return out


def _stem(name: str, keep: bool) -> str:
    if keep and re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]*", name) and name.lower() not in _RESERVED_STEMS:
        return name
    slug = re.sub(r"[^a-z0-9]+", "-", name.lower()).strip("-")[:80] or "case"
    return slug + "-case" if slug in _RESERVED_STEMS else slug


def _file_digests(case: dict[str, Any], base: Path) -> list[bytes]:
    """``@name sha256`` for every peak file the case names (missing: ``-``)."""
    out = []
    for key in ("h1", "c13"):
        value = case.get(key)
        name = None
        if isinstance(value, str) and value.startswith("@"):
            name = value[1:].strip()
        elif isinstance(value, dict) and isinstance(value.get("file"), str):
            name = value["file"].lstrip("@").strip()
        if not name:
            continue
        p = Path(name) if Path(name).is_absolute() else base / name
        try:
            digest = hashlib.sha256(p.read_bytes()).hexdigest()
        except OSError:
            digest = "-"
        out.append(f"@{key} {name} {digest}".encode("utf-8"))
    return out


def toml_text(table: dict[str, Any]) -> str:
    """A flat table as TOML text, keys sorted (the normalised form of a case).

    Values are what :mod:`tomllib` returns for a case: strings, numbers,
    booleans, arrays and inline tables.

    Raises
    ------
    InputError
        For a value TOML cannot hold here (dates and times).

    Examples
    --------
    >>> print(toml_text({"formula": "C2H6O", "field_mhz": 400}), end="")
    "field_mhz" = 400
    "formula" = "C2H6O"
    """
    return "".join(f"{_toml_key(k)} = {_toml_value(table[k], k)}\n" for k in sorted(table))


def _toml_key(key: str) -> str:
    return _toml_string(str(key))


def _toml_string(value: str) -> str:
    # JSON string escapes are all valid TOML basic-string escapes; TOML also
    # forbids a raw DEL.
    return json.dumps(value, ensure_ascii=False).replace("\x7f", "\\u007f")


def _toml_value(value: Any, key: str) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return _toml_string(value)
    if isinstance(value, list):
        return "[" + ", ".join(_toml_value(v, key) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{_toml_key(k)} = {_toml_value(value[k], key)}" for k in sorted(value)) + "}"
    raise InputError(f"'{key}': a {type(value).__name__} value is not usable in a case")


# ----------------------------------------------------------- one case


def solve_case(case: BatchCase, settings: BatchSettings) -> CaseOutcome:
    """Solve one case and render its result file(s) (runs in a worker).

    A bad input or a crash of the solver is caught and recorded in the
    outcome (``error``, one line), so that a batch goes on; nothing here
    writes files.
    """
    from elucidate.parse import problem_from_toml

    t0 = time.monotonic()
    doc: dict[str, Any] = {}
    html_text = None
    error = case.error
    result = None
    if error is None:
        try:
            problem = problem_from_toml(case.toml, Path(case.base), case.origin)
            from elucidate.solve import solve

            result = solve(problem, top=settings.top, time_limit_s=settings.time_limit_s)
            doc = result.to_json()
            doc["caution"] = CAUTION
            if settings.report:
                from elucidate.report import render_html

                html_text = render_html(result)
        except InputError as err:
            error = str(err)
        except Exception as err:  # recorded per case (with its type) so the batch goes on
            error = f"crash: {type(err).__name__}: {err}"
    error = " ".join(error.split()) if error else None
    if error is not None:
        doc, html_text = {}, None
    return _outcome(case, settings, doc, html_text, error, time.monotonic() - t0, result)


def _outcome(
    case: BatchCase, settings: BatchSettings, doc: dict[str, Any], html_text: str | None,
    error: str | None, elapsed: float, result: Any = None,
) -> CaseOutcome:
    doc["case"] = {
        "name": case.name,
        "input_sha256": case.input_sha256,
        "settings": settings.to_json(),
        "error": error,
    }
    json_text = json.dumps(doc, indent=2, ensure_ascii=False) + "\n"
    row = _row(case, doc)
    row["time_s"] = f"{elapsed:.2f}"
    return CaseOutcome(case.index, case.stem, json_text, html_text, row, error, elapsed)


def _row(case: BatchCase, doc: dict[str, Any]) -> dict[str, str]:
    """A summary row from a per-case JSON document (time left blank)."""
    cands = doc.get("candidates") or []
    best = cands[0] if cands else {}
    formula = doc.get("formula")
    if not formula:
        try:
            formula = tomllib.loads(case.toml).get("formula", "") if case.toml else ""
        except tomllib.TOMLDecodeError:
            formula = ""
    error = (doc.get("case") or {}).get("error")
    complete = doc.get("complete")
    return {
        "case": case.name,
        "formula": str(formula or ""),
        "best_smiles": best.get("smiles", ""),
        "fit": f"{best['score']:.2f}" if "score" in best else "",
        "verdict": best.get("verdict", "" if error else "no candidate"),
        "complete": "" if complete is None else ("true" if complete else "false"),
        "time_s": "",
        "error": error or "",
    }


# ------------------------------------------------------------- files


def _atomic_write(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` so that a reader (or a kill) sees either the
    old file or the complete new one: a temporary file in the same folder,
    flushed to disk, then :func:`os.replace`."""
    try:
        fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    except OSError as err:
        raise InputError(f"--out {path.parent}: cannot write ({err.strerror or err})") from err
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except OSError as err:
        with _suppress_os():
            os.unlink(tmp)
        raise InputError(f"--out {path}: cannot write ({err.strerror or err})") from err
    except BaseException:
        with _suppress_os():
            os.unlink(tmp)
        raise


class _suppress_os:
    def __enter__(self) -> None:
        return None

    def __exit__(self, *exc: Any) -> bool:
        return exc[0] is not None and issubclass(exc[0], OSError)


def _summary_text(rows: Iterable[dict[str, str]]) -> str:
    buf = io.StringIO()
    writer = csv.DictWriter(buf, fieldnames=SUMMARY_COLUMNS, lineterminator="\n")
    writer.writeheader()
    for row in rows:
        writer.writerow({k: row.get(k, "") for k in SUMMARY_COLUMNS})
    return buf.getvalue()


def _old_times(out_dir: Path) -> dict[str, str]:
    path = out_dir / "summary.csv"
    if not path.is_file():
        return {}
    try:
        with open(path, encoding="utf-8", newline="") as fh:
            return {r.get("case", ""): r.get("time_s", "") for r in csv.DictReader(fh)}
    except (OSError, csv.Error, UnicodeDecodeError):
        return {}


def _done_row(case: BatchCase, settings: BatchSettings, out_dir: Path) -> dict[str, str] | None:
    """The summary row of a case whose result is up to date, else None."""
    path = out_dir / f"{case.stem}.json"
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    block = doc.get("case") if isinstance(doc, dict) else None
    if not isinstance(block, dict):
        return None
    if block.get("input_sha256") != case.input_sha256 or block.get("settings") != settings.to_json():
        return None
    if settings.report and block.get("error") is None and not (out_dir / f"{case.stem}.html").is_file():
        return None
    return _row(case, doc)


def _clean_temporaries(out_dir: Path) -> None:
    for p in out_dir.glob(".*.tmp"):
        with _suppress_os():
            p.unlink()


# -------------------------------------------------------------- run


def run_batch(
    batch: BatchInput,
    out_dir: Path | str,
    settings: BatchSettings = BatchSettings(),
    *,
    workers: int = 1,
    cluster: str | None = None,
    retry_failed: bool = False,
    events: BatchEvents | None = None,
) -> BatchReport:
    """Solve every case of ``batch`` not already solved, writing results as they come.

    Parameters
    ----------
    batch : BatchInput
        From :func:`read_cases`.
    out_dir : path
        Result folder (created if missing): ``<stem>.json`` per case,
        ``summary.csv``, and with ``settings.report`` ``<stem>.html`` per
        case and ``index.html``.
    settings : BatchSettings
        ``top``, ``time_limit_s`` (per case), ``report``.
    workers : int
        Local worker processes.
    cluster : str, optional
        Address of a Dask distributed scheduler; the cases run there
        instead of on local workers (needs the ``cluster`` extra).
    retry_failed : bool
        Solve again the cases whose recorded result is an error.
    events : BatchEvents, optional
        Progress callbacks.

    Returns
    -------
    BatchReport

    Raises
    ------
    InputError
        The output folder cannot be made or written, a bad ``workers``
        value, or ``cluster`` given without Dask installed.
    """
    if workers < 1:
        raise InputError(f"--workers {workers}: must be at least 1")
    out = Path(out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise InputError(f"--out {out}: cannot make the folder ({err.strerror or err})") from err
    if not os.access(out, os.W_OK):
        raise InputError(f"--out {out}: the folder is not writable")
    client_factory = _dask_client_factory() if cluster is not None else None
    _clean_temporaries(out)
    ev: BatchEvents = events or _Silent()
    report = BatchReport(out, total=len(batch.cases))
    rows: dict[int, dict[str, str]] = {}
    times = _old_times(out)
    todo: list[BatchCase] = []
    for case in batch.cases:
        row = _done_row(case, settings, out)
        if row is not None and not (retry_failed and row["error"]):
            row["time_s"] = times.get(case.name, "")
            rows[case.index] = row
            report.skipped += 1
            if row["error"]:
                report.failed.append(case.name)
        else:
            todo.append(case)

    def publish() -> None:
        ordered = [rows[i] for i in sorted(rows)]
        _atomic_write(out / "summary.csv", _summary_text(ordered))
        if settings.report:
            from elucidate.report.batch import render_index

            stems = {c.index: c.stem for c in batch.cases}
            entries = [(stems[i], rows[i]) for i in sorted(rows)]
            _atomic_write(out / "index.html", render_index(entries, total=len(batch.cases)))

    def accept(outcome: CaseOutcome) -> None:
        if outcome.html_text is not None:
            _atomic_write(out / f"{outcome.stem}.html", outcome.html_text)
        _atomic_write(out / f"{outcome.stem}.json", outcome.json_text)  # its existence marks the case done
        rows[outcome.index] = outcome.row
        report.solved += 1
        if outcome.error:
            report.failed.append(outcome.row["case"])
        publish()
        ev.finished(outcome.row["case"], outcome.error, outcome.elapsed_s)

    ev.begin(len(todo), report.skipped)
    try:
        publish()
        if todo:
            if client_factory is not None:
                _run_dask(client_factory, cluster or "", todo, settings, accept, ev)
            else:
                _run_local(todo, settings, workers, accept, ev)
    finally:
        ev.end()
    order = {c.name: c.index for c in batch.cases}
    report.failed.sort(key=lambda n: order.get(n, 0))
    return report


# -------------------------------------------------------- local workers


def _run_local(todo: list[BatchCase], settings: BatchSettings, workers: int, accept: Any, ev: BatchEvents) -> None:
    import multiprocessing as mp
    from multiprocessing.connection import wait

    ctx = mp.get_context("forkserver")
    ctx.set_forkserver_preload(["elucidate.batch", "elucidate.parse", "elucidate.solve"])
    pending = deque(todo)
    pool = [_Worker(ctx, settings) for _ in range(min(workers, len(todo)))]
    try:
        while pending or any(w.case is not None for w in pool):
            for i, w in enumerate(pool):
                if w.case is None and pending:
                    if not w.alive():
                        w = pool[i] = _Worker(ctx, settings)
                    w.give(pending.popleft())
                    ev.started(w.case.name)  # type: ignore[union-attr]
            busy = [w for w in pool if w.case is not None]
            wait([w.conn for w in busy] + [w.proc.sentinel for w in busy], timeout=0.5)
            for i, w in enumerate(pool):
                if w.case is None:
                    continue
                outcome = w.collect(settings)
                if outcome is None:
                    continue
                if not w.alive():
                    w.stop()
                    pool[i] = _Worker(ctx, settings) if pending else w
                accept(outcome)
    finally:
        for w in pool:
            w.stop()


class _Worker:
    """A long-lived worker process solving one case at a time (it keeps the
    solver's loaded tables warm between cases)."""

    def __init__(self, ctx: Any, settings: BatchSettings) -> None:
        self.conn, child = ctx.Pipe()
        self.proc = ctx.Process(target=_worker_main, args=(child, settings, os.getpid()), daemon=True)
        self.proc.start()
        child.close()
        self.case: BatchCase | None = None
        self.t0 = 0.0

    def alive(self) -> bool:
        return self.proc.is_alive()

    def give(self, case: BatchCase) -> None:
        self.case = case
        self.t0 = time.monotonic()
        self.conn.send(case)

    def collect(self, settings: BatchSettings) -> CaseOutcome | None:
        """The finished case's outcome, a crash or time-out record, or None
        while the case is still running."""
        case = self.case
        assert case is not None
        elapsed = time.monotonic() - self.t0
        try:
            if self.conn.poll():
                outcome = self.conn.recv()
                self.case = None
                return outcome  # type: ignore[no-any-return]
        except (EOFError, OSError):
            pass
        if not self.proc.is_alive() or self.proc.exitcode is not None:
            self.case = None
            code = self.proc.exitcode
            return _outcome(case, settings, {}, None, f"crash: the worker process ended (exit code {code})", elapsed)
        limit = settings.hard_limit_s
        if limit is not None and elapsed > limit:
            self.proc.kill()
            self.proc.join(5)
            self.case = None
            return _outcome(
                case, settings, {}, None,
                f"time-out: still running after {elapsed:.0f} s (time limit {settings.time_limit_s:g} s); "
                "the worker was stopped", elapsed,
            )
        return None

    def stop(self) -> None:
        if self.proc.is_alive():
            try:
                self.conn.send(None)
            except (OSError, ValueError):
                pass
            self.proc.join(0.5 if self.case is None else 0)
            if self.proc.is_alive():
                self.proc.kill()
                self.proc.join(5)
        self.conn.close()


def _worker_main(conn: Any, settings: BatchSettings, parent_pid: int) -> None:
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the parent handles Ctrl-C
    threading.Thread(target=_watch_parent, args=(parent_pid,), daemon=True).start()
    while True:
        try:
            case = conn.recv()
        except (EOFError, OSError):
            return
        if case is None:
            return
        outcome = solve_case(case, settings)
        try:
            conn.send(outcome)
        except (OSError, ValueError):
            return


def _watch_parent(pid: int) -> None:
    """End this worker soon after the batch process is gone (killed), so that
    no orphan keeps computing."""
    while True:
        time.sleep(1.0)
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            os._exit(1)
        except PermissionError:  # the pid now belongs to someone else's process
            os._exit(1)


# ---------------------------------------------------------------- Dask


def _dask_client_factory() -> Any:
    try:
        from dask.distributed import Client
    except ImportError:
        raise InputError(
            "--cluster needs Dask: pip install 'elucidate[cluster]' (dask[distributed])"
        ) from None
    return Client


def _run_dask(
    client_factory: Any, address: str, todo: list[BatchCase], settings: BatchSettings, accept: Any, ev: BatchEvents
) -> None:
    from dask.distributed import as_completed

    try:
        client = client_factory(address, timeout=30)
    except (OSError, TimeoutError, ValueError) as err:
        raise InputError(f"--cluster {address}: cannot reach the scheduler ({err})") from err
    with client:
        by_key = {}
        futures = []
        for case in todo:
            fut = client.submit(solve_case, case, settings, pure=False, key=f"elucidate-case-{case.index}-{case.input_sha256[:16]}")
            by_key[fut.key] = case
            futures.append(fut)
            ev.started(case.name)
        for fut in as_completed(futures):
            case = by_key[fut.key]
            try:
                outcome = fut.result()
            except Exception as err:  # a lost worker or a cancelled task: recorded, the batch goes on
                outcome = _outcome(
                    case, settings, {}, None, f"crash: on the cluster: {type(err).__name__}: {err}", 0.0
                )
            accept(outcome)
