"""Spectral evidence as hard, explainable, relaxable constraints.

Each kind of evidence read from the data is one object here.  Every object

* checks a finished structure cheaply, before any prediction
  (:meth:`Evidence.admits_structure`, called by the generator on each
  structure it builds, so a structure that breaks it is never predicted or
  scored);
* says in words why a structure breaks it (:meth:`Evidence.reason`), for
  ``explain`` and for rejection summaries;
* may narrow the proton-group model before generation
  (:meth:`Evidence.group_bounds`: e.g. DEPT fixes how many CH3, CH2, CH and
  C there are, so H-count readings that contradict it are never generated);
* carries a ``tier``: the solver's relaxation ladder drops tier-0 evidence
  first (the strict 2-3-bond reading of 2D correlations, which the
  long-range reading then replaces), then tier 1 (shift regions, line
  counts), then tier 2 (DEPT, 2D correlations) together with the hard
  fragments, and says so in ``relaxed``.

The kinds:

:class:`CarbonLineCount`
    The number of 13C lines is a lower bound on the number of symmetry
    classes of carbon (equivalent carbons that real spectra show apart, such
    as the diastereotopic methyls of an isopropyl group, may count twice);
    a list marked complete is also an upper bound.
:class:`CarbonRegions`
    Each 13C line lies in a shift region that only some carbons reach (a
    line above 166 ppm needs a C=O or C=N carbon, ...; table
    ``data/c13_regions.csv`` with a source per row), and a DEPT label fixes
    its carbon's H count: the lines must be met by distinct carbons of the
    right kind (a bipartite matching).
:class:`CarbonHCounts`
    DEPT/APT labels give the number of CH3, CH2, CH and C carbons.
:class:`ProtonRegions`
    H above 6.2 ppm sit on sp2/sp carbons (or a carbon with two
    heteroatoms) or on O/N/S; H above 9.45 ppm on C=O/C=N carbons or on
    O/N/S (table ``data/h1_regions.csv``).
:class:`~elucidate.constrain.correlations.Correlations`
    HSQC, COSY and HMBC cross peaks (module
    :mod:`elucidate.constrain.correlations`).
:class:`CommonRings`
    Not read from a spectrum but a prior every search starts with: rings of
    at most eight atoms, no triple bond and no cumulated double bonds in a
    ring, and no benzene-type ring bridged across meta or para positions
    (a cyclophane).  It tightens the generator's own options
    (:meth:`Evidence.generator_options`), so macrocycles and strained
    cycloalkynes are never built until the ladder drops it with the hard
    fragments.

Structures are seen through :class:`Graph`: heavy-atom symbols, H counts and
bonds with Kekulé orders, from a generator structure or an RDKit molecule.
"""

from __future__ import annotations

import csv
import functools
from dataclasses import dataclass, field
from importlib import resources
from typing import Any, Callable

from elucidate.model import Problem

__all__ = [
    "Graph",
    "Evidence",
    "CarbonLineCount",
    "CarbonRegions",
    "CarbonHCounts",
    "ProtonRegions",
    "CommonRings",
    "CarbonKinds",
    "carbon_kinds",
    "carbon_kind_names",
    "Region",
    "read_evidence",
    "carbon_regions",
    "proton_regions",
]

_HETERO = frozenset({"O", "N", "S", "F", "Cl", "Br", "I"})
_XH = frozenset({"O", "N", "S"})

# per-carbon flags
_UNSAT = 1  # has a double or triple bond
_CEQX = 2  # doubly bonded to O/N/S, or unsaturated with two heteroatoms, or an allene centre
_HET1 = 4  # bonded to at least one heteroatom
_HET2 = 8  # bonded to at least two heteroatoms

#: what each region asks of a carbon (flag test)
_NEEDS: dict[str, Callable[[int], bool]] = {
    "c_eq_x": lambda f: bool(f & _CEQX),
    "unsat_or_2het": lambda f: bool(f & (_UNSAT | _HET2)),
    "not_plain_sp3": lambda f: bool(f & (_UNSAT | _HET1)),
    "sp3": lambda f: not f & _UNSAT,
}

#: most bonds a heteroatom can make to carbon (S(VI), N as N+ counted high)
_MAX_HETERO_BONDS = {"O": 2, "N": 4, "S": 6, "F": 1, "Cl": 1, "Br": 1, "I": 1}

_DEPT_WORD = {3: "CH3", 2: "CH2", 1: "CH", 0: "C (no H)"}


# ------------------------------------------------------------------ graphs


