"""Put element labels and bond orders on a skeleton, one per symmetry orbit.

For one skeleton with automorphism group G, a *colouring* (a label per
vertex) is kept only when it is the lexicographically smallest of its
G-orbit; bond-order vectors on the edges are then kept only when they are
the smallest in their orbit under the stabiliser of the colouring.  Every
labelled, bond-ordered graph on this skeleton is so produced exactly once.

Kekulé partners (bond-order graphs that differ only by swapping single and
double bonds round an aromatic ring) are the same compound: such a graph is
kept only when it is the smallest, under the same stabiliser, among all
Kekulé forms with the same aromatic structure (checked with RDKit, and only
for graphs that have an alternating cycle at all).
"""

from __future__ import annotations

from dataclasses import dataclass
from operator import itemgetter
from typing import Callable, Iterator

from elucidate.generate.skeletons import Skeleton

__all__ = ["Label", "Problem", "Structure", "decorate", "structure_mol"]


@dataclass(frozen=True)
class Label:
    """What may sit on one skeleton vertex.

    Parameters
    ----------
    symbol : str
        Element symbol.
    charge : int
        Formal charge (charge-separated N+ / O- only).
    bs_lo, bs_hi : int
        Allowed range of the bond-order sum of the atom.
    valence : int
        H count = valence - bond-order sum.
    nh_sets : tuple of (frozenset of int or None)
        One entry per atom of this label from the caller's atom list: the
        allowed totals of H on bonded carbons (None: any).  Empty for a plain
        formula search.
    """

    symbol: str
    charge: int
    valence: int
    bs_lo: int
    bs_hi: int
    nh_sets: tuple[frozenset[int] | None, ...] = ()
    unit: int = -1  # fragment class for a gadget vertex, -1 for an atom
    port: int = -1  # port class of a gadget port vertex, -1 for a centre
    degree: int = -1  # exact degree required (gadget vertices), -1 any
    anchor: str = ""  # element of the fragment atom behind a port
    anchor_h: int = 0  # its H

    @property
    def is_unit(self) -> bool:
        return self.unit >= 0

    @property
    def fixed_h(self) -> int | None:
        if self.unit >= 0:
            return self.anchor_h if self.anchor == "C" else 0
        return self.valence - self.bs_lo if self.bs_lo == self.bs_hi else None

    @property
    def hetero(self) -> bool:
        if self.unit >= 0:
            return self.port >= 0 and self.anchor != "C"
        return self.symbol != "C"


@dataclass
class Problem:
    """One label multiset to place on skeletons.

    Parameters
    ----------
    labels : tuple of Label
        Distinct labels, sorted.
    counts : tuple of int
        How many vertices carry each label.
    total_bs : int
        Sum of bond-order sums over all atoms (twice the bond count, counting
        a double bond twice).
    """

    labels: tuple[Label, ...]
    counts: tuple[int, ...]
    total_bs: int

    @property
    def n(self) -> int:
        return sum(self.counts)

    @property
    def caps(self) -> tuple[int, ...]:
        out: list[int] = []
        for lab, k in zip(self.labels, self.counts):
            out += [lab.bs_hi] * k
        return tuple(sorted(out, reverse=True))


@dataclass
class Structure:
    """A finished labelled, bond-ordered graph."""

    labels: tuple[Label, ...]  # per vertex
    edges: tuple[tuple[int, int], ...]
    orders: tuple[int, ...]
    mol: object = None  # RDKit Mol if one was built on the way

    def hs(self) -> list[int]:
        bs = [0] * len(self.labels)
        for (u, v), o in zip(self.edges, self.orders):
            bs[u] += o
            bs[v] += o
        return [lab.valence - s for lab, s in zip(self.labels, bs)]


@dataclass
class Filters:
    """Options the decoration checks while it builds."""

    no_hetero_hetero: bool = False
    no_cumulenes: bool = False
    min_ring_triple: int = 0


