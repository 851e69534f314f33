"""NMR solvents: names, residual-signal and water positions (data/solvents.csv).

The table is read once, on first use.  It drives two things: normalising the
solvent name a user writes (``chloroform-d`` -> ``CDCl3``) and warning when an
observed signal sits where the solvent's residual peak or dissolved water
appears.
"""

from __future__ import annotations

import csv
import functools
import io
import re
from dataclasses import dataclass
from importlib import resources
from typing import Sequence

from elucidate.model import C13Signal, H1Signal

__all__ = [
    "Solvent",
    "solvents",
    "find_solvent",
    "normalise_solvent",
    "h1_solvent_warnings",
    "c13_solvent_warnings",
]

#: A single-shift 1H signal closer than this to a residual peak is flagged (ppm).
H1_RESIDUAL_TOLERANCE = 0.02
#: Dissolved water wanders with concentration and temperature (ppm).
H1_WATER_TOLERANCE = 0.05
#: 13C tolerance for the solvent carbon (ppm).
C13_TOLERANCE = 0.3


@dataclass(frozen=True)
class Solvent:
    """One row of the solvent table."""

    name: str
    aliases: tuple[str, ...]
    residual_1h: float | None
    water_1h: float | None
    carbon_13c: tuple[float, ...]
    source: str


def _key(name: str) -> str:
    return re.sub(r"[\s_\-]+", "", name.replace("₃", "3").replace("₂", "2").replace("₆", "6")).lower()


def _float_or_none(text: str) -> float | None:
    text = text.strip()
    return float(text) if text else None


@functools.cache
def solvents() -> tuple[Solvent, ...]:
    """All rows of ``data/solvents.csv`` (loaded once)."""
    raw = resources.files("elucidate.parse").joinpath("data/solvents.csv").read_text("utf-8")
    rows = []
    for rec in csv.DictReader(io.StringIO(raw)):
        rows.append(
            Solvent(
                name=rec["name"],
                aliases=tuple(a for a in rec["aliases"].split(";") if a),
                residual_1h=_float_or_none(rec["residual_1h"]),
                water_1h=_float_or_none(rec["water_1h"]),
                carbon_13c=tuple(float(v) for v in rec["carbon_13c"].split(";") if v.strip()),
                source=rec["source"],
            )
        )
    return tuple(rows)


@functools.cache
def _index() -> dict[str, Solvent]:
    out: dict[str, Solvent] = {}
    for solvent in solvents():
        for name in (solvent.name, *solvent.aliases):
            out[_key(name)] = solvent
    return out


def find_solvent(name: str | None) -> Solvent | None:
    """The table row for a solvent name or alias (case and dashes ignored), or None."""
    if not name:
        return None
    return _index().get(_key(name))


def normalise_solvent(name: str) -> tuple[str, bool]:
    """Canonical solvent name and whether it is in the table.

    >>> normalise_solvent("chloroform-d")
    ('CDCl3', True)
    >>> normalise_solvent("THF-d8")
    ('THF-d8', False)
    """
    found = find_solvent(name)
    return (found.name, True) if found else (" ".join(name.split()), False)


def h1_solvent_warnings(signals: Sequence[H1Signal], solvent: str | None) -> list[str]:
    """Warnings for 1H signals that could be the residual solvent signal or water.

    Only single-shift signals that look like one are flagged: the residual
    signal appears as a singlet (CHCl3, C6HD5) or a small quintet (CHD2 groups),
    water as a singlet, often broad.  A doublet, a triplet or a multiplet range
    at the same place is the compound's own signal (it may overlap the solvent,
    which is common for aromatic H in CDCl3, but it is not the solvent).
    """
    row = find_solvent(solvent)
    if row is None:
        return []
    out = []
    for sig in signals:
        if sig.shift_low < sig.shift_high:
            continue
        if row.residual_1h is not None and sig.multiplicity in ("s", "quint", "m"):
            if abs(sig.shift - row.residual_1h) <= H1_RESIDUAL_TOLERANCE:
                out.append(
                    f"1H signal at {sig.shift:.2f} ppm ({sig.multiplicity}, {sig.h_count:g} H) is at "
                    f"the residual {row.name} signal ({row.residual_1h:.2f} ppm): check it is not "
                    "the solvent"
                )
        if row.water_1h is not None and sig.multiplicity == "s":
            if abs(sig.shift - row.water_1h) <= H1_WATER_TOLERANCE:
                out.append(
                    f"1H signal at {sig.shift:.2f} ppm ({'br ' if sig.broad else ''}s, "
                    f"{sig.h_count:g} H) is at the position of water in {row.name} "
                    f"({row.water_1h:.2f} ppm): check it is not water"
                )
    return out


def c13_solvent_warnings(signals: Sequence[C13Signal], solvent: str | None) -> list[str]:
    """Warnings for 13C signals at the solvent carbon position."""
    row = find_solvent(solvent)
    if row is None:
        return []
    out = []
    for sig in signals:
        for pos in row.carbon_13c:
            if abs(sig.shift - pos) <= C13_TOLERANCE:
                out.append(
                    f"13C signal at {sig.shift:g} ppm is at the {row.name} solvent carbon "
                    f"({pos:.2f} ppm): check it is not the solvent"
                )
    return out