@dataclass
class Graph:
    """A finished structure as the evidence checks see it.

    Parameters
    ----------
    symbols : tuple of str
        Heavy-atom element symbols.
    hs : tuple of int
        H on each heavy atom.
    edges : tuple of (int, int)
        Bonds between heavy atoms.
    orders : tuple of int
        Kekulé bond orders (1, 2, 3), one per edge.
    mol_fn : callable, optional
        Returns the RDKit molecule (built only when a check needs symmetry).
    """

    symbols: tuple[str, ...]
    hs: tuple[int, ...]
    edges: tuple[tuple[int, int], ...]
    orders: tuple[int, ...]
    mol_fn: Callable[[], Any] | None = None
    _flags: list[int] | None = field(default=None, repr=False)

    @classmethod
    def from_structure(cls, st: Any) -> "Graph":
        """From a generator :class:`~elucidate.generate.decorate.Structure`."""
        from elucidate.generate.decorate import structure_mol

        return cls(
            tuple(lab.symbol for lab in st.labels),
            tuple(st.hs()),
            tuple(st.edges),
            tuple(st.orders),
            lambda: structure_mol(st),
        )

    @classmethod
    def from_smiles(cls, smiles: str) -> "Graph":
        """From a SMILES (Kekulé orders from RDKit)."""
        from rdkit import Chem

        mol = Chem.MolFromSmiles(smiles)
        if mol is None:
            raise ValueError(f"SMILES {smiles!r} does not parse")
        kek = Chem.Mol(mol)
        Chem.Kekulize(kek, clearAromaticFlags=True)
        edges = []
        orders = []
        for b in kek.GetBonds():
            u, v = sorted((b.GetBeginAtomIdx(), b.GetEndAtomIdx()))
            edges.append((u, v))
            orders.append(int(b.GetBondTypeAsDouble()))
        return cls(
            tuple(a.GetSymbol() for a in kek.GetAtoms()),
            tuple(a.GetTotalNumHs() for a in kek.GetAtoms()),
            tuple(edges),
            tuple(orders),
            lambda: mol,
        )

    def mol(self) -> Any:
        if self.mol_fn is None:
            raise ValueError("this graph carries no molecule")
        return self.mol_fn()

    def flags(self) -> list[int]:
        """Per heavy atom: the _UNSAT/_CEQX/_HET1/_HET2 bits (carbons only; 0 else)."""
        if self._flags is not None:
            return self._flags
        n = len(self.symbols)
        flags = [0] * n
        het = [0] * n
        dbl_x = [False] * n
        doubles = [0] * n
        for (u, v), o in zip(self.edges, self.orders):
            su, sv = self.symbols[u], self.symbols[v]
            if sv in _HETERO:
                het[u] += 1
            if su in _HETERO:
                het[v] += 1
            if o >= 2:
                flags[u] |= _UNSAT
                flags[v] |= _UNSAT
                if o == 2:
                    doubles[u] += 1
                    doubles[v] += 1
                    if sv in _XH:
                        dbl_x[u] = True
                    if su in _XH:
                        dbl_x[v] = True
        for i, s in enumerate(self.symbols):
            if s != "C":
                flags[i] = 0
                continue
            if het[i] >= 1:
                flags[i] |= _HET1
            if het[i] >= 2:
                flags[i] |= _HET2
            if dbl_x[i] or doubles[i] >= 2 or (flags[i] & _UNSAT and het[i] >= 2):
                flags[i] |= _CEQX
        self._flags = flags
        return flags

    def carbons(self) -> list[int]:
        return [i for i, s in enumerate(self.symbols) if s == "C"]


# ---------------------------------------------------------------- tables


@dataclass(frozen=True)
class Region:
    """A shift window and what an atom in it needs (one row of a table)."""

    lo: float
    hi: float
    needs: str
    words: str
    source: str

    def holds(self, shift: float) -> bool:
        return self.lo <= shift < self.hi


def _data_rows(name: str) -> list[dict[str, str]]:
    """Rows of a table in ``constrain/data/``."""
    text = resources.files("elucidate.constrain").joinpath(f"data/{name}").read_text(encoding="utf-8")
    return list(csv.DictReader(text.splitlines()))


def _read_regions(name: str) -> tuple[Region, ...]:
    rows = []
    for row in _data_rows(name):
        if row["needs"] not in _NEEDS:
            raise ValueError(f"constrain/data/{name}: unknown need {row['needs']!r}")
        rows.append(Region(float(row["lo"]), float(row["hi"]), row["needs"], row["words"], row["source"]))
    return tuple(rows)


@functools.cache
def carbon_regions() -> tuple[Region, ...]:
    """13C shift regions (``data/c13_regions.csv``), loaded once."""
    return _read_regions("c13_regions.csv")


@functools.cache
def proton_regions() -> tuple[Region, ...]:
    """1H shift regions (``data/h1_regions.csv``), loaded once."""
    return _read_regions("h1_regions.csv")


# -------------------------------------------------------------- evidence