def decorate(
    sk: Skeleton,
    prob: Problem,
    filters: Filters,
    visit: list[int],
    colour_hook: Callable[[tuple[int, ...]], None] | None = None,
) -> Iterator[Structure]:
    """Every structure on this skeleton, one per orbit, Kekulé partners merged.

    Parameters
    ----------
    sk : Skeleton
    prob : Problem
    filters : Filters
    visit : list of int
        ``visit[0]`` is incremented per partial structure examined.
    """
    n = sk.n
    edges = sk.edges
    m = len(edges)
    extra_total2 = prob.total_bs - 2 * m
    if extra_total2 < 0 or extra_total2 % 2:
        return
    extra_total = extra_total2 // 2
    deg = sk.degrees
    labels = prob.labels
    nl = len(labels)
    # candidate labels per vertex
    cands = [
        [i for i in range(nl) if labels[i].bs_hi >= deg[v] and labels[i].bs_lo <= 3 * deg[v]]
        for v in range(n)
    ]
    nbrs = [[w for w in range(n) if sk.adj[v] >> w & 1] for v in range(n)]
    # vertices whose neighbourhood is fully coloured once vertex t is coloured
    close_at: list[list[int]] = [[] for _ in range(n)]
    for v in range(n):
        close_at[max([v, *nbrs[v]])].append(v)
    nh_union: list[frozenset[int] | None] = []
    for lab in labels:
        if not lab.nh_sets or any(s is None for s in lab.nh_sets):
            nh_union.append(None)
        else:
            u: frozenset[int] = frozenset()
            for s in lab.nh_sets:
                u |= s  # type: ignore[operator]
            nh_union.append(u)
    need_nh = any(x is not None for x in nh_union)
    carbon_h = [
        (lab.fixed_h if lab.symbol == "C" and lab.fixed_h is not None else 0) for lab in labels
    ]
    nplus = [i for i, lab in enumerate(labels) if lab.symbol == "N" and lab.charge == 1]
    ominus = [i for i, lab in enumerate(labels) if lab.symbol == "O" and lab.charge == -1]
    charge_sep = bool(nplus or ominus)
    counts = list(prob.counts)
    colour = [0] * n
    group = sk.group
    gperm = [itemgetter(*p) for p in group[1:]] if n > 1 else []

    def colour_ok(t: int) -> bool:
        for v in close_at[t]:
            lv = colour[v]
            if need_nh and nh_union[lv] is not None:
                s = 0
                for w in nbrs[v]:
                    s += carbon_h[colour[w]]
                if s not in nh_union[lv]:  # type: ignore[operator]
                    return False
            if charge_sep:
                if lv in ominus:
                    if colour[nbrs[v][0]] not in nplus:
                        return False
                elif lv in nplus:
                    if sum(1 for w in nbrs[v] if colour[w] in ominus) != 1:
                        return False
        return True

    def colourings(t: int) -> Iterator[tuple[int, ...]]:
        if t == n:
            yield tuple(colour)
            return
        for i in cands[t]:
            if counts[i]:
                visit[0] += 1
                counts[i] -= 1
                colour[t] = i
                if colour_ok(t):
                    yield from colourings(t + 1)
                counts[i] += 1

    # bond-order search data
    inc_last = [-1] * n
    for j, (u, v) in enumerate(edges):
        inc_last[u] = j
        inc_last[v] = j
    closes: list[list[int]] = [[] for _ in range(m)]
    for v in range(n):
        if inc_last[v] >= 0:
            closes[inc_last[v]].append(v)
    eu = [u for u, _ in edges]
    ev = [v for _, v in edges]
    small_ring = [False] * m
    if filters.min_ring_triple:
        small_ring = [0 < r < filters.min_ring_triple for r in sk.edge_smallest_ring]
    edge_index = {e: j for j, e in enumerate(edges)}

    for c in colourings(0):
        if any(p(c) < c for p in gperm):
            continue
        if need_nh and not _nh_matching(c, labels, nbrs, carbon_h):
            continue
        stab = [g for g in group[1:] if all(c[g[i]] == c[i] for i in range(n))]
        eperm = [
            itemgetter(*[edge_index[(min(g[u], g[v]), max(g[u], g[v]))] for u, v in edges])
            for g in stab
        ] if m > 1 else []
        if colour_hook is not None:
            colour_hook(c)
        vlabels = tuple(labels[i] for i in c)
        lo = [max(0, lab.bs_lo - deg[v]) for v, lab in enumerate(vlabels)]
        hi = [lab.bs_hi - deg[v] for v, lab in enumerate(vlabels)]
        if sum(lo) > 2 * extra_total or sum(hi) < 2 * extra_total:
            continue
        het = [lab.hetero for lab in vlabels]
        isc = [lab.symbol == "C" for lab in vlabels]
        chg = [lab.charge for lab in vlabels]
        for x in _bond_orders(
            m, eu, ev, closes, lo, hi, extra_total, het, isc, chg, small_ring, filters, visit
        ):
            if eperm and any(p(x) < x for p in eperm):
                continue
            orders = tuple(o + 1 for o in x)
            st = Structure(vlabels, edges, orders)
            if 1 in x and _may_have_partner(sk, x):
                if not _kekule_canonical(st, x, eperm, filters):
                    continue
            yield st


