"""Increment tables: CSV files in ``elucidate/predict/data``, read once.

Every table row carries a ``source`` column; the loaders keep it so a
derivation can quote where a number came from.  Nothing is read at import
time: each loader is wrapped in :func:`functools.cache`.
"""

from __future__ import annotations

import csv
import functools
import io
from dataclasses import dataclass
from importlib import resources

from elucidate.errors import ElucidateError

__all__ = [
    "Row",
    "read_table",
    "bases",
    "sp3_h",
    "sp3_ring_h",
    "alkene_h",
    "benzene_h",
    "special_h",
    "couplings",
    "heteroaromatic",
    "carbon_alkane",
    "carbon_alkene",
    "carbon_benzene",
    "carbon_class",
    "carbon_steric",
    "carbon_rules",
]


@dataclass(frozen=True)
class Row:
    """One table row: numeric columns in ``values``, its ``source`` text."""

    key: str
    values: dict[str, float]
    text: dict[str, str]
    source: str

    def __getitem__(self, column: str) -> float:
        return self.values[column]


def _as_float(text: str) -> float | None:
    try:
        return float(text)
    except ValueError:
        return None


@functools.cache
def read_table(name: str) -> tuple[tuple[dict[str, str], ...], tuple[str, ...]]:
    """Raw rows (dicts of text) and the header of the data file ``name``.

    Parameters
    ----------
    name : str
        File name inside ``elucidate/predict/data``, e.g. ``"sp3_h.csv"``.

    Returns
    -------
    rows, header
    """
    text = resources.files("elucidate.predict").joinpath("data", name).read_text(encoding="utf-8")
    reader = csv.DictReader(io.StringIO(text))
    rows = tuple(dict(r) for r in reader)
    for r in rows:
        if not r.get("source"):
            raise ElucidateError(f"data file {name}: a row has no source: {r}")
    return rows, tuple(reader.fieldnames or ())


def _keyed(name: str, key: str = "key") -> dict[str, Row]:
    rows, header = read_table(name)
    out: dict[str, Row] = {}
    for r in rows:
        values: dict[str, float] = {}
        text: dict[str, str] = {}
        for col in header:
            if col in (key, "source"):
                continue
            v = _as_float(r[col])
            if v is None:
                text[col] = r[col]
            else:
                values[col] = v
        out[r[key]] = Row(r[key], values, text, r["source"])
    return out


@functools.cache
def bases() -> dict[str, Row]:
    """Base values (sp3 CH3/CH2/CH, Shoolery constant, alkene, benzene, 13C)."""
    return _keyed("bases.csv", "name")


@functools.cache
def sp3_h() -> dict[str, Row]:
    """α (per CH3/CH2/CH), β, γ increments and Shoolery σ for H on sp3 carbon."""
    return _keyed("sp3_h.csv")


@functools.cache
def sp3_ring_h() -> dict[int, Row]:
    """Ring-size corrections for H on carbocyclic sp3 carbon."""
    return {int(k): v for k, v in _keyed("sp3_ring_h.csv", "ring_size").items()}


@functools.cache
def alkene_h() -> dict[str, Row]:
    """Pascual–Meier–Simon Z(gem), Z(cis), Z(trans)."""
    return _keyed("alkene_h.csv")


@functools.cache
def benzene_h() -> dict[str, Row]:
    """Benzene ring H increments ortho/meta/para."""
    return _keyed("benzene_h.csv")


@functools.cache
def special_h() -> dict[tuple[str, str], Row]:
    """Class values for CHO, alkyne H, XH … keyed by (class, solvent)."""
    rows, _ = read_table("special_h.csv")
    out: dict[tuple[str, str], Row] = {}
    for r in rows:
        values = {c: float(r[c]) for c in ("shift", "uncertainty", "low", "high", "exchangeable")}
        out[(r["class"], r["solvent"])] = Row(
            r["class"], values, {"description": r["description"]}, r["source"]
        )
    return out


@functools.cache
def couplings() -> dict[str, Row]:
    """Typical J (Hz) per coupling type."""
    return _keyed("couplings.csv", "kind")


@functools.cache
def heteroaromatic() -> tuple[dict[str, str], ...]:
    """Parent ring systems with base 1H/13C values per position (raw rows)."""
    return read_table("heteroaromatic.csv")[0]


@functools.cache
def carbon_alkane() -> dict[str, Row]:
    """13C substituent increments α/β/γ on alkanes."""
    return _keyed("carbon_alkane.csv")


@functools.cache
def carbon_alkene() -> dict[str, Row]:
    """13C substituent increments on an alkene carbon (C1 attached, C2 remote)."""
    return _keyed("carbon_alkene.csv")


@functools.cache
def carbon_benzene() -> dict[str, Row]:
    """13C benzene substituent increments ipso/ortho/meta/para."""
    return _keyed("carbon_benzene.csv")


@functools.cache
def carbon_class() -> dict[str, Row]:
    """13C class values (carbonyl, nitrile, alkyne …)."""
    return _keyed("carbon_class.csv", "class")


@functools.cache
def carbon_steric() -> dict[tuple[int, int], float]:
    """Grant–Paul steric corrections keyed by (observed degree, attached degree)."""
    rows, _ = read_table("carbon_steric.csv")
    return {(int(r["observed"]), int(r["attached"])): float(r["correction"]) for r in rows}


@functools.cache
def carbon_rules() -> dict[str, Row]:
    """Named 13C rule constants (carbonyl bases and increments, corrections)."""
    return _keyed("carbon_rules.csv")
