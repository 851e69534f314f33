"""Hydrogen-free skeleton graphs, each isomorphism class exactly once.

A *skeleton* is a connected simple graph on the heavy atoms (or on the
units of a constrained search: atoms and fragment gadgets) with no element
labels and no bond orders.  Skeletons are built one vertex at a time by
McKay's canonical augmentation [1]_: a child graph is kept only when the
vertex just added is, up to automorphism, the one its own canonical
deletion rule would remove; siblings from one parent are deduplicated by
nauty certificates (pynauty).  No global set of seen graphs is kept.

The canonical deletion vertex of a graph is, among the vertices whose
removal leaves the graph connected, the one with the smallest invariant
(degree, sum of neighbour degrees); ties are broken by nauty's canonical
labelling (the tied vertex that comes last in canonical order).

References
----------
.. [1] B. D. McKay, "Isomorph-free exhaustive generation", J. Algorithms
   1998, 26, 306-324. doi:10.1006/jagm.1997.0898
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from itertools import combinations, combinations_with_replacement
from operator import add, itemgetter
from typing import Callable, Iterator

__all__ = ["Skeleton", "skeletons", "iter_skeletons", "reference_skeletons", "cores_cache_clear"]


@dataclass
class Skeleton:
    """One skeleton graph with what decoration needs.

    Parameters
    ----------
    n : int
        Number of vertices.
    adj : tuple of int
        Adjacency bitmasks, ``adj[v] >> w & 1`` when v and w are bonded.
    """

    n: int
    adj: tuple[int, ...]
    gens: list[list[int]] | None = field(default=None, repr=False)
    """Automorphism group generators, when the enumeration already had them."""

    @functools.cached_property
    def edges(self) -> tuple[tuple[int, int], ...]:
        """Edges ``(u, v)`` with ``u < v`` in lexicographic order."""
        return tuple(
            (u, v) for u in range(self.n) for v in range(u + 1, self.n) if self.adj[u] >> v & 1
        )

    @functools.cached_property
    def degrees(self) -> tuple[int, ...]:
        return tuple(a.bit_count() for a in self.adj)

    @functools.cached_property
    def nbrs(self) -> list[list[int]]:
        """Neighbour lists (ascending) per vertex."""
        return [_bits(a) for a in self.adj]

    @functools.cached_property
    def group(self) -> list[tuple[int, ...]]:
        """All automorphisms as vertex permutations (identity included)."""
        import pynauty

        if self.n == 1:
            return [(0,)]
        gens = self.gens
        if gens is None:
            gens = _nw().graph_autgrp(_nauty_graph(self.n, self.adj))[0]
        if not gens:
            return [tuple(range(self.n))]
        return _closure(self.n, [tuple(g) for g in gens])

    @functools.cached_property
    def ring_edges(self) -> tuple[bool, ...]:
        """Per edge: does it lie on a cycle (is it not a bridge)?"""
        m = len(self.edges)
        if m == self.n - 1:
            return (False,) * m
        bridges = _bridges(self.n, self.adj)
        return tuple((u, v) not in bridges for u, v in self.edges)

    @functools.cached_property
    def smiles_template(self) -> tuple[str, tuple[int, ...]]:
        """A SMILES writing plan for this skeleton: a ``%``-format string and
        its slots (vertex v as ``v``, edge j as ``-1 - j``), so a decorated
        skeleton becomes a (Kekulé, all-bracket) SMILES by one substitution."""
        n = self.n
        nbrs = [[w for w in range(n) if self.adj[v] >> w & 1] for v in range(n)]
        eidx = {e: j for j, e in enumerate(self.edges)}
        seen = [False] * n
        children: list[list[int]] = [[] for _ in range(n)]
        opens: list[list[tuple[int, int]]] = [[] for _ in range(n)]  # (edge, digit)
        closes: list[list[int]] = [[] for _ in range(n)]  # digits
        nring = 0

        done: set[int] = set()

        def dfs(v: int, parent: int) -> None:
            nonlocal nring
            seen[v] = True
            for w in nbrs[v]:
                if w == parent:
                    continue
                e = eidx[(min(v, w), max(v, w))]
                if seen[w]:
                    if e not in done:  # back edge: w is an ancestor of v
                        done.add(e)
                        nring += 1
                        opens[w].append((e, nring))
                        closes[v].append(nring)
                    continue
                children[v].append(w)
                dfs(w, v)

        dfs(0, -1)
        fmt: list[str] = []
        slots: list[int] = []

        def digit(d: int) -> str:
            return str(d) if d < 10 else f"%%{d}"

        def write(v: int) -> None:
            fmt.append("%s")
            slots.append(v)
            for e, d in opens[v]:
                fmt.append("%s" + digit(d))
                slots.append(-1 - e)
            for d in closes[v]:
                fmt.append(digit(d))
            kids = children[v]
            for i, w in enumerate(kids):
                e = eidx[(min(v, w), max(v, w))]
                if i < len(kids) - 1:
                    fmt.append("(%s")
                    slots.append(-1 - e)
                    write(w)
                    fmt.append(")")
                else:
                    fmt.append("%s")
                    slots.append(-1 - e)
                    write(w)

        write(0)
        return "".join(fmt), tuple(slots)

    @functools.cached_property
    def smiles_writer(self) -> tuple[str, Callable[[list[str]], tuple[str, ...]]]:
        """The template with an itemgetter picking its values from a list of
        atom tokens (vertex order) followed by bond symbols (edge order)."""
        fmt, slots = self.smiles_template
        idx = [i if i >= 0 else self.n + (-1 - i) for i in slots]
        if len(idx) == 1:
            return fmt, lambda vals: (vals[idx[0]],)
        return fmt, itemgetter(*idx)

    @functools.cached_property
    def edge_smallest_ring(self) -> tuple[int, ...]:
        """Per edge: size of the smallest ring through it (0 for a bridge)."""
        out = []
        for u, v in self.edges:
            adj = list(self.adj)
            adj[u] &= ~(1 << v)
            adj[v] &= ~(1 << u)
            d = _distance(adj, u, v)
            out.append(0 if d is None else d + 1)
        return tuple(out)


def _nauty_graph(n: int, adj: tuple[int, ...] | list[int]):  # type: ignore[no-untyped-def]
    """A pynauty Graph built without its per-call input checks (our adjacency
    lists are valid by construction); same attributes as ``pynauty.Graph``.
    Both directions of each edge are listed (nauty sets the same bits)."""
    import pynauty

    g = pynauty.Graph.__new__(pynauty.Graph)
    g.number_of_vertices = n
    g.directed = False
    g._adjacency_dict = {v: _bits(adj[v]) for v in range(n)}
    g._vertex_coloring = []
    return g


_BITS: dict[int, list[int]] = {}


def _bits(mask: int) -> list[int]:
    """Positions of the set bits of ``mask``, ascending (cached; do not modify)."""
    out = _BITS.get(mask)
    if out is None:
        out = []
        m = mask
        while m:
            b = m & -m
            out.append(b.bit_length() - 1)
            m ^= b
        if len(_BITS) < 1 << 20:
            _BITS[mask] = out
    return out


def _nw():  # type: ignore[no-untyped-def]
    from pynauty import nautywrap

    return nautywrap


def _closure(n: int, gens: list[tuple[int, ...]]) -> list[tuple[int, ...]]:
    ident = tuple(range(n))
    seen = {ident}
    out = [ident]
    todo = [ident]
    while todo:
        p = todo.pop()
        for g in gens:
            q = tuple(map(g.__getitem__, p))
            if q not in seen:
                seen.add(q)
                out.append(q)
                todo.append(q)
    return out


def _bridges(n: int, adj: tuple[int, ...]) -> set[tuple[int, int]]:
    """Bridges ``(u, v)``, ``u < v``, by Tarjan's low-link depth-first search."""
    disc = [-1] * n
    low = [0] * n
    out: set[tuple[int, int]] = set()
    t = 0
    disc[0] = low[0] = 0
    stack = [(0, -1, [w for w in range(n) if adj[0] >> w & 1])]
    while stack:
        v, parent, todo = stack[-1]
        if todo:
            w = todo.pop()
            if w == parent:
                continue
            if disc[w] < 0:
                t += 1
                disc[w] = low[w] = t
                stack.append((w, v, [x for x in range(n) if adj[w] >> x & 1]))
            elif disc[w] < low[v]:
                low[v] = disc[w]
        else:
            stack.pop()
            if parent >= 0:
                if low[v] < low[parent]:
                    low[parent] = low[v]
                if low[v] > disc[parent]:
                    out.add((min(v, parent), max(v, parent)))
    return out