def _bond_orders(
    m: int,
    eu: list[int],
    ev: list[int],
    closes: list[list[int]],
    lo: list[int],
    hi: list[int],
    total: int,
    het: list[bool],
    isc: list[bool],
    chg: list[int],
    small_ring: list[bool],
    filters: Filters,
    visit: list[int],
) -> Iterator[tuple[int, ...]]:
    """Extra bond order (0, 1, 2) per edge; sums per vertex within [lo, hi]."""
    cur = [0] * len(lo)
    dbl = [0] * len(lo)
    x = [0] * m
    nohet = filters.no_hetero_hetero
    nocum = filters.no_cumulenes
    if m == 0:
        if total == 0 and all(lv <= 0 for lv in lo):
            yield ()
        return

    def rec(j: int, left: int) -> Iterator[tuple[int, ...]]:
        if j == m:
            if left == 0:
                yield tuple(x)
            return
        u = eu[j]
        v = ev[j]
        top = min(2, left, hi[u] - cur[u], hi[v] - cur[v])
        if left > 2 * (m - j):
            return
        for o in range(top + 1):
            visit[0] += 1
            if o == 0 and nohet and het[u] and het[v] and not (chg[u] and chg[v]):
                continue
            if o == 2 and small_ring[j]:
                continue
            cur[u] += o
            cur[v] += o
            if o == 1:
                dbl[u] += 1
                dbl[v] += 1
            ok = True
            for w in closes[j]:
                if cur[w] < lo[w] or (nocum and isc[w] and dbl[w] > 1):
                    ok = False
                    break
            if ok:
                x[j] = o
                yield from rec(j + 1, left - o)
            cur[u] -= o
            cur[v] -= o
            if o == 1:
                dbl[u] -= 1
                dbl[v] -= 1
        x[j] = 0

    yield from rec(0, total)


def _nh_matching(
    c: tuple[int, ...],
    labels: tuple[Label, ...],
    nbrs: list[list[int]],
    carbon_h: list[int],
) -> bool:
    """Can the caller's atoms be matched to vertices so that every neighbour-H
    set holds?  (Atoms with the same element and H but different sets.)"""
    for li, lab in enumerate(labels):
        sets = lab.nh_sets
        if not sets or len(set(sets)) == 1:
            continue
        sums = [sum(carbon_h[c[w]] for w in nbrs[v]) for v in range(len(c)) if c[v] == li]
        if not _bipartite(sums, sets):
            return False
    return True


def _bipartite(sums: list[int], sets: tuple[frozenset[int] | None, ...]) -> bool:
    match: dict[int, int] = {}  # set index -> vertex index

    def try_v(i: int, seen: set[int]) -> bool:
        for k, s in enumerate(sets):
            if k in seen or not (s is None or sums[i] in s):
                continue
            seen.add(k)
            if k not in match or try_v(match[k], seen):
                match[k] = i
                return True
        return False

    return all(try_v(i, set()) for i in range(len(sums)))