class Evidence:
    """Base class: one kind of evidence as a hard, relaxable constraint.

    Subclasses set ``key`` (short id), ``title`` (words), ``tier`` (0:
    relaxed first, replaced by a wider reading; 1: relaxed next; 2: relaxed
    with the hard fragments) and ``relaxation``
    (the phrase listed in ``relaxed`` when it is dropped), and implement
    :meth:`reason`.
    """

    key: str = ""
    title: str = ""
    tier: int = 1
    relaxation: str = ""

    def describe(self) -> str:
        """What the evidence asks of every candidate, in words."""
        return self.title

    def group_bounds(self) -> dict[int, tuple[int, int]] | None:
        """Bounds (lo, hi) on the number of carbons with 0-3 H, or None."""
        return None

    def reason(self, graph: Graph) -> str | None:
        """Why the structure breaks this evidence, or None if it does not."""
        raise NotImplementedError

    def min_unsaturated_carbons(self, formula: Any) -> int:
        """A lower bound on the carbons with a double or triple bond that any
        structure meeting this evidence has (the generator turns it into a cap
        on the number of rings: each multiple bond serves at most two carbons)."""
        return 0

    def generator_options(self, options: Any) -> Any:
        """Generator hook: the generator's :class:`~elucidate.generate.Options`
        tightened to what this evidence allows (default: unchanged).  The
        generator then never builds what the tighter options leave out, which
        must all be structures :meth:`reason` turns down."""
        return options

    def admits_structure(self, st: Any) -> bool:
        """Generator hook: does a finished generator structure meet it?"""
        return self.reason(Graph.from_structure(st)) is None

    def admits_smiles(self, smiles: str) -> bool:
        return self.reason(Graph.from_smiles(smiles)) is None

    def check_rows(self, graph: Graph) -> tuple[Any, ...]:
        """Per-item status on one candidate (:class:`~elucidate.model.CheckRow`),
        for the report; most evidence has none."""
        return ()


def _fmt(shifts: list[float]) -> str:
    return ", ".join(f"{s:.1f}" for s in shifts)


@dataclass(frozen=True, eq=True)
class CarbonLineCount(Evidence):
    """Distinct carbons (symmetry classes) against the number of 13C lines.

    ``lines`` carbons-per-line as given; ``complete``: the list has one line
    per distinct carbon (no accidental overlap).

    Examples
    --------
    >>> ev = CarbonLineCount(lines=4, complete=False)
    >>> ev.reason(Graph.from_smiles("CCOC(C)=O")) is None
    True
    >>> ev.reason(Graph.from_smiles("COC(=O)OC"))
    'has 2 distinct carbons, but 4 13C lines are observed'
    """

    lines: int = 0
    complete: bool = False
    key = "c13-lines"
    title = "13C line count"
    tier = 1
    relaxation = "13C line count"

    def describe(self) -> str:
        if self.complete:
            return f"exactly {self.lines} distinct carbons (complete 13C list of {self.lines} lines)"
        return f"at least {self.lines} distinct carbons ({self.lines} 13C lines)"

    def reason(self, graph: Graph) -> str | None:
        carbons = graph.carbons()
        if len(carbons) >= self.lines and not self.complete and self._quick_ok(graph):
            return None
        classes, splits = _carbon_classes(graph.mol())
        if classes + splits < self.lines:
            return f"has {classes} distinct carbons, but {self.lines} 13C lines are observed"
        if self.complete and classes > self.lines:
            return f"has {classes} distinct carbons, but the complete 13C list has only {self.lines} lines"
        return None

    def _quick_ok(self, graph: Graph) -> bool:
        # a molecule whose carbons all differ in (H, flags, degree) meets any
        # lower bound up to its carbon count without a symmetry computation
        seen = set()
        flags = graph.flags()
        deg = [0] * len(graph.symbols)
        for u, v in graph.edges:
            deg[u] += 1
            deg[v] += 1
        for i in graph.carbons():
            seen.add((graph.hs[i], flags[i], deg[i]))
        return len(seen) >= self.lines


def _carbon_classes(mol: Any) -> tuple[int, int]:
    """(symmetry classes of carbon, classes real spectra may show as two lines).

    Two equivalent methyls on a common non-aromatic neighbour (those of an
    isopropyl or gem-dimethyl group near a stereocentre, the methyls of a
    C=C(CH3)2), two equivalent carbons on one non-aromatic N (amide
    rotamers: N,N-diethyl, piperidide C2/C6) may give two lines (common
    practice); so may a pair bonded to such a pair (two steps out).
    """
    from rdkit import Chem

    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    members: dict[int, list[int]] = {}
    for a in mol.GetAtoms():
        if a.GetSymbol() == "C":
            members.setdefault(ranks[a.GetIdx()], []).append(a.GetIdx())
    pairs = [m for m in members.values() if len(m) == 2]
    can_split: set[tuple[int, int]] = set()
    for a, b in pairs:
        methyls = mol.GetAtomWithIdx(a).GetTotalNumHs() == 3
        na = {n.GetIdx() for n in mol.GetAtomWithIdx(a).GetNeighbors()}
        nb = {n.GetIdx() for n in mol.GetAtomWithIdx(b).GetNeighbors()}
        for x in na & nb:
            centre = mol.GetAtomWithIdx(x)
            if not centre.GetIsAromatic() and (methyls or centre.GetSymbol() == "N"):
                can_split.add((a, b))
    for _ in range(2):
        for a, b in pairs:
            if (a, b) in can_split:
                continue
            na = {n.GetIdx() for n in mol.GetAtomWithIdx(a).GetNeighbors()}
            nb = {n.GetIdx() for n in mol.GetAtomWithIdx(b).GetNeighbors()}
            if any((x, y) in can_split or (y, x) in can_split for x in na for y in nb):
                can_split.add((a, b))
    return len(members), len(can_split)