def _reach(adj: list[int], start: int) -> int:
    seen = 1 << start
    frontier = seen
    while frontier:
        nb = 0
        f = frontier
        while f:
            b = f & -f
            nb |= adj[b.bit_length() - 1]
            f ^= b
        nb &= ~seen
        seen |= nb
        frontier = nb
    return seen


def _distance(adj: list[int], u: int, v: int) -> int | None:
    seen = 1 << u
    frontier = seen
    d = 0
    while frontier:
        if frontier >> v & 1:
            return d
        nb = 0
        f = frontier
        while f:
            b = f & -f
            nb |= adj[b.bit_length() - 1]
            f ^= b
        nb &= ~seen
        seen |= nb
        frontier = nb
        d += 1
    return None


def _is_cut(adj: list[int], n: int, x: int) -> bool:
    full = ((1 << n) - 1) & ~(1 << x)
    start = full & -full
    seen = start
    frontier = start
    while frontier:
        nb = 0
        f = frontier
        while f:
            b = f & -f
            nb |= adj[b.bit_length() - 1]
            f ^= b
        nb &= full & ~seen
        seen |= nb
        frontier = nb
    return seen != full


def skeletons(
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    *,
    min_edges: int = 0,
    girth5: bool = False,
    on_visit: Callable[[int], None] | None = None,
    min_leaves: int = 0,
) -> list[Skeleton]:
    """All connected simple graphs on ``n`` vertices, one per isomorphism class.

    Parameters
    ----------
    n : int
        Number of vertices (>= 1).
    max_edges : int
        Largest number of edges allowed.
    caps : tuple of int
        Degree caps of the atoms that will be placed on the vertices, sorted
        from largest to smallest; a graph is kept only if its sorted degree
        sequence fits under them (a necessary condition for any colouring).
    min_edges : int
        Smallest number of edges of a final graph.
    girth5 : bool
        Leave out graphs with a 3- or 4-membered cycle.
    min_leaves : int
        Atoms that can only be leaves (one bond-order unit): a final graph
        needs at least this many vertices of degree 1.  Along the canonical
        construction path a graph on k vertices has at least
        ``min_leaves - (n - k)`` of them, which prunes early.
    on_visit : callable, optional
        Called with the number of candidate graphs examined per parent (for
        the statistics of partial structures visited).

    Returns
    -------
    list of Skeleton
        In a deterministic order (that of :func:`iter_skeletons`).
    """
    return list(
        iter_skeletons(
            n, max_edges, caps, min_edges=min_edges, girth5=girth5, on_visit=on_visit,
            min_leaves=min_leaves,
        )
    )


