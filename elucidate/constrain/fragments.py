"""The fragment library: substructures a signal pattern implies.

Each file in ``fragments/`` (TOML) describes one fragment: its SMILES with
open valences as ``[*]``, the signal pattern that implies it, whether the
implication is ``hard`` (prunes the generator: real data essentially never
show the pattern without the fragment) or ``soft`` (only adds a cost when a
candidate lacks it), and a source.  Files are read lazily, once.

Pattern keys (all optional):

``signals``
    list of ``{h, multiplicity = [...], shift = [lo, hi], j = [lo, hi],
    same_j, sharp, broad}``; each must match a different observed signal.
    ``same_j`` asks for a coupling shared (±0.6 Hz) with the previous
    signal of the list.
``aromatic_window``, ``aromatic_h``, ``within``
    the H of all signals inside ``aromatic_window`` add up to ``aromatic_h``
    and all those signals lie inside ``within``.
``min_carbons``, ``min_dou``, ``min_oxygens``, ``elements``
    conditions on the formula.
``ring_h``
    for ring fragments matched through the aromatic window: number of
    fragment H taken from those signals.
"""

from __future__ import annotations

import functools
import tomllib
from dataclasses import dataclass

from elucidate.errors import InputError
from elucidate.model import H1Signal, Problem
from elucidate.resources import fragments_root

__all__ = ["SignalPattern", "FragmentRule", "FragmentMatch", "load_fragments", "match_fragments", "fragment_atoms"]

_J_SHARE = 0.6  # Hz: two reported J count as the same coupling (common practice)


@dataclass(frozen=True)
class SignalPattern:
    """One signal a fragment rule asks for."""

    h: int
    multiplicity: tuple[str, ...] = ()
    shift: tuple[float, float] = (-1.0, 20.0)
    j: tuple[float, float] | None = None
    same_j: bool = False
    sharp: bool = False
    broad: bool = False

    def accepts(self, s: H1Signal) -> bool:
        if round(s.h_count) != self.h:
            return False
        if self.multiplicity and s.multiplicity not in self.multiplicity:
            return False
        if not (self.shift[0] <= s.shift <= self.shift[1]):
            return False
        if self.sharp and s.broad:
            return False
        if self.broad and not s.broad:
            return False
        if self.j is not None and s.couplings:
            if not (self.j[0] <= s.couplings[0] <= self.j[1]):
                return False
        return True


@dataclass(frozen=True)
class FragmentRule:
    """One fragment of the library with the pattern that implies it."""

    key: str
    name: str
    smiles: str
    strength: str  # "hard" | "soft"
    source: str
    weight: float = 1.0
    signals: tuple[SignalPattern, ...] = ()
    aromatic_window: tuple[float, float] | None = None
    aromatic_h: int | None = None
    within: tuple[float, float] | None = None
    ring_h: int = 0
    min_carbons: int = 0
    min_dou: float = 0.0
    min_oxygens: int = 0
    elements: tuple[str, ...] = ()


@dataclass(frozen=True)
class FragmentMatch:
    """A rule whose pattern the observed data show, with the signals used."""

    rule: FragmentRule
    signals: tuple[int, ...]

    def describe(self) -> str:
        return f"{self.rule.name} ({self.rule.strength}; {self.rule.source})"


def _pair(value: object, where: str) -> tuple[float, float]:
    if not (isinstance(value, list) and len(value) == 2 and all(isinstance(v, (int, float)) for v in value)):
        raise InputError(f"fragment file {where}: expected [low, high], got {value!r}")
    return float(value[0]), float(value[1])


