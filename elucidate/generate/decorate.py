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

import functools
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
    skeleton: Skeleton | None = None  # set when vertex order = skeleton order

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
    counting: bool = False,
    tick: Callable[[], None] | None = None,
) -> Iterator[tuple[tuple[Label, ...], list[tuple[int, ...]]]]:
    """Every structure on this skeleton, one per orbit, Kekulé partners merged.

    Yields, per colouring, the vertex labels and the list of extra-bond-order
    vectors (bond order - 1 per edge, edges in ``sk.edges`` order); with
    ``counting``, the number of them instead of the list.

    Parameters
    ----------
    sk : Skeleton
    prob : Problem
    filters : Filters
    visit : list of int
        ``visit[0]`` is incremented per partial structure examined.
    colour_hook : callable, optional
        Called with each colouring that reaches bond orders.
    counting : bool
        Yield counts instead of lists where no per-structure work is needed.
    tick : callable, optional
        Called every few thousand partial structures; may raise to stop
        (the time limit).
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
        [
            i
            for i in range(nl)
            if (labels[i].degree == deg[v])
            or (labels[i].degree < 0 and labels[i].bs_hi >= deg[v] and labels[i].bs_lo <= 3 * deg[v])
        ]
        for v in range(n)
    ]
    nbrs = sk.nbrs
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
    # H on carbon per label; a fragment port stands for its anchor atom (a
    # carbon anchor such as the CH of *[CH]=[CH]* carries its H)
    carbon_h = [
        (lab.fixed_h if (lab.symbol == "C" or lab.is_unit) and lab.fixed_h is not None else 0) for lab in labels
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

    # one bond-order search per skeleton, inside the envelope of all colourings
    # exact bond-order sums (every atom's H fixed): solve bond orders first and
    # let the colouring follow only prefixes of feasible per-vertex sums
    exact = all(lab.bs_lo == lab.bs_hi for lab in labels)
    trie: dict = {}  # type: ignore[type-arg]
    xs: list[tuple[int, ...]] = []
    vs: list[tuple[int, ...]] = []
    if exact:
        if any(not cands[v] for v in range(n)):
            return
        lo_env = [min(labels[i].bs_lo - deg[v] for i in cands[v]) for v in range(n)]
        hi_env = [max(labels[i].bs_hi - deg[v] for i in cands[v]) for v in range(n)]
        lo_env = [max(0, x) for x in lo_env]
        if sum(lo_env) > 2 * extra_total or sum(hi_env) < 2 * extra_total:
            return
        allowed_ext = [0] * n
        for v in range(n):
            for i in cands[v]:
                e0 = labels[i].bs_lo - deg[v]
                if e0 >= 0:
                    allowed_ext[v] |= 1 << e0
        avail = [0] * (max(lab.bs_lo for lab in labels) + 1)
        for lab, k in zip(labels, prob.counts):
            avail[lab.bs_lo] += k
        xs, vs = _solutions(m, eu, ev, closes, lo_env, hi_env, extra_total, small_ring, visit, tick,
                            (allowed_ext, list(deg), avail))
        if not xs:
            return
        # the feasible per-vertex sums as a trie: vertex t's sum -> the rest
        for vsum in vs:
            node = trie
            for e0 in vsum:
                nxt = node.get(e0)
                if nxt is None:
                    nxt = node[e0] = {}
                node = nxt
    reps: list[tuple[int, ...]] = []
    units = any(lab.is_unit for lab in labels)
    check = need_nh or charge_sep
    nvis = 0

    def colourings(t: int, node: dict | None = None) -> None:  # type: ignore[type-arg]
        nonlocal nvis
        nxt: dict | None = None  # type: ignore[type-arg]
        for i in cands[t]:
            if counts[i]:
                nvis += 1
                if tick is not None and not nvis & 4095:
                    tick()
                colour[t] = i
                if exact:
                    nxt = node.get(labels[i].bs_lo - deg[t])  # type: ignore[union-attr]
                    if nxt is None:
                        continue
                if check and not colour_ok(t):
                    continue
                if t + 1 == n:
                    c = tuple(colour)
                    if gperm and any(p(c) < c for p in gperm):
                        continue
                    if need_nh and not _nh_matching(c, labels, nbrs, carbon_h):
                        continue
                    if units and not gadget_ok(c, labels, nbrs):
                        continue
                    reps.append(c)
                else:
                    counts[i] -= 1
                    colourings(t + 1, nxt)
                    counts[i] += 1

    colourings(0, trie)
    visit[0] += nvis
    if not reps:
        return

    if exact:
        pass
    elif len(reps) == 1:
        c0 = reps[0]
        lo_env = [max(0, labels[c0[v]].bs_lo - deg[v]) for v in range(n)]
        hi_env = [labels[c0[v]].bs_hi - deg[v] for v in range(n)]
    else:
        seen_at = [0] * n  # bitmask of label indices seen per vertex
        for c in reps:
            for v in range(n):
                seen_at[v] |= 1 << c[v]
        lo_env = []
        hi_env = []
        for v in range(n):
            idx = [i for i in range(nl) if seen_at[v] >> i & 1]
            lo_env.append(min(max(0, labels[i].bs_lo - deg[v]) for i in idx))
            hi_env.append(max(labels[i].bs_hi - deg[v] for i in idx))
    if not exact:
        if sum(lo_env) > 2 * extra_total or sum(hi_env) < 2 * extra_total:
            return
        xs, vs = _solutions(m, eu, ev, closes, lo_env, hi_env, extra_total, small_ring, visit, tick)
        if not xs:
            return
    index: dict[tuple[int, ...], list[int]] | None = None
    if exact:
        index = {}
        for k, vsum in enumerate(vs):
            index.setdefault(vsum, []).append(k)
    lohi = [[(lab.bs_lo - deg[v], lab.bs_hi - deg[v]) for v in range(n)] for lab in labels]
    nohet = filters.no_hetero_hetero
    nocum = filters.no_cumulenes
    # solutions that may have a Kekulé partner (independent of the colouring)
    # (an alternating cycle needs a cycle: trees never qualify)
    ring_idx = list(range(m)) if m >= n and not units else []
    flagged: set[int] | _LazyFlags = set()
    if ring_idx and exact:
        flagged = _LazyFlags(sk, xs, ring_idx)  # most solutions fit no colouring
    elif ring_idx:
        for k, x in enumerate(xs):
            if 1 in x and _may_have_partner(sk, x, ring_idx):
                flagged.add(k)  # type: ignore[union-attr]
    all_idx = range(len(xs))
    eperm_cache: dict[int, object] = {}
    gfull = group[1:]
    if not exact and not nohet and not nocum:
        yield from _by_masks(
            reps, xs, vs, lohi, lo_env, hi_env, flagged, gperm, gfull, edges, edge_index,
            labels, filters, colour_hook, counting, tick,
        )
        return
    for c in reps:
        if index is not None:
            cand = index.get(tuple(max(0, lohi[c[v]][v][0]) for v in range(n)), [])
        else:
            narrow = []
            for v in range(n):
                lv, hv = lohi[c[v]][v]
                if lv > lo_env[v] or hv < hi_env[v]:
                    narrow.append((v, lv, hv))
            if not narrow:
                cand = all_idx  # type: ignore[assignment]
            elif len(narrow) == 1:
                v, lv, hv = narrow[0]
                cand = [k for k, vsum in enumerate(vs) if lv <= vsum[v] <= hv]
            else:
                cand = [
                    k for k, vsum in enumerate(vs)
                    if all(lv <= vsum[v] <= hv for v, lv, hv in narrow)
                ]
        if not cand:
            continue
        if colour_hook is not None:
            colour_hook(c)
        vlabels = tuple(labels[i] for i in c)
        eperm = []
        if gperm:
            for gi, p in enumerate(gperm):
                if p(c) == c:
                    ep = eperm_cache.get(gi)
                    if ep is None:
                        g = gfull[gi]
                        ep = eperm_cache[gi] = itemgetter(
                            *[edge_index[(min(g[u], g[v]), max(g[u], g[v]))] for u, v in edges]
                        ) if m > 1 else None
                    if ep is not None:
                        eperm.append(ep)
        simple = not (nohet or nocum or eperm)
        if simple and counting:
            k = len(cand)
            fl = [i for i in cand if i in flagged] if flagged else []
            for i in fl:
                if tick is not None:
                    tick()
                x = xs[i]
                st = Structure(vlabels, edges, tuple(o + 1 for o in x))
                if not _kekule_canonical(st, x, eperm, filters):
                    k -= 1
            if k:
                yield vlabels, k  # type: ignore[misc]
            continue
        hh: list[int] = []
        if nohet:
            hh = [
                j
                for j, (u, v) in enumerate(edges)
                if vlabels[u].hetero and vlabels[v].hetero and not (vlabels[u].charge and vlabels[v].charge)
            ]
        carbons = [v for v in range(n) if vlabels[v].symbol == "C"] if nocum else []
        out = []
        for i in cand:
            x = xs[i]
            if hh and not all(x[j] for j in hh):
                continue
            if carbons and _cumulated(x, edges, carbons):
                continue
            if eperm and any(p(x) < x for p in eperm):  # type: ignore[operator]
                continue
            if i in flagged:
                if tick is not None:
                    tick()
                st = Structure(vlabels, edges, tuple(o + 1 for o in x))
                if not _kekule_canonical(st, x, eperm, filters):
                    continue
            out.append(x)
        if out:
            yield vlabels, (len(out) if counting else out)  # type: ignore[misc]


class _LazyFlags:
    """``k in flags``: may solution k have a Kekulé partner?  Decided on first
    asking and remembered."""

    def __init__(self, sk: Skeleton, xs: list[tuple[int, ...]], ring_idx: list[int]) -> None:
        self.sk, self.xs, self.ring_idx = sk, xs, ring_idx
        self.known: dict[int, bool] = {}

    def __bool__(self) -> bool:
        return True

    def __contains__(self, k: int) -> bool:
        got = self.known.get(k)
        if got is None:
            x = self.xs[k]
            got = self.known[k] = 1 in x and _may_have_partner(self.sk, x, self.ring_idx)
        return got


def _mask(bits: Iterator[bool] | list[bool]) -> int:
    """A bitset (bit k set when item k is true) in linear time."""
    text = "".join(["1" if b else "0" for b in bits])
    return int(text[::-1], 2) if text else 0


def _members(mask: int) -> list[int]:
    """Indices of the set bits of ``mask``, ascending."""
    text = bin(mask)[:1:-1]
    return [i for i, ch in enumerate(text) if ch == "1"]


def _by_masks(
    reps: list[tuple[int, ...]],
    xs: list[tuple[int, ...]],
    vs: list[tuple[int, ...]],
    lohi: list[list[tuple[int, int]]],
    lo_env: list[int],
    hi_env: list[int],
    flagged: set[int],
    gperm: list,  # type: ignore[type-arg]
    gfull: list[tuple[int, ...]],
    edges: tuple[tuple[int, int], ...],
    edge_index: dict[tuple[int, int], int],
    labels: tuple[Label, ...],
    filters: Filters,
    colour_hook: Callable[[tuple[int, ...]], None] | None,
    counting: bool,
    tick: Callable[[], None] | None,
) -> Iterator[tuple[tuple[Label, ...], list[tuple[int, ...]]]]:
    """The per-colouring part of :func:`decorate` with the solutions as
    bitsets: a colouring's solutions are the AND of one set per vertex whose
    bond-order range it narrows, and of one set per automorphism fixing it
    (the solutions that are not larger than their image), each set built
    once per skeleton and not once per colouring.  Same output, same order.
    """
    nx = len(xs)
    full = (1 << nx) - 1
    m = len(edges)
    by_range: dict[tuple[int, int, int], int] = {}
    notless: dict[tuple[int, ...], int] = {}
    eperms: dict[int, object] = {}
    flag_mask = _mask([k in flagged for k in range(nx)]) if flagged else 0
    n = len(lo_env)
    for c in reps:
        mask = full
        for v in range(n):
            lv, hv = lohi[c[v]][v]
            if lv > lo_env[v] or hv < hi_env[v]:
                key = (v, lv, hv)
                mv = by_range.get(key)
                if mv is None:
                    mv = by_range[key] = _mask([lv <= vsum[v] <= hv for vsum in vs])
                mask &= mv
                if not mask:
                    break
        if not mask:
            continue
        if colour_hook is not None:
            colour_hook(c)
        vlabels = tuple(labels[i] for i in c)
        eperm = []
        if gperm and m > 1:
            stab = []
            for gi, p in enumerate(gperm):
                if p(c) != c:
                    continue
                ep = eperms.get(gi)
                if ep is None:
                    g = gfull[gi]
                    ep = eperms[gi] = itemgetter(
                        *[edge_index[(min(g[u], g[v]), max(g[u], g[v]))] for u, v in edges]
                    )
                eperm.append(ep)
                stab.append(gi)
            if eperm:
                # solutions no automorphism fixing c makes smaller; one set per
                # stabiliser (colourings often share one), or just this one's
                if len(reps) == 1:
                    keep = [False] * nx
                    for i in _members(mask):
                        x = xs[i]
                        keep[i] = not any(ep(x) < x for ep in eperm)  # type: ignore[operator]
                    mask &= _mask(keep)
                else:
                    skey = tuple(stab)
                    nl_mask = notless.get(skey)
                    if nl_mask is None:
                        nl_mask = notless[skey] = _mask(
                            [not any(ep(x) < x for ep in eperm) for x in xs]  # type: ignore[operator]
                        )
                    mask &= nl_mask
        if not mask:
            continue
        fl = mask & flag_mask
        if counting:
            k = mask.bit_count()
            for i in _members(fl) if fl else ():
                if tick is not None:
                    tick()
                x = xs[i]
                if not _kekule_canonical(Structure(vlabels, edges, tuple(o + 1 for o in x)), x, eperm, filters):
                    k -= 1
            if k:
                yield vlabels, k  # type: ignore[misc]
            continue
        out = []
        for i in _members(mask):
            x = xs[i]
            if fl >> i & 1:
                if tick is not None:
                    tick()
                if not _kekule_canonical(Structure(vlabels, edges, tuple(o + 1 for o in x)), x, eperm, filters):
                    continue
            out.append(x)
        if out:
            yield vlabels, out


def gadget_ok(c: tuple[int, ...], labels: tuple[Label, ...], nbrs: list[list[int]]) -> bool:
    """Do the gadget vertices of a colouring form whole fragments?"""
    for v, li in enumerate(c):
        lab = labels[li]
        if not lab.is_unit:
            continue
        if lab.port < 0:  # centre: neighbours are its own ports, right classes
            for w in nbrs[v]:
                lw = labels[c[w]]
                if lw.unit != lab.unit or lw.port < 0 or lw.degree != 2:
                    return False
        elif lab.degree == 2:  # port of a multi-port fragment
            centres = [w for w in nbrs[v] if labels[c[w]].is_unit and labels[c[w]].port < 0]
            if len(centres) != 1 or labels[c[centres[0]]].unit != lab.unit:
                return False
            other = [w for w in nbrs[v] if w != centres[0]][0]
            lo = labels[c[other]]
            if lo.is_unit and lo.unit == lab.unit and lo.degree == 2 and centres[0] in nbrs[other]:
                return False  # both ends in one fragment
        else:  # one-port fragment: its neighbour is not a centre
            w = nbrs[v][0]
            if labels[c[w]].is_unit and labels[c[w]].port < 0:
                return False
    return True



def _cumulated(x: tuple[int, ...], edges: tuple[tuple[int, int], ...], carbons: list[int]) -> bool:
    dbl: dict[int, int] = {}
    for j, o in enumerate(x):
        if o == 1:
            u, v = edges[j]
            dbl[u] = dbl.get(u, 0) + 1
            dbl[v] = dbl.get(v, 0) + 1
    return any(dbl.get(v, 0) > 1 for v in carbons)


def _solutions(
    m: int,
    eu: list[int],
    ev: list[int],
    closes: list[list[int]],
    lo: list[int],
    hi: list[int],
    total: int,
    small_ring: list[bool],
    visit: list[int],
    tick: Callable[[], None] | None = None,
    exact: tuple[list[int], list[int], list[int]] | None = None,
) -> tuple[list[tuple[int, ...]], list[tuple[int, ...]]]:
    """Every extra-bond-order vector (0, 1, 2 per edge) with per-vertex sums
    within [lo, hi] and ``total`` in all; with the per-vertex sums.

    ``exact`` = (allowed, base, avail) for atoms with fixed H: vertex w may
    end with sum s only if ``allowed[w] >> s & 1``, its atom's bond-order
    sum is then ``base[w] + s``, and ``avail[b]`` atoms have sum b (the sums
    of all vertices must form that multiset)."""
    xs: list[tuple[int, ...]] = []
    vs: list[tuple[int, ...]] = []
    cur = [0] * len(lo)
    x = [0] * m
    if m == 0:
        if total == 0 and all(lv <= 0 for lv in lo):
            xs.append(())
            vs.append(tuple(cur))
        return xs, vs
    count = 0
    n = len(lo)
    if exact is None:
        # no per-atom sums to meet: the plain search (its nodes are cheapest)
        def rec0(j: int, left: int) -> None:
            nonlocal count
            if j == m:
                if left == 0:
                    xs.append(tuple(x))
                    vs.append(tuple(cur))
                return
            if left > 2 * (m - j):
                return
            u = eu[j]
            v = ev[j]
            top = min(2, left, hi[u] - cur[u], hi[v] - cur[v])
            cl = closes[j]
            for o in range(top + 1):
                count += 1
                if tick is not None and not count & 4095:
                    tick()
                if o == 2 and small_ring[j]:
                    continue
                cur[u] += o
                cur[v] += o
                for w in cl:
                    if cur[w] < lo[w]:
                        break
                else:
                    x[j] = o
                    rec0(j + 1, left - o)
                cur[u] -= o
                cur[v] -= o
            x[j] = 0

        rec0(0, total)
        visit[0] += count
        return xs, vs
    # vertex capacity still open (vertices whose last edge is not yet set):
    # the extra units left use exactly twice their number of it, and must
    # cover what the open vertices still need
    has_edge = [False] * n
    for j in range(m):
        has_edge[eu[j]] = has_edge[ev[j]] = True
    if any(lo[w] > 0 for w in range(n) if not has_edge[w]):
        return xs, vs
    cap0 = sum(hi[w] for w in range(n) if has_edge[w])
    allowed: list[int] | None = None
    if exact is not None:
        allowed, base, avail = exact[0], exact[1], list(exact[2])
    need0 = sum(max(0, lo[w]) for w in range(n) if has_edge[w])

    def rec(j: int, left: int, capo: int, needo: int) -> None:
        nonlocal count
        if j == m:
            if left == 0:
                xs.append(tuple(x))
                vs.append(tuple(cur))
            return
        u = eu[j]
        v = ev[j]
        cu = cur[u]
        cv = cur[v]
        top = min(2, left, hi[u] - cu, hi[v] - cv)
        cl = closes[j]
        gu = lo[u] - cu
        gv = lo[v] - cv
        for o in range(top + 1):
            count += 1
            if tick is not None and not count & 4095:
                tick()
            if o == 2 and small_ring[j]:
                continue
            if left - o > 2 * (m - j - 1):
                continue
            rest2 = 2 * (left - o)
            need = needo
            if gu > 0:
                need -= o if o < gu else gu
            if gv > 0:
                need -= o if o < gv else gv
            if need > rest2:
                continue
            cap = capo - 2 * o
            cur[u] = cu + o
            cur[v] = cv + o
            if allowed is None:
                for w in cl:
                    if cur[w] < lo[w]:
                        break
                    cap -= hi[w] - cur[w]
                else:
                    if rest2 <= cap:
                        x[j] = o
                        rec(j + 1, left - o, cap, need)
                continue
            # exact sums: a closed vertex takes one atom whose bond-order sum
            # it now has, from the multiset of those still free
            taken = []
            for w in cl:
                cw = cur[w]
                if cw < lo[w] or not allowed[w] >> cw & 1:
                    break
                b = base[w] + cw
                if not avail[b]:
                    break
                avail[b] -= 1
                taken.append(b)
                cap -= hi[w] - cw
            else:
                if rest2 <= cap:
                    x[j] = o
                    rec(j + 1, left - o, cap, need)
            for b in taken:
                avail[b] += 1
        cur[u] = cu
        cur[v] = cv
        x[j] = 0

    rec(0, total, cap0, need0)
    visit[0] += count
    return xs, vs


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


def _may_have_partner(sk: Skeleton, x: tuple[int, ...], ring_idx: list[int]) -> bool:
    """Necessary condition for a Kekulé partner: an alternating cycle of
    ring double bonds and ring single bonds may exist (peel away atoms that
    lack a ring double or a ring single bond to a remaining atom)."""
    edges = sk.edges
    n = sk.n
    dmask = [0] * n
    smask = [0] * n
    nd = 0
    for j in ring_idx:
        o = x[j]
        if o == 1:
            u, v = edges[j]
            dmask[u] |= 1 << v
            dmask[v] |= 1 << u
            nd += 1
        elif o == 0:
            u, v = edges[j]
            smask[u] |= 1 << v
            smask[v] |= 1 << u
    if nd < 2:
        return False
    alive = 0
    for v in range(n):
        if dmask[v] and smask[v]:
            alive |= 1 << v
    if alive.bit_count() < 4:  # an alternating cycle has at least four atoms
        return False
    changed = True
    while changed and alive:
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


_BOND_SYMBOL = ("", "", "=", "#")


@functools.cache
def _atom_token(symbol: str, h: int, charge: int) -> str:
    hs = "" if h == 0 else ("H" if h == 1 else f"H{h}")
    ch = "" if charge == 0 else ("+" if charge == 1 else "-" if charge == -1 else f"{charge:+d}")
    return f"[{symbol}{hs}{ch}]"


@functools.cache
def _tokens(lab: Label) -> tuple[str, ...]:
    return tuple(_atom_token(lab.symbol, h, lab.charge) for h in range(9))


# one-slot cache: (labels tuple, per-vertex (token table, valence))
_LAST_LABELS: list = [None, None]  # type: ignore[type-arg]


def structure_smiles(st: Structure) -> str:
    """RDKit canonical SMILES (aromatic form) of a structure.

    With a skeleton at hand, a Kekulé SMILES with every atom in brackets is
    written from the skeleton's template and read back by RDKit without the
    full sanitisation (property cache, and for a cyclic graph the symmetrised
    SSSR and aromaticity only), which costs about as much as RDKit's own
    writing step.  (The SSSR is worth its cost even where nothing can be
    aromatic: the canonical writer needs ring information of that kind and
    would find the rings again itself.)
    """
    from rdkit import Chem

    sk = st.skeleton
    if sk is None or st.mol is not None:
        return Chem.MolToSmiles(structure_mol(st))
    fmt, getter = sk.smiles_writer
    labels = st.labels
    if _LAST_LABELS[0] is not labels:
        # structures of one colouring share their labels tuple: hash labels once
        _LAST_LABELS[0] = labels
        _LAST_LABELS[1] = [(_tokens(lab), lab.valence) for lab in labels]
    orders = st.orders
    bs = [0] * len(labels)
    for (u, v), o in zip(st.edges, orders):
        bs[u] += o
        bs[v] += o
    combined = [tok[val - s] for (tok, val), s in zip(_LAST_LABELS[1], bs)]
    combined += map(_BOND_SYMBOL.__getitem__, orders)
    m = Chem.MolFromSmiles(fmt % getter(combined), sanitize=False)
    m.UpdatePropertyCache(strict=False)
    if len(orders) >= len(labels):
        Chem.GetSymmSSSR(m)
        Chem.SetAromaticity(m)
    return Chem.MolToSmiles(m)


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
    # aromatic bonds that are not triple (RDKit also marks an aryne's C#C aromatic)
    arom = [j for j, b in enumerate(mol.GetBonds()) if b.GetIsAromatic() and x[j] < 2]
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