@dataclass(frozen=True, eq=True)
class CarbonRegions(Evidence):
    """13C lines by shift region and DEPT label, met by distinct carbons.

    ``lines``: (shift, carbons, attached_h or -1) per observed line.

    Examples
    --------
    >>> ev = CarbonRegions(lines=((198.4, 1, -1), (25.0, 1, -1)))
    >>> ev.reason(Graph.from_smiles("CC(C)O")) is not None
    True
    >>> ev.reason(Graph.from_smiles("CC(C)=O")) is None
    True
    """

    lines: tuple[tuple[float, int, int], ...] = ()
    key = "c13-regions"
    title = "13C shift regions and DEPT labels"
    tier = 1
    relaxation = "13C shift-region rules"

    def demands(self) -> tuple[tuple[float, str | None, int], ...]:
        """One (shift, need, H or -1) per carbon the lines ask for."""
        return self._demands

    @functools.cached_property
    def _demands(self) -> tuple[tuple[float, str | None, int], ...]:
        # computed once per object: reason() runs on every structure built
        out: list[tuple[float, str | None, int]] = []
        for shift, n, h in self.lines:
            region = next((r for r in carbon_regions() if r.holds(shift)), None)
            need = region.needs if region else None
            if need is None and h < 0:
                continue
            out += [(shift, need, h)] * max(1, n)
        return tuple(out)

    def min_unsaturated_carbons(self, formula: Any) -> int:
        dem = self.demands()
        firm = sum(1 for _, need, _ in dem if need == "c_eq_x")
        loose = sum(1 for _, need, _ in dem if need == "unsat_or_2het")
        # an sp3 carbon with two heteroatoms uses two carbon-heteroatom bonds
        bonds = sum(formula[el] * v for el, v in _MAX_HETERO_BONDS.items())
        return firm + max(0, loose - bonds // 2)

    def describe(self) -> str:
        parts = []
        for r in carbon_regions():
            hits = [s for s, _, _ in self.lines if r.holds(s)]
            if hits:
                parts.append(f"{len(hits)} line(s) at {_fmt(hits)} need {r.words}")
        return "; ".join(parts) or self.title

    def reason(self, graph: Graph) -> str | None:
        dem = self.demands()
        if not dem:
            return None
        flags = graph.flags()
        carbons = graph.carbons()
        ok = [
            [c for c in carbons if (need is None or _NEEDS[need](flags[c])) and (h < 0 or graph.hs[c] == h)]
            for _, need, h in dem
        ]
        if _matching(ok, len(graph.symbols)):
            return None
        return self._words(dem, graph, flags, carbons)

    def _words(self, dem: list, graph: Graph, flags: list[int], carbons: list[int]) -> str:
        for r in carbon_regions():
            want = [s for s, need, _ in dem if need == r.needs]
            have = sum(1 for c in carbons if _NEEDS[r.needs](flags[c]))
            if len(want) > have:
                return (
                    f"the 13C line(s) at {_fmt(want)} ppm need {len(want)} carbon(s) of this kind: "
                    f"{r.words}; this structure has {have}"
                )
        for h in (3, 2, 1, 0):
            want = [s for s, _, hh in dem if hh == h]
            have = sum(1 for c in carbons if graph.hs[c] == h)
            if len(want) > have:
                return f"the DEPT labels ask for {len(want)} {_DEPT_WORD[h]} carbon(s) ({_fmt(want)}); this structure has {have}"
        return "its carbons cannot meet every 13C line's shift region and DEPT label at once"


def _matching(options: list[list[int]], n: int) -> bool:
    """Can every demand get its own atom (Kuhn's augmenting paths)?"""
    owner = [-1] * n
    order = sorted(range(len(options)), key=lambda d: len(options[d]))

    def augment(d: int, seen: list[bool]) -> bool:
        for c in options[d]:
            if seen[c]:
                continue
            seen[c] = True
            if owner[c] < 0 or augment(owner[c], seen):
                owner[c] = d
                return True
        return False

    for d in order:
        if not options[d] or not augment(d, [False] * n):
            return False
    return True


@dataclass(frozen=True)
class Kind:
    """A kind of carbon and the 13C window it reaches (one row of
    ``data/c13_kinds.csv``)."""

    kind: str
    lo: float
    hi: float
    words: str
    source: str


@functools.cache
def carbon_kinds() -> dict[str, Kind]:
    """Carbon kinds and their 13C windows (``data/c13_kinds.csv``), loaded once."""
    out = {}
    for row in _data_rows("c13_kinds.csv"):
        out[row["kind"]] = Kind(row["kind"], float(row["lo"]), float(row["hi"]), row["words"], row["source"])
    missing = set(_KIND_NAMES) - set(out)
    if missing:
        raise ValueError(f"constrain/data/c13_kinds.csv: no row for kind(s) {sorted(missing)}")
    return out


_KIND_NAMES = ("sp3", "sp3_x", "alkyne", "alkyne_x", "nitrile", "allene_centre", "cumulene_inner", "cumulene_x",
               "allene_end", "ketene_end", "c_eq_o", "c_eq_s", "c_eq_n", "sp2", "sp2_x")


def carbon_kind_names(graph: Graph) -> dict[int, str]:
    """The kind (a row of ``data/c13_kinds.csv``) of every carbon, from its
    Kekulé bonds: hybridisation, the partner of its multiple bond and
    whether a heteroatom (anything but C) sits on either end of it.

    Examples
    --------
    >>> g = Graph.from_smiles("C#CC(=O)OC")
    >>> [carbon_kind_names(g)[i] for i in sorted(carbon_kind_names(g))]
    ['alkyne', 'alkyne', 'c_eq_o', 'sp3_x']
    """
    n = len(graph.symbols)
    sym = graph.symbols
    nbrs: list[list[tuple[int, int]]] = [[] for _ in range(n)]
    for (u, v), o in zip(graph.edges, graph.orders):
        nbrs[u].append((v, o))
        nbrs[v].append((u, o))
    hetero = [any(sym[w] != "C" for w, _ in nbrs[i]) for i in range(n)]
    doubles = [[w for w, o in nbrs[i] if o == 2] for i in range(n)]
    out: dict[int, str] = {}
    for i in range(n):
        if sym[i] != "C":
            continue
        triple = [w for w, o in nbrs[i] if o == 3]
        dbl = doubles[i]
        if triple:
            w = triple[0]
            if sym[w] == "N":
                out[i] = "nitrile"
            elif sym[w] != "C" or hetero[i] or hetero[w]:
                out[i] = "alkyne_x"
            else:
                out[i] = "alkyne"
        elif len(dbl) >= 2:
            if not all(sym[w] == "C" for w in dbl):
                out[i] = "cumulene_x"
            else:
                out[i] = "cumulene_inner" if any(len(doubles[w]) >= 2 for w in dbl) else "allene_centre"
        elif dbl:
            w = dbl[0]
            if sym[w] == "O":
                out[i] = "c_eq_o"
            elif sym[w] == "S":
                out[i] = "c_eq_s"
            elif sym[w] != "C":
                out[i] = "c_eq_n"
            elif len(doubles[w]) >= 2:
                centre_x = any(sym[x] != "C" for x in doubles[w])
                out[i] = "ketene_end" if centre_x else "allene_end"
            else:
                out[i] = "sp2_x" if hetero[i] or hetero[w] else "sp2"
        else:
            out[i] = "sp3_x" if hetero[i] else "sp3"
    return out


@dataclass(frozen=True, eq=True)
class CarbonKinds(Evidence):
    """Every carbon gets a 13C line its kind can reach (complete lists only).

    Used when the lines account for every carbon of the formula (their
    carbon counts, one per line unless ``(2C)`` is written, add up to it):
    then each carbon has a line of its own, at a shift its kind reaches
    (``data/c13_kinds.csv``: a C#C carbon 55-110 ppm, an allene centre
    185-235, a C=O carbon 140-245, a plain sp3 carbon below 72, ...) and
    with the H count the line's DEPT label gives.  A bipartite matching
    of carbons to line slots decides.  This is the converse of
    :class:`CarbonRegions` (which asks that each line find a carbon): it
    turns down alkynes, allenes and sp3 carbons the spectrum has no line
    for.

    ``lines``: (shift, carbons, attached_h or -1) per observed line.

    Examples
    --------
    >>> ev = CarbonKinds(lines=((206.6, 1, 0), (30.8, 2, 3)))
    >>> ev.reason(Graph.from_smiles("CC(C)=O")) is None
    True
    >>> ev.reason(Graph.from_smiles("C#CC"))  # doctest: +ELLIPSIS
    'has an alkyne carbon (C#C) with no heteroatom on either end (1 H), which needs a 13C line at 55-110 ppm labelled CH; ...'
    """

    lines: tuple[tuple[float, int, int], ...] = ()
    key = "c13-kinds"
    title = "a 13C line for every carbon"
    tier = 1
    relaxation = "13C line for every carbon"

    def describe(self) -> str:
        return ("every carbon has its own line in the complete 13C list, at a shift its kind reaches "
                "(C#C 55-110, C=C 85-185, C=O 140-245, plain sp3 below 72 ppm, ...) and with its DEPT label")

    @functools.cached_property
    def _slots(self) -> tuple[tuple[float, int], ...]:
        out: list[tuple[float, int]] = []
        for shift, n, h in self.lines:
            out += [(shift, h)] * max(1, n)
        return tuple(out)

    def reason(self, graph: Graph) -> str | None:
        kinds = carbon_kind_names(graph)
        table = carbon_kinds()
        slots = self._slots
        if len(kinds) != len(slots):
            return None  # not the structure's formula (checked elsewhere)
        options = []
        order = sorted(kinds)
        for i in order:
            k = table[kinds[i]]
            h = graph.hs[i]
            options.append([j for j, (s, lh) in enumerate(slots) if k.lo <= s <= k.hi and (lh < 0 or lh == h)])
        if _matching(options, len(slots)):
            return None
        return self._words(graph, kinds, order, options, table)

    def _words(self, graph: Graph, kinds: dict[int, str], order: list[int], options: list[list[int]],
               table: dict[str, Kind]) -> str:
        dept = all(lh >= 0 for _, lh in self._slots)
        for i, opts in zip(order, options):
            if not opts:
                k = table[kinds[i]]
                label = f" labelled {_DEPT_WORD[graph.hs[i]]}" if dept else ""
                return (f"has {k.words} ({graph.hs[i]} H), which needs a 13C line at {k.lo:g}-{k.hi:g} ppm{label}; "
                        "the complete list has none")
        # Hall's condition fails for a group of carbons of one kind and H count
        groups: dict[tuple[str, int], list[int]] = {}
        for idx, i in enumerate(order):
            groups.setdefault((kinds[i], graph.hs[i]), []).append(idx)
        for (kind, h), members in sorted(groups.items()):
            free = set().union(*(options[m] for m in members))
            if len(free) < len(members):
                k = table[kind]
                shifts = sorted({self._slots[j][0] for j in free}, reverse=True)
                return (f"has {len(members)} carbons of one kind ({k.words}, {h} H) needing 13C lines at "
                        f"{k.lo:g}-{k.hi:g} ppm, but only {len(free)} line slot(s) fit ({_fmt(shifts)})")
        return "its carbons cannot each be given a 13C line their kind and DEPT label allow"


@dataclass(frozen=True, eq=True)
class CarbonHCounts(Evidence):
    """How many carbons carry 3, 2, 1 and 0 H, from DEPT/APT labels.

    ``bounds``: ((h, lo, hi), ...).

    Examples
    --------
    >>> ev = CarbonHCounts(bounds=((3, 2, 2), (0, 1, 1)))
    >>> ev.reason(Graph.from_smiles("CC(C)=O")) is None
    True
    >>> ev.reason(Graph.from_smiles("CCC=O"))
    'DEPT shows 2 CH3 carbons; this structure has 1'
    """

    bounds: tuple[tuple[int, int, int], ...] = ()
    key = "dept"
    title = "carbon H counts from DEPT"
    tier = 2
    relaxation = "DEPT carbon counts"

    def describe(self) -> str:
        parts = []
        for h, lo, hi in self.bounds:
            parts.append(f"{lo} {_DEPT_WORD[h]}" if lo == hi else f"at least {lo} {_DEPT_WORD[h]}")
        return "carbons by attached H (DEPT): " + ", ".join(parts)

    def group_bounds(self) -> dict[int, tuple[int, int]]:
        return {h: (lo, hi) for h, lo, hi in self.bounds}

    def reason(self, graph: Graph) -> str | None:
        for h, lo, hi in self.bounds:
            have = sum(1 for c in graph.carbons() if graph.hs[c] == h)
            if have < lo or have > hi:
                shown = f"{lo}" if lo == hi or have < lo else f"at most {hi}"
                if have < lo and lo != hi:
                    shown = f"at least {lo}"
                return f"DEPT shows {shown} {_DEPT_WORD[h]} carbons; this structure has {have}"
        return None


@dataclass(frozen=True, eq=True)
class ProtonRegions(Evidence):
    """1H signals far downfield need H on unsaturated carbons (or on O/N/S).

    ``needs``: ((region index, H needed, shifts), ...) from the 1H list.

    Examples
    --------
    >>> ev = ProtonRegions(needs=((0, 5, (7.3,)),))
    >>> ev.reason(Graph.from_smiles("Cc1ccccc1")) is None
    True
    >>> ev.reason(Graph.from_smiles("CC1CCC=CC1")) is not None
    True
    """

    needs: tuple[tuple[int, int, tuple[float, ...]], ...] = ()
    key = "h1-regions"
    title = "1H shift regions"
    tier = 1
    relaxation = "1H shift-region rules"

    def describe(self) -> str:
        regions = proton_regions()
        return "; ".join(f"{h} H at {_fmt(list(s))} ppm need {regions[i].words}" for i, h, s in self.needs)

    def reason(self, graph: Graph) -> str | None:
        regions = proton_regions()
        flags = graph.flags()
        xh = sum(h for s, h in zip(graph.symbols, graph.hs) if s in _XH)
        for i, need, shifts in self.needs:
            test = _NEEDS[regions[i].needs]
            have = xh + sum(graph.hs[c] for c in graph.carbons() if test(flags[c]))
            if have < need:
                return (
                    f"the {need} H at {_fmt(list(shifts))} ppm need {regions[i].words}; "
                    f"this structure has {have} such H"
                )
        return None


@dataclass(frozen=True, eq=True)
class CommonRings(Evidence):
    """Rings of common size and without strain the first levels search.

    Every ring bond lies on a ring of at most ``max_ring`` atoms, and no
    triple bond or carbon with two double bonds lies in a ring.  Sources
    (common practice, from memory): cyclooctyne is the smallest cycloalkyne
    that can be kept in a bottle and smaller cyclic allenes exist only as
    reactive intermediates; unknowns with a ring of nine or more atoms
    (macrolides, macrocyclic musks, crown ethers) are rare next to rings of
    three to eight atoms.  It is a prior, not a reading of the data: the
    ladder drops it with the hard fragments and says so, and ``explain``
    names it.

    Examples
    --------
    >>> ev = CommonRings()
    >>> ev.reason(Graph.from_smiles("c1ccc2ccccc2c1")) is None
    True
    >>> ev.reason(Graph.from_smiles("C1CCCCCCCCC1"))
    'has a 10-membered ring (the first levels search rings of at most 8 atoms)'
    >>> ev.reason(Graph.from_smiles("C1CCC#CC1"))
    'has a triple bond in a 6-membered ring (cycloalkynes are strained; even cyclooctyne, the smallest that can be isolated, is a reactive reagent)'
    """

    max_ring: int = 8
    key = "rings"
    title = "common rings"
    tier = 2
    relaxation = "the common-ring rule (rings of at most 8 atoms, no triple bond or C=C=C in a ring)"

    def describe(self) -> str:
        return (f"every ring of at most {self.max_ring} atoms, "
                "no triple bond and no cumulated double bonds in a ring")

    def generator_options(self, options: Any) -> Any:
        from dataclasses import replace

        limit = self.max_ring if options.max_ring_size is None else min(options.max_ring_size, self.max_ring)
        # min_ring_triple above any ring size: no triple bond on a ring at all
        return replace(options, max_ring_size=limit, min_ring_triple=max(options.min_ring_triple, _NO_RING))

    def reason(self, graph: Graph) -> str | None:
        return _ring_reason(len(graph.symbols), graph.symbols, graph.edges, graph.orders, self.max_ring)

    def admits_structure(self, st: Any) -> bool:
        symbols = tuple(lab.symbol for lab in st.labels)
        return _ring_reason(len(symbols), symbols, st.edges, st.orders, self.max_ring) is None


#: a ring size no structure reaches (the generator's "triple bonds only in
#: rings of at least this size" becomes "in no ring")
_NO_RING = 1000


def _ring_reason(n: int, symbols: tuple[str, ...], edges: Any, orders: Any, max_ring: int) -> str | None:
    """Why the bonds break :class:`CommonRings` (smallest ring per bond by a
    breadth-first search with the bond taken out), or None."""
    adj = [0] * n
    for u, v in edges:
        adj[u] |= 1 << v
        adj[v] |= 1 << u
    ring_atoms = 0
    worst = 0
    for (u, v), o in zip(edges, orders):
        size = _smallest_ring(adj, u, v)
        if not size:
            continue
        ring_atoms |= 1 << u | 1 << v
        if o == 3:
            return (f"has a triple bond in a {size}-membered ring (cycloalkynes are strained; even cyclooctyne, "
                    "the smallest that can be isolated, is a reactive reagent)")
        worst = max(worst, size)
    if ring_atoms:
        doubles = [0] * n
        for (u, v), o in zip(edges, orders):
            if o == 2:
                doubles[u] += 1
                doubles[v] += 1
        for i in range(n):
            if ring_atoms >> i & 1 and doubles[i] >= 2 and symbols[i] == "C":
                return ("has cumulated double bonds at a ring carbon (cyclic allenes and ketenes of up to eight "
                        "ring atoms are reactive intermediates)")
    if worst > max_ring:
        return f"has a {worst}-membered ring (the first levels search rings of at most {max_ring} atoms)"
    if ring_atoms and sum(1 for o in orders if o == 2) >= 3:
        bridge = _bridged_benzene(n, adj, edges, orders, ring_atoms)
        if bridge == "ortho":
            return ("has a three-membered ring fused to a benzene-type ring (cyclopropabenzenes and "
                    "benzoxirenes are strained curiosities)")
        if bridge:
            return (f"has a benzene-type ring bridged across its {bridge} positions (fused rings share an ortho "
                    "pair; a short meta or para bridge is a strained cyclophane)")
    return None


#: most atoms in a bridge across meta or para ring positions that counts as
#: a strained cyclophane: [5]metacyclophane and [4]paracyclophane are
#: laboratory curiosities (common practice, from memory); the shortest
#: meta path around a peri-fused system is longer (acenaphthene 6, pyrene
#: and phenalene 7 atoms), and longer bridges make rings the ring-size
#: rule already weighs
_SHORT_BRIDGE = 5


def _bridged_benzene(n: int, adj: list[int], edges: Any, orders: Any, ring_atoms: int) -> str | None:
    """'meta' or 'para' when a six-ring with three ring double bonds (a
    benzene or azine ring in Kekulé form) has two non-adjacent atoms joined
    by a short path outside the ring, 'ortho' when a three-membered ring
    shares one of its bonds, else None.  Fused aromatics join an ortho pair
    by a path of at least two atoms (common practice)."""
    double = {(u, v) for (u, v), o in zip(edges, orders) if o == 2}
    double |= {(v, u) for u, v in double}
    for ring in _six_rings(n, [a & ring_atoms for a in adj]):
        bonds = [(ring[k], ring[(k + 1) % 6]) for k in range(6)]
        if sum(1 for b in bonds if b in double) != 3:
            continue
        inside = 0
        for a in ring:
            inside |= 1 << a
        # a three-membered ring sharing a bond with it (cyclopropabenzene,
        # benzoxirene: isolable at best as curiosities)
        if any(adj[u] & adj[v] & ~inside for u, v in bonds):
            return "ortho"
        for k in range(6):
            for gap, word in ((2, "meta"), (3, "para")):
                a, b = ring[k], ring[(k + gap) % 6]
                if gap == 3 and k >= 3:
                    continue
                if _joined_outside(adj, a, b, inside, _SHORT_BRIDGE):
                    return word
    return None


def _joined_outside(adj: list[int], a: int, b: int, inside: int, most: int) -> bool:
    """Is there a path a -> ... -> b of at most ``most`` inner atoms, all
    outside ``inside``?"""
    frontier = adj[a] & ~inside
    seen = frontier | inside
    depth = 1
    while frontier and depth <= most:
        nb = 0
        f = frontier
        while f:
            bit = f & -f
            i = bit.bit_length() - 1
            if adj[i] >> b & 1:
                return True
            nb |= adj[i]
            f ^= bit
        frontier = nb & ~seen
        seen |= frontier
        depth += 1
    return False


def _six_rings(n: int, adj: list[int]) -> list[tuple[int, ...]]:
    """Every simple cycle of six atoms, once each (smallest atom first)."""
    out = []
    for s in range(n):
        def walk(path: list[int], used: int) -> None:
            last = path[-1]
            if len(path) == 6:
                if adj[last] >> s & 1 and path[1] < path[5]:
                    out.append(tuple(path))
                return
            nb = adj[last] & ~used & ~((1 << (s + 1)) - 1)
            while nb:
                bit = nb & -nb
                i = bit.bit_length() - 1
                path.append(i)
                walk(path, used | bit)
                path.pop()
                nb ^= bit
        walk([s], 1 << s)
    return out


def _smallest_ring(adj: list[int], u: int, v: int) -> int:
    """Atoms in the smallest ring through bond u-v (0: a bridge)."""
    seen = 1 << u
    frontier = seen
    d = 0
    while frontier:
        d += 1
        nb = 0
        f = frontier
        while f:
            b = f & -f
            i = b.bit_length() - 1
            nb |= adj[i] if i != u else adj[i] & ~(1 << v)
            f ^= b
        nb &= ~seen
        if nb >> v & 1:
            return d + 1
        seen |= nb
        frontier = nb
    return 0


# --------------------------------------------------------------- reading


def read_evidence(problem: Problem) -> tuple[Evidence, ...]:
    """Every piece of hard evidence the problem's data carry, in a fixed order.

    Examples
    --------
    >>> from elucidate.parse import load_problem
    >>> p = load_problem(formula="C3H6O", h1="2.17 (s, 6H)", c13="206.6 (C), 30.8 (CH3)")
    >>> [e.key for e in read_evidence(p)]
    ['c13-lines', 'c13-regions', 'dept', 'rings']
    """
    out: list[Evidence] = []
    c13 = problem.c13
    if c13:
        out.append(CarbonLineCount(len(c13), bool(getattr(problem, "c13_complete", False))))
        lines = tuple((c.shift, c.carbons, -1 if c.attached_h is None else c.attached_h) for c in c13)
        out.append(CarbonRegions(lines))
        dept = _dept_bounds(problem)
        if dept:
            out.append(CarbonHCounts(dept))
        if sum(c.carbons for c in c13) == problem.formula["C"]:
            out.append(CarbonKinds(lines))
    needs = []
    for i, region in enumerate(proton_regions()):
        hits = [s for s in problem.h1 if s.shift_low >= region.lo]
        if hits:
            needs.append((i, sum(max(1, round(s.h_count)) for s in hits), tuple(s.shift for s in hits)))
    if needs:
        out.append(ProtonRegions(tuple(needs)))
    from elucidate.constrain.correlations import correlation_evidence

    out.extend(correlation_evidence(problem))
    out.append(CommonRings())
    return tuple(out)


def _dept_bounds(problem: Problem) -> tuple[tuple[int, int, int], ...]:
    """Carbons per H count from labelled lines: lower bounds; exact when
    every line is labelled and the lines account for every carbon."""
    labelled = [c for c in problem.c13 if c.attached_h is not None]
    if not labelled:
        return ()
    n_c = problem.formula["C"]
    every = len(labelled) == len(problem.c13) and sum(c.carbons for c in problem.c13) == n_c
    out = []
    for h in (3, 2, 1, 0):
        k = sum(c.carbons for c in labelled if c.attached_h == h)
        if every:
            out.append((h, k, k))
        elif k:
            out.append((h, k, n_c))
    return tuple(out)