def _rule(key: str, data: dict) -> FragmentRule:
    where = f"{key}.toml"
    for required in ("name", "smiles", "strength", "source"):
        if required not in data:
            raise InputError(f"fragment file {where}: missing key '{required}'")
    if data["strength"] not in ("hard", "soft"):
        raise InputError(f"fragment file {where}: strength must be 'hard' or 'soft'")
    pats = []
    for sp in data.get("signals", []):
        pats.append(
            SignalPattern(
                h=int(sp["h"]),
                multiplicity=tuple(sp.get("multiplicity", ())),
                shift=_pair(sp["shift"], where) if "shift" in sp else (-1.0, 20.0),
                j=_pair(sp["j"], where) if "j" in sp else None,
                same_j=bool(sp.get("same_j", False)),
                sharp=bool(sp.get("sharp", False)),
                broad=bool(sp.get("broad", False)),
            )
        )
    return FragmentRule(
        key=key,
        name=str(data["name"]),
        smiles=str(data["smiles"]),
        strength=str(data["strength"]),
        source=str(data["source"]),
        weight=float(data.get("weight", 1.0)),
        signals=tuple(pats),
        aromatic_window=_pair(data["aromatic_window"], where) if "aromatic_window" in data else None,
        aromatic_h=data.get("aromatic_h"),
        within=_pair(data["within"], where) if "within" in data else None,
        ring_h=int(data.get("ring_h", 0)),
        min_carbons=int(data.get("min_carbons", 0)),
        min_dou=float(data.get("min_dou", 0)),
        min_oxygens=int(data.get("min_oxygens", 0)),
        elements=tuple(data.get("elements", ())),
    )


@functools.cache
def load_fragments() -> tuple[FragmentRule, ...]:
    """All fragment rules of the library, sorted by file name (read once).

    Raises
    ------
    InputError
        If a file is malformed (names the file and key).
    """
    root = fragments_root()
    rules = []
    for entry in sorted(root.iterdir(), key=lambda p: p.name):
        if not entry.name.endswith(".toml"):
            continue
        try:
            data = tomllib.loads(entry.read_text(encoding="utf-8"))
        except tomllib.TOMLDecodeError as err:
            raise InputError(f"fragment file {entry.name}: {err}") from err
        rules.append(_rule(entry.name[: -len(".toml")], data))
    return tuple(rules)


@functools.cache
def fragment_atoms(smiles: str) -> tuple[tuple[str, int], ...]:
    """Heavy atoms of a fragment SMILES (dummies excluded), in SMILES order,
    as (element, H count).

    Examples
    --------
    >>> fragment_atoms("*C(C)(C)C")
    (('C', 0), ('C', 3), ('C', 3), ('C', 3))
    """
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        raise InputError(f"fragment SMILES {smiles!r} does not parse")
    return tuple(
        (a.GetSymbol(), a.GetTotalNumHs()) for a in mol.GetAtoms() if a.GetAtomicNum() != 0
    )


def match_fragments(problem: Problem, rules: tuple[FragmentRule, ...] | None = None) -> list[FragmentMatch]:
    """Fragment rules whose pattern the problem's data show (library order)."""
    rules = load_fragments() if rules is None else rules
    out = []
    f = problem.formula
    for rule in rules:
        if f["C"] < rule.min_carbons or f.dou < rule.min_dou or f["O"] < rule.min_oxygens:
            continue
        if any(f[el] == 0 for el in rule.elements):
            continue
        used: list[int] = []
        if rule.aromatic_window is not None:
            lo, hi = rule.aromatic_window
            inside = [i for i, s in enumerate(problem.h1) if lo <= s.shift <= hi]
            if sum(round(problem.h1[i].h_count) for i in inside) != rule.aromatic_h:
                continue
            if rule.within is not None and not all(
                rule.within[0] <= problem.h1[i].shift <= rule.within[1] for i in inside
            ):
                continue
            if not rule.signals:
                used = inside
        picked = _pick(problem.h1, rule.signals, ())
        if picked is None:
            continue
        out.append(FragmentMatch(rule, tuple(sorted(set(used) | set(picked)))))
    return out


def _shares_j(a: H1Signal, b: H1Signal) -> bool:
    return any(abs(x - y) <= _J_SHARE for x in a.couplings for y in b.couplings)


def _pick(signals: tuple[H1Signal, ...], pats: tuple[SignalPattern, ...], chosen: tuple[int, ...]) -> tuple[int, ...] | None:
    if len(chosen) == len(pats):
        return chosen
    pat = pats[len(chosen)]
    for i, s in enumerate(signals):
        if i in chosen or not pat.accepts(s):
            continue
        if pat.same_j and chosen and not _shares_j(signals[chosen[-1]], s):
            continue
        got = _pick(signals, pats, chosen + (i,))
        if got is not None:
            return got
    return None