def iter_skeletons(
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    *,
    min_edges: int = 0,
    girth5: bool = False,
    on_visit: Callable[[int], None] | None = None,
    min_leaves: int = 0,
    tick: Callable[[], None] | None = None,
) -> Iterator[Skeleton]:
    """Stream the graphs of :func:`skeletons`, depth first, one at a time.

    The canonical-augmentation tree is walked depth first, so the first
    graphs come out at once and memory stays at one path of the tree.

    Parameters
    ----------
    n, max_edges, caps, min_edges, girth5, on_visit, min_leaves
        As for :func:`skeletons`.
    tick : callable, optional
        Called once per parent graph expanded; it may raise to stop the walk
        (the time limit of a search does so).

    Yields
    ------
    Skeleton
        In a deterministic order.
    """
    if n < 1:
        return
    if min_leaves >= 1 and n >= 3:
        for adj, gens in _leafed(n, max_edges, caps, min_edges, girth5, on_visit, min_leaves, tick):
            yield Skeleton(n, adj, gens)
        return
    for adj, gens in _skeletons(n, max_edges, caps, min_edges, girth5, on_visit, min_leaves, tick):
        yield Skeleton(n, adj, gens)


def reference_skeletons(
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    *,
    min_edges: int = 0,
    girth5: bool = False,
    min_leaves: int = 0,
) -> Iterator[Skeleton]:
    """The same graphs as :func:`iter_skeletons`, always by canonical
    augmentation on all ``n`` vertices (no leaves taken off): the reference
    the leaf-stripped path is tested against."""
    if n < 1:
        return
    for adj, gens in _skeletons(n, max_edges, caps, min_edges, girth5, None, min_leaves, None):
        yield Skeleton(n, adj, gens)


