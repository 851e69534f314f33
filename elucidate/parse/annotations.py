"""Signals annotated as the solvent, water, a reference or an impurity.

A chemist often leaves such a signal in a peak list with a note instead of a
multiplicity and an H count: ``7.26 (CHCl3)``, ``1.56 (br s, H2O)``,
``2.17 (s, acetone)``, ``0.07 (s, grease)``, ``77.16 (CDCl3)``,
``(solvent)``, ``(impurity)``, ``(residual CHCl3)``.  Such a signal is read,
kept out of the compound's signals and reported (:class:`~elucidate.model.SetAside`).

Names come from two data files, each with a source per row and loaded once:
``data/solvents.csv`` (deuterated solvents and their partly deuterated
residual forms) and ``data/impurities.csv`` (water, grease, common
laboratory solvents as impurities, TMS; CDCl3 positions after Gottlieb,
Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512, mostly from memory).

Only an annotation that names nothing but the substance (with words such as
``residual``, ``solvent``, ``impurity``, ``peak``) sets a signal aside; one
that names a substance beside other text (``ArH + CHCl3``, ``overlaps
CHCl3``) keeps the signal and gives a warning.  Un-annotated signals at a
solvent position are never set aside (see :mod:`elucidate.parse.solvents`).
"""

from __future__ import annotations

import csv
import functools
import io
import re
from dataclasses import dataclass
from importlib import resources
from typing import Sequence

from elucidate.model import SetAside
from elucidate.parse.solvents import (
    C13_TOLERANCE,
    H1_RESIDUAL_TOLERANCE,
    Solvent,
    find_solvent,
    solvents,
)

__all__ = [
    "Impurity",
    "Annotation",
    "impurities",
    "read_annotation",
    "mentioned_substance",
    "set_aside_reason",
    "set_aside_record",
    "set_aside_warnings",
]

#: A set-aside 1H signal farther than this from where the named substance appears is queried (ppm).
H1_POSITION_TOLERANCE = 0.1
#: Dissolved water moves with concentration and temperature (ppm).
H1_WATER_POSITION_TOLERANCE = 0.3
#: The same for 13C (ppm).
C13_POSITION_TOLERANCE = 1.0

_SUBSCRIPTS = str.maketrans("₀₁₂₃₄₅₆₇₈₉", "0123456789")
# Words that may stand around a substance name in an annotation.
_SOLVENT_WORDS = {"solvent", "solv", "residual", "res", "resid"}
_IMPURITY_WORDS = {"impurity", "impurities", "imp", "contaminant", "contamination", "trace", "traces"}
_FILLER_WORDS = {"peak", "signal", "of", "the", "a", "an", "unknown", "unidentified", "minor", "from", "in"}


@dataclass(frozen=True)
class Impurity:
    """One row of ``data/impurities.csv``.

    ``kind`` is ``water``, ``impurity`` or ``reference``; ``solvent`` names
    the deuterated solvent (a row of ``solvents.csv``) whose residual signal
    this substance gives, if any (chloroform -> CDCl3).
    """

    name: str
    aliases: tuple[str, ...]
    kind: str
    solvent: str | None
    h1_cdcl3: tuple[float, ...]
    c13_cdcl3: tuple[float, ...]
    source: str


@dataclass(frozen=True)
class Annotation:
    """What an annotation names.

    ``kind``: ``solvent`` (a deuterated solvent or the word "solvent"),
    ``water``, ``impurity`` or ``reference``.  ``solvent_row`` / ``impurity``
    are the table rows when a name was recognised.
    """

    label: str
    kind: str
    solvent_row: Solvent | None = None
    impurity: Impurity | None = None


def _floats(text: str) -> tuple[float, ...]:
    return tuple(float(v) for v in text.split(";") if v.strip())


