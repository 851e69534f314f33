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
``min_carbons``, ``min_dou``, ``min_oxygens``, ``elements``
    conditions on the formula.
``no_elements``
    the formula must lack these elements (e.g. F and P, whose couplings to
    H mimic H-H couplings).
``exclusive_j``
    ``[lo, hi]``: no other 1H signal with its shift in this window may share a
    coupling (±0.6 Hz) with a matched signal (a third alkene H sharing a J
    makes a pair part of a vinyl group or a diene).
per signal: ``need_j``, ``other_j_max``
    the signal must report a J; every J after the largest is at most this.
``[ring]``
    ring H read from the 1H list (see :class:`RingPattern`): every sharp
    signal in ``window`` is a ring H (except one with a J of at least
    ``not_ring_above``, default 10 Hz: an alkene H), their H add up to ``h``; each J is put
    in a coupling class (``classes``, e.g. ortho 7.0-9.6, meta 1.0-3.2 Hz;
    J below ``ignore_below`` are dropped, a J in no class rules the pattern
    out) and the signals must fill the ring's ``positions`` (one string of
    class letters per ring H: the couplings that H shows).  ``m``,
    J-less and several-H singlet signals (coincident H) fill any position;
    ``within`` optionally narrows where all of them must lie.
``family``
    rules of one family are alternatives: when several match, the solver
    needs one of them (each is tried in turn); a family with a soft member
    is soft as a whole.
``implies``, ``evidence``
    words for explanations: ``"a 1,2-disubstituted benzene ring"``,
    ``"the aromatic signals"``.
"""

from __future__ import annotations

import dataclasses
import functools
import itertools
import tomllib
from collections import Counter
from dataclasses import dataclass

from elucidate.errors import InputError
from elucidate.model import H1Signal, Problem
from elucidate.resources import fragments_root

__all__ = [
    "SignalPattern",
    "RingPattern",
    "FragmentRule",
    "FragmentMatch",
    "load_fragments",
    "match_fragments",
    "fragment_atoms",
    "hard_alternatives",
    "by_family",
    "shares_j",
    "describe_evidence",
    "ring_reading",
]

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
    need_j: bool = False
    other_j_max: float | None = None

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
        if self.need_j and not s.couplings:
            return False
        if self.j is not None and s.couplings:
            if not (self.j[0] <= s.couplings[0] <= self.j[1]):
                return False
        if self.other_j_max is not None and any(j > self.other_j_max for j in s.couplings[1:]):
            return False
        return True


@dataclass(frozen=True)
class RingPattern:
    """Ring H of one substitution pattern, as the 1H list shows them.

    ``positions`` holds one string per ring H naming the classes of the
    couplings that H shows (``"oom"``: two ortho and one meta partner).
    Classes in ``major`` must be seen exactly (an ortho J is always
    resolved); the others may be missing (small J often are).
    ``position_shift`` optionally gives a shift window per position (the
    alpha H of a pyridine lies above 7.9 ppm).
    """

    window: tuple[float, float]
    h: int
    classes: tuple[tuple[str, tuple[float, float]], ...]
    positions: tuple[str, ...]
    major: tuple[str, ...] = ("o",)
    within: tuple[float, float] | None = None
    ignore_below: float = 1.0
    position_shift: tuple[tuple[float, float], ...] | None = None
    not_ring_above: float = 10.0


_UNKNOWN = "unknown"
_FAIL = "fail"


def ring_reading(s: H1Signal, ring: RingPattern) -> Counter | str:
    """Coupling classes one ring-H signal shows (per H), ``'unknown'`` when
    the signal does not tell (``m``, no J, several coincident H as one
    singlet), ``'fail'`` when a J fits no class.

    Examples
    --------
    >>> ring = RingPattern((6.3, 9.3), 1, (("o", (7.0, 9.6)), ("m", (1.0, 3.2))), ("oom",))
    >>> sorted(ring_reading(H1Signal(7.45, 7.45, 7.45, "ddd", (8.6, 7.2, 1.8), 1, 1), ring).elements())
    ['m', 'o', 'o']
    >>> ring_reading(H1Signal(7.3, 7.2, 7.4, "m", (), 2, 2), ring)
    'unknown'
    """
    pattern = s.pattern
    if pattern is None:
        return _UNKNOWN
    if s.multiplicity == "s":
        return Counter() if round(s.h_count) == 1 else _UNKNOWN
    js = list(s.couplings)
    if len(js) != len(pattern):
        return _UNKNOWN
    out: Counter = Counter()
    for lines, j in zip(pattern, js):
        if j < ring.ignore_below:
            continue
        cls = next((name for name, (lo, hi) in ring.classes if lo <= j <= hi), None)
        if cls is None:
            return _FAIL
        out[cls] += lines - 1
    return out


def _fits(seen: Counter, pos: Counter, major: tuple[str, ...]) -> bool:
    if any(seen[c] != pos[c] for c in major):
        return False
    return all(n <= pos[c] for c, n in seen.items())


def _ring_window(signals: tuple[H1Signal, ...], ring: RingPattern) -> list[int]:
    """Signals a ring pattern counts as ring H: in its window and sharp;
    broad signals are taken for NH/OH, and an H with a J above any ring J
    (an alkene H, J 10-18 Hz) is no ring H."""
    lo, hi = ring.window
    return [
        i for i, s in enumerate(signals)
        if lo <= s.shift <= hi and not s.broad and not any(j >= ring.not_ring_above for j in s.couplings)
    ]


def _ring_match(signals: tuple[H1Signal, ...], ring: RingPattern) -> tuple[int, ...] | None:
    inside = _ring_window(signals, ring)
    if sum(round(signals[i].h_count) for i in inside) != ring.h or ring.h != len(ring.positions):
        return None
    if ring.within is not None and not all(ring.within[0] <= signals[i].shift <= ring.within[1] for i in inside):
        return None
    readings = []
    for i in inside:
        r = ring_reading(signals[i], ring)
        if r == _FAIL:
            return None
        readings.append((i, r))
    # known readings first, more H first: fewer branches
    readings.sort(key=lambda x: (x[1] == _UNKNOWN, -round(signals[x[0]].h_count), x[0]))
    pos = [Counter(p) for p in ring.positions]
    wins = ring.position_shift or tuple((-1.0, 20.0) for _ in ring.positions)

    def place(k: int, free: frozenset[int]) -> bool:
        if k == len(readings):
            return not free
        i, r = readings[k]
        s = signals[i]
        n = round(s.h_count)
        ok = [p for p in sorted(free) if wins[p][0] <= s.shift_high and s.shift_low <= wins[p][1]
              and (r == _UNKNOWN or _fits(r, pos[p], ring.major))]
        seen_sets = set()
        for combo in itertools.combinations(ok, n):
            key = tuple(sorted((ring.positions[p], wins[p]) for p in combo))
            if key in seen_sets:
                continue
            seen_sets.add(key)
            if place(k + 1, free - set(combo)):
                return True
        return False

    return tuple(sorted(inside)) if place(0, frozenset(range(len(pos)))) else None


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
    min_carbons: int = 0
    min_dou: float = 0.0
    min_oxygens: int = 0
    elements: tuple[str, ...] = ()
    no_elements: tuple[str, ...] = ()
    exclusive_j: tuple[float, float] | None = None
    ring: RingPattern | None = None
    family: str = ""
    implies: str = ""
    evidence: str = "the signals"

    @property
    def phrase(self) -> str:
        """What the rule's pattern implies, in words."""
        return self.implies or f"a {self.name} group"