# complete core lists by walk parameters (a solve asks for the same cores
# under many hypotheses that differ only in their leaf atoms)
_CORES: dict[tuple[int, int, tuple[int, ...], bool], list[tuple[tuple[int, ...], int, list[tuple[int, ...]]]]] = {}
_CORES_MAX = 32


def cores_cache_clear() -> None:
    """Forget the cached core graphs (benchmarks measure cold runs)."""
    _CORES.clear()


def _cores(
    kmax: int,
    max_edges: int,
    caps: tuple[int, ...],
    girth5: bool,
    on_visit: Callable[[int], None] | None,
    tick: Callable[[], None] | None,
) -> Iterator[tuple[tuple[int, ...], int, list[tuple[int, ...]]]]:
    """Every connected graph on 1..kmax vertices whose k-vertex members
    have at most ``max_edges - (kmax - k)`` edges and degrees under ``caps``,
    once per isomorphism class, with its automorphism group (all
    permutations).  One depth-first walk of the augmentation tree: each node
    of it is such a graph."""
    key = (kmax, max_edges, caps, girth5)
    done = _CORES.get(key)
    if done is not None:
        yield from done
        return
    got: list[tuple[tuple[int, ...], int, list[tuple[int, ...]]]] = []
    nw = _nw()

    def node(adj: tuple[int, ...], e: int) -> tuple[tuple[int, ...], int, list[tuple[int, ...]]]:
        k = len(adj)
        if k == 1:
            return adj, e, [(0,)]
        gens = nw.graph_autgrp(_nauty_graph(k, adj))[0]
        group = _closure(k, [tuple(g) for g in gens]) if gens else [tuple(range(k))]
        return adj, e, group

    def walk(adj: tuple[int, ...], e: int) -> Iterator[tuple[tuple[int, ...], int, list[tuple[int, ...]]]]:
        if tick is not None:
            tick()
        item = node(adj, e)
        got.append(item)
        yield item
        if len(adj) < kmax:
            for new, e2, _ in _children(adj, e, kmax + 1, max_edges + 1, caps, 0, girth5, on_visit, 0):
                yield from walk(new, e2)

    yield from walk((0,), 0)
    _CORES[key] = got
    while len(_CORES) > _CORES_MAX:
        del _CORES[next(iter(_CORES))]