def _may_have_partner(sk: Skeleton, x: tuple[int, ...]) -> bool:
    """Necessary condition for a Kekulé partner: an alternating cycle of
    ring double bonds and ring single bonds may exist."""
    ring = sk.ring_edges
    edges = sk.edges
    dmask = [0] * sk.n
    smask = [0] * sk.n
    nd = 0
    for j, (u, v) in enumerate(edges):
        if not ring[j]:
            continue
        if x[j] == 1:
            dmask[u] |= 1 << v
            dmask[v] |= 1 << u
            nd += 1
        elif x[j] == 0:
            smask[u] |= 1 << v
            smask[v] |= 1 << u
    if nd < 2:
        return False
    alive = 0
    for v in range(sk.n):
        if dmask[v]:
            alive |= 1 << v
    changed = True
    while changed:
        changed = False
        a = alive
        while a:
            b = a & -a
            v = b.bit_length() - 1
            a ^= b
            if not (dmask[v] & alive) or not (smask[v] & alive):
                alive &= ~b
                changed = True
    return alive != 0


def structure_mol(st: Structure):  # type: ignore[no-untyped-def]
    """RDKit molecule (sanitised, aromatic perceived) of a structure; atom i is
    vertex i and bond j is edge j."""
    from rdkit import Chem

    if st.mol is not None:
        return st.mol
    bt = (None, Chem.BondType.SINGLE, Chem.BondType.DOUBLE, Chem.BondType.TRIPLE)
    rw = Chem.RWMol()
    for lab, h in zip(st.labels, st.hs()):
        a = Chem.Atom(lab.symbol)
        a.SetNoImplicit(True)
        a.SetNumExplicitHs(h)
        if lab.charge:
            a.SetFormalCharge(lab.charge)
        rw.AddAtom(a)
    for (u, v), o in zip(st.edges, st.orders):
        rw.AddBond(u, v, bt[o])
    mol = rw.GetMol()
    Chem.SanitizeMol(mol)
    st.mol = mol
    return mol


def _kekule_canonical(
    st: Structure, x: tuple[int, ...], eperm: list, filters: Filters  # type: ignore[type-arg]
) -> bool:
    """Is this bond-order graph the smallest of its Kekulé class?  Forms the
    filters would reject are never built, so they do not count."""
    from rdkit import Chem

    mol = structure_mol(st)
    arom = [j for j, b in enumerate(mol.GetBonds()) if b.GetIsAromatic()]
    if len(arom) < 2:
        return True
    # doubles needed per atom inside the aromatic bond set
    need: dict[int, int] = {}
    for j in arom:
        u, v = st.edges[j]
        need.setdefault(u, 0)
        need.setdefault(v, 0)
        if x[j] == 1:
            need[u] += 1
            need[v] += 1
    smiles = None
    for alt in _kekule_forms(st.edges, arom, need):
        y = list(x)
        for j, d in zip(arom, alt):
            y[j] = d
        yt = tuple(y)
        if yt == x:
            continue
        if filters.no_hetero_hetero and any(
            yt[j] == 0 and st.labels[st.edges[j][0]].hetero and st.labels[st.edges[j][1]].hetero
            for j in arom
        ):
            continue
        canon = min([yt, *(p(yt) for p in eperm)])
        if canon < x:
            # a smaller form exists; merge only if it really is the same compound
            if smiles is None:
                smiles = Chem.MolToSmiles(mol)
            other = Structure(st.labels, st.edges, tuple(o + 1 for o in yt))
            if Chem.MolToSmiles(structure_mol(other)) == smiles:
                return False
    return True


def _kekule_forms(
    edges: tuple[tuple[int, int], ...], arom: list[int], need: dict[int, int]
) -> Iterator[tuple[int, ...]]:
    """All 0/1 (single/double) choices on the aromatic bonds meeting ``need``."""
    k = len(arom)
    last: dict[int, int] = {}
    for i, j in enumerate(arom):
        u, v = edges[j]
        last[u] = i
        last[v] = i
    cur = dict.fromkeys(need, 0)
    choice = [0] * k

    def rec(i: int) -> Iterator[tuple[int, ...]]:
        if i == k:
            yield tuple(choice)
            return
        u, v = edges[arom[i]]
        for d in (0, 1):
            if d and (cur[u] >= need[u] or cur[v] >= need[v]):
                continue
            cur[u] += d
            cur[v] += d
            if (last[u] != i or cur[u] == need[u]) and (last[v] != i or cur[v] == need[v]):
                choice[i] = d
                yield from rec(i + 1)
            cur[u] -= d
            cur[v] -= d

    yield from rec(0)