@dataclass(frozen=True)
class FragmentMatch:
    """A rule whose pattern the observed data show, with the signals used."""

    rule: FragmentRule
    signals: tuple[int, ...]
    #: (signal, H) pairs when the fragment owns only part of a signal's H
    #: (rings sharing an overlapped multiplet); empty: all H of ``signals``
    shares: tuple[tuple[int, int], ...] = ()

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
    for old in ("aromatic_window", "aromatic_h", "all_ortho", "ring_h"):
        if old in data:
            raise InputError(f"fragment file {where}: key '{old}' is no longer read; give the ring H as a [ring] table")
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
                need_j=bool(sp.get("need_j", False)),
                other_j_max=float(sp["other_j_max"]) if "other_j_max" in sp else None,
            )
        )
    ring = _ring(data["ring"], where) if "ring" in data else None
    return FragmentRule(
        key=key,
        name=str(data["name"]),
        smiles=str(data["smiles"]),
        strength=str(data["strength"]),
        source=str(data["source"]),
        weight=float(data.get("weight", 1.0)),
        signals=tuple(pats),
        min_carbons=int(data.get("min_carbons", 0)),
        min_dou=float(data.get("min_dou", 0)),
        min_oxygens=int(data.get("min_oxygens", 0)),
        elements=tuple(data.get("elements", ())),
        no_elements=tuple(data.get("no_elements", ())),
        exclusive_j=_pair(data["exclusive_j"], where) if "exclusive_j" in data else None,
        ring=ring,
        family=str(data.get("family", "")),
        implies=str(data.get("implies", "")),
        evidence=str(data.get("evidence", "the aromatic signals" if ring else "the signals")),
    )