def _leafed(
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    min_edges: int,
    girth5: bool,
    on_visit: Callable[[int], None] | None,
    min_leaves: int,
    tick: Callable[[], None] | None,
) -> Iterator[tuple[tuple[int, ...], list | None]]:  # type: ignore[type-arg]
    """The graphs of :func:`_skeletons` (``n >= 3``) from their cores.

    The core of a connected graph on three or more vertices is what is left
    when every vertex of degree one is taken off; it is connected, and the
    graph is the core with ``a_v`` leaves hung on each core vertex v, where
    ``deg_core(v) + a_v >= 2`` (no core vertex is itself a leaf).  Graph and
    (core, leaf counts up to the core's automorphisms) determine each other,
    so every graph comes out once: each core once (canonical augmentation),
    each leaf-count vector once per orbit of the core's group (the
    lexicographically smallest).  At least ``min_leaves`` leaves means a
    core of at most ``n - min_leaves`` vertices, so the augmentation tree
    is walked that much less deep.  Vertices of degree one can only carry
    atoms with cap 1 or more, core vertices only atoms with cap 2 or more.
    """
    inner = tuple(c for c in caps if c >= 2)
    kmax = min(n - min_leaves, len(inner))
    if kmax < 1 or caps[-1] < 1:  # an atom that cannot bond fits no connected graph
        return
    dmax = caps[0]
    # the walk's own pruning: a k-vertex core with e edges needs
    # e + (n - k) <= max_edges, i.e. e <= (max_edges - n + kmax) - (kmax - k)
    walk_edges = max_edges - n + kmax
    if walk_edges < 0:
        return
    import pynauty

    nw = _nw()
    for cadj, ce, group in _cores(kmax, walk_edges, inner[:kmax], girth5, on_visit, tick):
        k = len(cadj)
        nleaf = n - k
        if ce + nleaf < min_edges or ce + nleaf > max_edges:
            continue
        cdeg = [a.bit_count() for a in cadj]
        lo = [max(0, 2 - d) for d in cdeg]
        hi = [dmax - d for d in cdeg]
        if sum(lo) > nleaf or sum(hi) < nleaf:
            continue
        perms = [itemgetter(*p) for p in group[1:]] if k > 1 else []
        # leaves (degree 1) take the smallest caps, so the graph fits its caps
        # when the core vertices' degrees fit under the k largest
        for a in _leaf_counts(lo, hi, nleaf, cdeg, caps[:k]):
            if perms and any(p(a) < a for p in perms):
                continue
            adj = list(cadj)
            w = k
            for v, av in enumerate(a):
                if av:
                    bits = ((1 << av) - 1) << w
                    adj[v] |= bits
                    adj.extend([1 << v] * av)
                    w += av
            g = pynauty.Graph.__new__(pynauty.Graph)
            g.number_of_vertices = n
            g.directed = False
            g._adjacency_dict = {v: _bits(adj[v]) for v in range(n)}
            g._vertex_coloring = []
            yield tuple(adj), nw.graph_autgrp(g)[0]


def _leaf_counts(
    lo: list[int], hi: list[int], total: int, cdeg: list[int], caps: tuple[int, ...]
) -> Iterator[tuple[int, ...]]:
    """Vectors a with lo <= a <= hi and sum ``total`` such that the degrees
    ``cdeg[v] + a[v]``, sorted, fit under ``caps`` (deterministic order)."""
    r = total - sum(lo)
    if r < 0:
        return
    elig = [v for v in range(len(lo)) if hi[v] > lo[v]]
    for combo in combinations_with_replacement(elig, r):
        a = list(lo)
        for v in combo:
            a[v] += 1
        if r > 1 and any(a[v] > hi[v] for v in combo):
            continue
        if all(d <= c for d, c in zip(sorted(map(add, cdeg, a), reverse=True), caps)):
            yield tuple(a)


def _fits(deg: list[int], caps: tuple[int, ...]) -> bool:
    return all(d <= c for d, c in zip(sorted(deg, reverse=True), caps))


def _skeletons(
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    min_edges: int,
    girth5: bool,
    on_visit: Callable[[int], None] | None,
    min_leaves: int = 0,
    tick: Callable[[], None] | None = None,
) -> Iterator[tuple[tuple[int, ...], list | None]]:  # type: ignore[type-arg]
    """Graphs with their automorphism generators (None: not computed)."""
    if n == 1:
        yield (0,), None
        return

    def walk(adj: tuple[int, ...], e: int) -> Iterator[tuple[tuple[int, ...], list | None]]:  # type: ignore[type-arg]
        if tick is not None:
            tick()
        kids = _children(adj, e, n, max_edges, caps, min_edges, girth5, on_visit, min_leaves)
        if len(adj) + 1 == n:
            for new, e2, gens in kids:
                if e2 >= min_edges:
                    yield new, gens
        else:
            for new, e2, _ in kids:
                yield from walk(new, e2)

    yield from walk((0,), 0)