@functools.cache
def impurities() -> tuple[Impurity, ...]:
    """All rows of ``data/impurities.csv`` (loaded once)."""
    raw = resources.files("elucidate.parse").joinpath("data/impurities.csv").read_text("utf-8")
    rows = []
    for rec in csv.DictReader(io.StringIO(raw)):
        rows.append(
            Impurity(
                name=rec["name"],
                aliases=tuple(a for a in rec["aliases"].split(";") if a),
                kind=rec["kind"],
                solvent=rec["solvent"] or None,
                h1_cdcl3=_floats(rec["h1_cdcl3"]),
                c13_cdcl3=_floats(rec["c13_cdcl3"]),
                source=rec["source"],
            )
        )
    return tuple(rows)


def _key(name: str) -> str:
    return re.sub(r"[^0-9a-z]", "", name.translate(_SUBSCRIPTS).lower())


@functools.cache
def _names() -> dict[str, Impurity | Solvent]:
    """Name key -> row; impurity names win over solvent aliases ('acetone' is the impurity)."""
    out: dict[str, Impurity | Solvent] = {}
    for solvent in solvents():
        for name in (solvent.name, *solvent.aliases):
            out[_key(name)] = solvent
    for imp in impurities():
        for name in (imp.name, *imp.aliases):
            out[_key(name)] = imp
    out.pop("", None)
    return out


def _lookup(name: str) -> Impurity | Solvent | None:
    return _names().get(_key(name)) if name.strip() else None


def read_annotation(part: str) -> Annotation | None:
    """The substance one detail of a signal names, if that is all it says.

    Parameters
    ----------
    part : str
        One comma-separated detail, e.g. ``"CHCl3"``, ``"residual CHCl3"``,
        ``"solvent"``, ``"H2O"``, ``"ethyl acetate"``.

    Returns
    -------
    Annotation or None
        None when the detail is not (only) a solvent/impurity annotation.

    Examples
    --------
    >>> read_annotation("CHCl3").kind, read_annotation("residual DMSO-d5").kind
    ('impurity', 'solvent')
    >>> read_annotation("H2O").kind, read_annotation("impurity").kind
    ('water', 'impurity')
    >>> read_annotation("OCH3") is None, read_annotation("ArH + CHCl3") is None
    (True, True)
    """
    label = " ".join(part.split())
    if not label or len(label) > 60:
        return None
    text = re.sub(r"[()\[\]]", " ", label.translate(_SUBSCRIPTS).lower())
    words = [w.strip(".:") for w in text.split()]
    solvent_word = any(w in _SOLVENT_WORDS for w in words)
    impurity_word = any(w in _IMPURITY_WORDS for w in words)
    rest = [w for w in words if w and w not in _SOLVENT_WORDS | _IMPURITY_WORDS | _FILLER_WORDS]
    if not rest:
        if impurity_word:
            return Annotation(label, "impurity")
        if solvent_word:
            return Annotation(label, "solvent")
        return None
    row = _lookup(" ".join(rest))
    if row is None:
        return None
    if isinstance(row, Solvent):
        return Annotation(label, "solvent", solvent_row=row)
    kind = row.kind if row.kind in ("water", "reference") else "impurity"
    return Annotation(label, kind, impurity=row)


def mentioned_substance(text: str) -> str | None:
    """A solvent or impurity name standing among other words (``"ArH + CHCl3"``), or None.

    >>> mentioned_substance("ArH + CHCl3"), mentioned_substance("OCH2CH3")
    ('CHCl3', None)
    """
    for word in re.split(r"[\s,;+/&()\[\]]+", text):
        w = word.strip(".:")
        if w.lower() in ("solvent", "impurity", "grease", "water"):
            return w
        # formula-like names only (CHCl3, H2O, DMSO-d6): "benzene ring" is no annotation
        if len(w) >= 3 and re.search(r"[0-9₀-₉]", w) and _lookup(w) is not None:
            return w
    return None