def _ring(data: object, where: str) -> RingPattern:
    if not isinstance(data, dict):
        raise InputError(f"fragment file {where}: [ring] must be a table")
    for required in ("window", "h", "classes", "positions"):
        if required not in data:
            raise InputError(f"fragment file {where}: [ring] misses key '{required}'")
    classes = data["classes"]
    if not isinstance(classes, dict) or not classes or any(len(k) != 1 for k in classes):
        raise InputError(f"fragment file {where}: [ring] classes must map one-letter names to [low, high]")
    positions = tuple(str(p) for p in data["positions"])
    names = set(classes)
    if len(positions) != int(data["h"]) or any(ch not in names for p in positions for ch in p):
        raise InputError(f"fragment file {where}: [ring] positions must be h strings of class letters")
    shifts = None
    if "position_shift" in data:
        shifts = tuple(_pair(v, where) for v in data["position_shift"])
        if len(shifts) != len(positions):
            raise InputError(f"fragment file {where}: [ring] position_shift needs one window per position")
    return RingPattern(
        window=_pair(data["window"], where),
        h=int(data["h"]),
        classes=tuple(sorted((k, _pair(v, where)) for k, v in classes.items())),
        positions=positions,
        major=tuple(data.get("major", ("o",))),
        within=_pair(data["within"], where) if "within" in data else None,
        ignore_below=float(data.get("ignore_below", 1.0)),
        position_shift=shifts,
        not_ring_above=float(data.get("not_ring_above", 10.0)),
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
        if not _formula_allows(rule, f):
            continue
        used: tuple[int, ...] = ()
        if rule.ring is not None:
            ring_used = _ring_match(problem.h1, rule.ring)
            if ring_used is None:
                continue
            used = ring_used
        picked = _pick(problem.h1, rule.signals, (), rule.exclusive_j)
        if picked is None:
            continue
        out.append(FragmentMatch(rule, tuple(sorted(set(used) | set(picked)))))
    if not any(m.rule.family == RING_FAMILY for m in out):
        out += _ring_sets(problem, rules)
    return _soften_families(_distinct(out))


def _formula_allows(rule: FragmentRule, f) -> bool:  # type: ignore[no-untyped-def]
    """The rule's conditions on the formula (carbons, DoU, O, elements)."""
    if f["C"] < rule.min_carbons or f.dou < rule.min_dou or f["O"] < rule.min_oxygens:
        return False
    return not any(f[el] == 0 for el in rule.elements) and not any(f[el] > 0 for el in rule.no_elements)


def _distinct(matches: list[FragmentMatch]) -> list[FragmentMatch]:
    """Drop a family member that places the same fragment on the same
    signals as an earlier one (two readings of one ring, such as the
    first-order and the AA'BB' reading of a 1,2-disubstituted benzene)."""
    seen: set = set()
    out = []
    for m in matches:
        key = (m.rule.family, m.rule.smiles, m.signals, m.shares) if m.rule.family else id(m)
        if key not in seen:
            seen.add(key)
            out.append(m)
    return out


#: the family whose rules read one aromatic ring from the 1H list
RING_FAMILY = "aromatic ring substitution"
#: most rings one ring-H window is read as
_MAX_RINGS = 3


def _ring_sets(problem: Problem, rules: tuple[FragmentRule, ...]) -> list[FragmentMatch]:
    """Ring H no single ring pattern reads: read them as several rings.

    Called when no rule of the ring family matched the window as one ring
    (more ring H than a ring holds, or a signal among them that is no ring
    H).  The sharp signals of the window are ring H, except that each
    singlet may instead be a non-ring H (the CH=CH of a stilbene, the =CH
    of a cinnamaldehyde), and so may a signal whose every J it shares with
    signals outside the window only (the H-4 doublet of a coumarin, J 9.5
    Hz with H-3 below the window); their H are shared out among one to three rings
    of the family, a signal's H possibly among several rings (two
    equivalent phenyls give one 4H doublet; an overlapped multiplet holds H
    of both rings), so that each ring's share fits its pattern and the
    formula holds the rings (carbons, nitrogens, DoU, the rings disjoint).

    Rings are claimed only when no feasible reading has two rings that
    could be the halves of one fused system (each with two substituents
    side by side, as the two halves of a naphthalene): disjoint rings are
    what the readings describe, and a fused system is none of them.  Then:

    * when every reading has the same number of phenyls and at most one
      other ring, one match per phenyl (each its own family) and the other
      ring's alternatives as one family, first (its shares are exact; the
      phenyls take the ring H it leaves);
    * else, when there is one reading only, one match per ring with exact
      shares;
    * else nothing.
    """
    f = problem.formula
    ring_rules = [r for r in rules if r.ring is not None and r.family == RING_FAMILY and _formula_allows(r, f)]
    mono = next((r for r in ring_rules if len(r.ring.positions) == 5 and r.smiles.count("*") == 1), None)
    if mono is None:
        return []
    signals = problem.h1
    inside = _ring_window(signals, mono.ring)
    # signals that may be no ring H: singlets, and a signal whose every J
    # is shared with signals outside the window and with none inside (the
    # H-4 doublet of a coumarin, whose partner H-3 lies below the window)
    outside = [s for i, s in enumerate(signals) if i not in inside]
    singlets = [
        i for i in inside
        if signals[i].multiplicity == "s" or (
            signals[i].couplings
            and all(any(abs(j - k) <= _J_SHARE for o in outside for k in o.couplings)
                    for j in signals[i].couplings if j >= mono.ring.ignore_below)
            and not any(shares_j(signals[i], signals[k]) for k in inside if k != i))
    ]
    if len(singlets) > _MAX_SINGLETS:
        return []
    biggest = max(r.ring.h for r in ring_rules)
    feasible: list[tuple[frozenset[int], tuple[FragmentRule, ...], list[dict[int, int]]]] = []
    for n_out in range(len(singlets) + 1):
        for out_set in itertools.combinations(singlets, n_out):
            ring_h = [i for i in inside if i not in out_set]
            total = sum(round(signals[i].h_count) for i in ring_h)
            first = 1 if out_set else 2  # all of the window as one ring: the rules themselves
            for k in range(first, _MAX_RINGS + 1):
                if total > k * biggest:
                    continue
                for combo in itertools.combinations_with_replacement(ring_rules, k):
                    if sum(r.ring.h for r in combo) != total or not _budget_ok(combo, f):
                        continue
                    shares = _share_out(signals, ring_h, combo)
                    if shares is not None:
                        feasible.append((frozenset(ring_h), combo, shares))
    if not feasible or any(sum(1 for r in combo if _fusable(r.smiles)) > 1 for _, combo, _ in feasible):
        return []
    out: list[FragmentMatch] = []
    shapes = {(sum(1 for r in combo if r is mono), sum(1 for r in combo if r is not mono)) for _, combo, _ in feasible}
    if len(shapes) == 1 and next(iter(shapes))[1] <= 1:
        phenyls = next(iter(shapes))[0]
        for _, combo, shares in feasible:
            for rule, share in zip(combo, shares):
                if rule is not mono:
                    fam = dataclasses.replace(rule, family=f"{RING_FAMILY} (ring 1)")
                    out.append(FragmentMatch(fam, tuple(sorted(share)), tuple(sorted(share.items()))))
        used = sorted(frozenset().union(*(ring_h for ring_h, _, _ in feasible)))
        for n in range(phenyls):
            fam = dataclasses.replace(mono, family=f"{RING_FAMILY} (ring {n + 2})")
            out.append(FragmentMatch(fam, tuple(used)))
    elif len(feasible) == 1:
        _, combo, shares = feasible[0]
        for n, (rule, share) in enumerate(zip(combo, shares)):
            fam = dataclasses.replace(rule, family=f"{RING_FAMILY} (ring {n + 1})")
            out.append(FragmentMatch(fam, tuple(sorted(share)), tuple(sorted(share.items()))))
    return out


#: most singlets of the ring window tried as non-ring H
_MAX_SINGLETS = 3


@functools.cache
def _fusable(smiles: str) -> bool:
    """Does the ring fragment have two open valences on adjacent ring atoms
    (so that it could be one half of a fused pair)?"""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    ports = [a.GetNeighbors()[0].GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() == 0]
    return any(mol.GetBondBetweenAtoms(u, v) is not None for u, v in itertools.combinations(ports, 2))


def _budget_ok(combo: tuple[FragmentRule, ...], f) -> bool:  # type: ignore[no-untyped-def]
    """Do the formula's carbons, nitrogens and DoU hold these disjoint rings?"""
    atoms = Counter()
    for r in combo:
        for el, _ in fragment_atoms(r.smiles):
            atoms[el] += 1
    return all(f[el] >= n for el, n in atoms.items()) and f.dou >= 4 * len(combo)


def _share_out(signals: tuple[H1Signal, ...], inside: list[int],
               combo: tuple[FragmentRule, ...]) -> list[dict[int, int]] | None:
    """One way to share the inside signals' H among the rings so that each
    ring's share fits its pattern (signal -> H per ring), or None."""
    k = len(combo)
    need = [r.ring.h for r in combo]
    order = sorted(inside, key=lambda i: -round(signals[i].h_count))
    shares: list[dict[int, int]] = [{} for _ in range(k)]

    def split(n: int, j: int, room: list[int]):  # type: ignore[no-untyped-def]
        # every way to give n H to rings j..k-1 within their room
        if j == k - 1:
            if n <= room[j]:
                yield (n,)
            return
        for a in range(min(n, room[j]), -1, -1):
            for rest in split(n - a, j + 1, room):
                yield (a, *rest)

    def go(t: int, room: list[int]) -> bool:
        if t == len(order):
            for j, rule in enumerate(combo):
                sub = tuple(dataclasses.replace(signals[i], h_count=float(h)) for i, h in sorted(shares[j].items()))
                if _ring_match(sub, rule.ring) is None:
                    return False
            return True
        i = order[t]
        n = round(signals[i].h_count)
        for parts in split(n, 0, room):
            for j, a in enumerate(parts):
                if a:
                    shares[j][i] = a
            if go(t + 1, [r - a for r, a in zip(room, parts)]):
                return True
            for j, a in enumerate(parts):
                shares[j].pop(i, None)
        return False

    return [dict(s) for s in shares] if go(0, need) else None


def _soften_families(matches: list[FragmentMatch]) -> list[FragmentMatch]:
    """A family whose matched alternatives include a soft one cannot prune:
    all its members become soft."""
    soft_families = {m.rule.family for m in matches if m.rule.family and m.rule.strength == "soft"}
    return [
        FragmentMatch(dataclasses.replace(m.rule, strength="soft"), m.signals)
        if m.rule.family in soft_families and m.rule.strength == "hard" else m
        for m in matches
    ]


def by_family(matches: list[FragmentMatch]) -> list[list[FragmentMatch]]:
    """Matches grouped into alternatives: one list per family (library
    order), one single-member list per rule without a family."""
    groups: dict[str, list[FragmentMatch]] = {}
    out: list[list[FragmentMatch]] = []
    for m in matches:
        if not m.rule.family:
            out.append([m])
        elif m.rule.family in groups:
            groups[m.rule.family].append(m)
        else:
            groups[m.rule.family] = [m]
            out.append(groups[m.rule.family])
    return out


def hard_alternatives(hard: list[FragmentMatch]) -> list[tuple[FragmentMatch, ...]]:
    """Every choice of one alternative per family (the product over
    families), each with all family-less hard rules.

    Examples
    --------
    >>> hard_alternatives([])
    [()]
    """
    return [tuple(combo) for combo in itertools.product(*by_family(hard))]


def describe_evidence(match: FragmentMatch, problem: Problem) -> str:
    """The matched signals as chemists write them: ``7.85 dd 7.9/1.6``."""
    parts = []
    for i in match.signals:
        s = problem.h1[i]
        where = f"{s.shift_high:.2f}-{s.shift_low:.2f}" if s.shift_high - s.shift_low > 0.05 else f"{s.shift:.2f}"
        mult = ("br " if s.broad else "") + s.multiplicity
        js = "/".join(f"{j:g}" for j in s.couplings)
        parts.append(" ".join(x for x in (where, mult, js) if x))
    return ", ".join(parts)


def shares_j(a: H1Signal, b: H1Signal) -> bool:
    """Do two signals report a coupling within 0.6 Hz of each other (common practice)?"""
    return any(abs(x - y) <= _J_SHARE for x in a.couplings for y in b.couplings)


def _exclusive(signals: tuple[H1Signal, ...], chosen: tuple[int, ...], window: tuple[float, float] | None) -> bool:
    if window is None:
        return True
    return not any(
        window[0] <= s.shift <= window[1] and round(s.h_count) == 1 and shares_j(s, signals[c])
        for i, s in enumerate(signals) if i not in chosen for c in chosen
    )


def _pick(
    signals: tuple[H1Signal, ...],
    pats: tuple[SignalPattern, ...],
    chosen: tuple[int, ...],
    exclusive: tuple[float, float] | None = None,
) -> tuple[int, ...] | None:
    if len(chosen) == len(pats):
        return chosen if _exclusive(signals, chosen, exclusive) else None
    pat = pats[len(chosen)]
    for i, s in enumerate(signals):
        if i in chosen or not pat.accepts(s):
            continue
        if pat.same_j and chosen and not shares_j(signals[chosen[-1]], s):
            continue
        got = _pick(signals, pats, chosen + (i,), exclusive)
        if got is not None:
            return got
    return None