def _children(
    adj: tuple[int, ...],
    e: int,
    n: int,
    max_edges: int,
    caps: tuple[int, ...],
    min_edges: int,
    girth5: bool,
    on_visit: Callable[[int], None] | None,
    min_leaves: int,
) -> list[tuple[tuple[int, ...], int, list | None]]:  # type: ignore[type-arg]
    """The canonical children of one graph (one new vertex each), in order."""
    nw = _nw()
    dmax = caps[0] if caps else 0
    k = len(adj)
    nxt: list[tuple[tuple[int, ...], int, list | None]] = []  # type: ignore[type-arg]
    rem_after = n - k - 1
    last = k == n - 1
    deg = [a.bit_count() for a in adj]
    free = [v for v in range(k) if deg[v] < dmax]
    maxs = min(dmax, max_edges - e - rem_after)
    leaves = 0
    for v in range(k):
        if deg[v] == 1:
            leaves |= 1 << v
    sib: set[bytes] = set()
    tried = 0
    for s in range(1, maxs + 1):
        if last and e + s < min_edges:
            continue
        for subset in combinations(free, s):
            tried += 1
            sm = 0
            for v in subset:
                sm |= 1 << v
            # a leaf that survives is always a better deletion vertex
            if s > 1 and k >= 2 and (leaves & ~sm):
                continue
            if girth5 and not _girth_ok(adj, subset):
                continue
            new = list(adj)
            for v in subset:
                new[v] |= 1 << k
            new.append(sm)
            nd = [a.bit_count() for a in new]
            if not _fits(nd, caps):
                continue
            if min_leaves and k + 1 >= 3 and nd.count(1) < min_leaves - rem_after:
                continue
            inv_k = (s, sum(nd[v] for v in subset))
            ok = True
            ties: list[int] = []
            for x in range(k):
                dx = nd[x]
                if dx > s:
                    continue
                m = new[x]
                sx = 0
                while m:
                    b = m & -m
                    sx += nd[b.bit_length() - 1]
                    m ^= b
                ix = (dx, sx)
                if ix > inv_k:
                    continue
                if dx > 1 and _is_cut(new, k + 1, x):
                    continue
                if ix < inv_k:
                    ok = False
                    break
                ties.append(x)
            if not ok:
                continue
            g = _nauty_graph(k + 1, new)
            gens = None
            if ties:
                lab = nw.graph_canonlab(g)
                aut = nw.graph_autgrp(g)
                orbits = aut[3]
                pos = {v: i for i, v in enumerate(lab)}
                w = max([*ties, k], key=pos.__getitem__)
                if orbits[w] != orbits[k]:
                    continue
                gens = aut[0]
                # the canonical labelling already gives the certificate
                cert: object = tuple(sorted(1 << pos[v] | 1 << pos[u] for v in range(k + 1) for u in _bits(new[v]) if u > v))
            else:
                cert = nw.graph_cert(g)
            if cert in sib:
                continue
            sib.add(cert)
            if last and gens is None:
                gens = nw.graph_autgrp(g)[0]  # decoration needs the group
            nxt.append((tuple(new), e + s, gens))
    if on_visit is not None:
        on_visit(tried)
    return nxt


def _girth_ok(adj: tuple[int, ...], subset: tuple[int, ...]) -> bool:
    """Adding a vertex joined to ``subset`` makes no 3- or 4-cycle."""
    for i, a in enumerate(subset):
        for b in subset[i + 1 :]:
            if adj[a] >> b & 1 or adj[a] & adj[b]:
                return False
    return True


def permuters(perms: list[tuple[int, ...]]) -> list[Callable[[tuple[int, ...]], tuple[int, ...]]]:
    """itemgetters applying each non-identity permutation to a tuple."""
    out = []
    for p in perms:
        if len(p) < 2 or p == tuple(range(len(p))):
            continue
        out.append(itemgetter(*p))
    return out