def set_aside_reason(annotation: Annotation, nucleus: str, shift: float, solvent: str | None) -> str:
    """What a set-aside signal was taken for, e.g. ``"the residual solvent signal"``.

    ``solvent`` is the problem's (normalised) solvent, if known.
    """
    residual = "the residual solvent signal" if nucleus == "1H" else "the solvent signal"
    label = annotation.label
    if annotation.kind == "solvent":
        row = annotation.solvent_row
        if row is None or solvent is None or row.name == solvent:
            return residual
        return f"an impurity signal ({label}; the solvent is {solvent})"
    if annotation.kind == "water":
        return residual if solvent == "D2O" else "the water signal"
    if annotation.kind == "reference":
        return f"the reference signal ({label})"
    imp = annotation.impurity
    if imp is None:
        return "an impurity signal"
    if imp.solvent is not None:
        if solvent == imp.solvent:
            return residual
        row = find_solvent(imp.solvent)
        if solvent is None and row is not None:
            # no solvent stated: the residual signal only where it sits (CHCl3 at 7.26, not CH2Cl2 at 5.30)
            tol = H1_RESIDUAL_TOLERANCE if nucleus == "1H" else C13_TOLERANCE
            if any(abs(shift - p) <= tol for p in _solvent_positions(row, nucleus)):
                return residual
    return f"an impurity signal ({label})"


def set_aside_record(
    nucleus: str, shift: float, text: str, label: str, where: str, solvent: str | None
) -> SetAside:
    """A :class:`SetAside` for a signal annotated ``label``, with its reason under ``solvent``."""
    annotation = read_annotation(label) or Annotation(label, "impurity")
    reason = set_aside_reason(annotation, nucleus, shift, solvent)
    return SetAside(nucleus, shift, text, annotation.label, reason, where)


def set_aside_warnings(items: Sequence[SetAside], solvent: str | None) -> list[str]:
    """One warning per set-aside signal, plus one where it is far from where the substance appears."""
    out = []
    for item in items:
        where = f" at {item.where}" if item.where and not item.where.startswith("position") else ""
        out.append(
            f"{item.nucleus} signal {item.text}{where} set aside as {item.reason}; "
            f"it is not one of the compound's signals"
        )
        annotation = read_annotation(item.label)
        if annotation is None:
            continue
        expected, medium = _expected(annotation, item, solvent)
        if expected and all(
            abs(item.shift - p) > _tolerance(item.nucleus, annotation.kind) for p in expected
        ):
            shown = ", ".join(f"{p:.2f}" for p in expected)
            out.append(
                f"{item.nucleus} signal {item.text}: {item.label} is expected at {shown} ppm in "
                f"{medium}; check the annotation"
            )
    return out


# ------------------------------------------------------------------ helpers


def _tolerance(nucleus: str, kind: str) -> float:
    if nucleus == "13C":
        return C13_POSITION_TOLERANCE
    return H1_WATER_POSITION_TOLERANCE if kind == "water" else H1_POSITION_TOLERANCE


def _solvent_positions(row: Solvent, nucleus: str) -> tuple[float, ...]:
    if nucleus == "1H":
        return (row.residual_1h,) if row.residual_1h is not None else ()
    return row.carbon_13c


def _expected(annotation: Annotation, item: SetAside, solvent: str | None) -> tuple[tuple[float, ...], str]:
    """Where the named substance appears in the problem's solvent, if the tables say."""
    if item.reason.startswith("the residual solvent") or item.reason == "the solvent signal":
        row = annotation.solvent_row or find_solvent(solvent)
        if annotation.impurity is not None and annotation.impurity.solvent:
            row = find_solvent(annotation.impurity.solvent)
        if row is None:
            return (), ""
        return _solvent_positions(row, item.nucleus), row.name
    if annotation.kind == "water" and item.nucleus == "1H":
        row = find_solvent(solvent)
        if row is not None and row.water_1h is not None:
            return (row.water_1h,), row.name
        return (), ""
    imp = annotation.impurity
    if imp is None:
        return (), ""
    if imp.kind == "reference":
        return (imp.h1_cdcl3 if item.nucleus == "1H" else imp.c13_cdcl3), "any solvent"
    if solvent == "CDCl3":
        return (imp.h1_cdcl3 if item.nucleus == "1H" else imp.c13_cdcl3), "CDCl3"
    return (), ""
