"""Public entry points: stream or count the constitutions of a :class:`Spec`.

The search is skeleton-first: for each label multiset (the heavy atoms with
their valence states), every skeleton graph is decorated with labels and
bond orders (see :mod:`elucidate.generate.skeletons` and
:mod:`elucidate.generate.decorate`).  The list of (label multiset,
skeleton) pairs is the unit of work; ``part=(i, n)`` takes the i-th of n
contiguous blocks of it, so parts are disjoint and their union is the
whole search, in the same order as an unsplit run.
"""

from __future__ import annotations

import functools
import time
from dataclasses import replace
from itertools import product
from typing import Callable, Iterator

from elucidate.errors import InputError, LimitReached
from elucidate.generate.decorate import (
    Filters,
    Label,
    Problem,
    Structure,
    decorate,
    structure_mol,
    structure_smiles,
)
from elucidate.generate.fragments import FragmentPlan, plan_fragments
from elucidate.generate.skeletons import Skeleton, iter_skeletons
from elucidate.generate.spec import Limits, Spec, Stats
from elucidate.model import VALENCE

__all__ = ["generate", "count", "validate_spec", "parts_smiles", "part_args"]

_SUPPORTED = ("C", "H", "N", "O", "S", "P", "F", "Cl", "Br", "I", "Si")


def validate_spec(spec: Spec) -> None:
    """Raise :class:`InputError` if the spec cannot describe a neutral molecule."""
    counts = spec.formula.as_dict()
    for el, k in counts.items():
        if el not in _SUPPORTED:
            raise InputError(f"formula {spec.formula.hill}: element {el!r} is not supported")
        if k < 0:
            raise InputError(f"formula {spec.formula.hill}: negative count for {el}")
    if sum(k for el, k in counts.items() if el != "H") < 1:
        raise InputError(f"formula {spec.formula.hill}: needs at least one heavy atom")
    for a in spec.atoms or ():
        if a.element not in _SUPPORTED or a.element == "H":
            raise InputError(f"atom spec {a.element!r}: not a supported heavy element")
        if a.h_count < 0:
            raise InputError(f"atom spec {a.element}H{a.h_count}: negative H count")
    for s in (*spec.require, *spec.forbid):
        _smarts(s)
    plan_fragments(spec)  # raises on a bad fragment or a formula mismatch


@functools.cache
def _smarts(text: str):  # type: ignore[no-untyped-def]
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    try:
        q = Chem.MolFromSmarts(text)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if q is None:
        raise InputError(f"SMARTS {text!r} could not be parsed")
    return q


def _element_states(el: str, spec: Spec) -> list[Label]:
    """Valence states an element may take in a plain formula search."""
    o = spec.options
    v = VALENCE[el]
    states = [Label(el, 0, v, 0, v)]
    if el == "S" and o.hypervalent_s:
        states += [Label("S", 0, 4, 4, 4), Label("S", 0, 6, 6, 6)]
    if el == "P" and o.pentavalent_p:
        states.append(Label("P", 0, 5, 4, 5))
    return states


def _splits(total: int, parts: int) -> Iterator[tuple[int, ...]]:
    if parts == 1:
        yield (total,)
        return
    for first in range(total, -1, -1):
        for rest in _splits(total - first, parts - 1):
            yield (first, *rest)


def _assign(
    sets: tuple[frozenset[int] | None, ...], split: tuple[int, ...]
) -> list[tuple[tuple[frozenset[int] | None, ...], ...]]:
    """Distinct ways to deal the atoms' neighbour-H sets into groups of the
    given sizes (atoms with equal sets are interchangeable)."""
    from itertools import combinations as _comb

    out: set[tuple[tuple[frozenset[int] | None, ...], ...]] = set()

    def key(part: tuple[frozenset[int] | None, ...]) -> tuple[frozenset[int] | None, ...]:
        return tuple(sorted(part, key=lambda x: (x is not None, sorted(x) if x is not None else [])))

    def rec(rest: tuple[frozenset[int] | None, ...], sizes: tuple[int, ...], acc: tuple) -> None:  # type: ignore[type-arg]
        if not sizes:
            out.add(acc)
            return
        for idx in _comb(range(len(rest)), sizes[0]):
            part = key(tuple(rest[i] for i in idx))
            left = tuple(x for i, x in enumerate(rest) if i not in idx)
            rec(left, sizes[1:], acc + (part,))

    rec(sets, tuple(split), ())
    return sorted(out, key=repr)


def _problems(spec: Spec, plan: FragmentPlan) -> list[Problem]:
    """The label multisets of a spec (several when valence states vary)."""
    f = spec.formula.as_dict()
    per_group: list[list[list[tuple[Label, int]]]] = []
    if spec.atoms is None:
        f = {el: k - plan.element_counts.get(el, 0) for el, k in f.items()}
        els = [el for el in f if el != "H" and f[el] > 0]
        cs = spec.options.charge_separated and f.get("N", 0) > 0 and f.get("O", 0) > 0
        for el in els:
            if cs and el in ("N", "O"):
                continue
            states = _element_states(el, spec)
            per_group.append(
                [[(s, k) for s, k in zip(states, split) if k] for split in _splits(f[el], len(states))]
            )
        if cs:
            # k of the N become N+ and k of the O become O- (bonded pairs)
            opts = []
            for k in range(min(f["N"], f["O"]) + 1):
                opt = [
                    (Label("N", 0, 3, 0, 3), f["N"] - k),
                    (Label("N", 1, 4, 4, 4), k),
                    (Label("O", 0, 2, 0, 2), f["O"] - k),
                    (Label("O", -1, 1, 1, 1), k),
                ]
                opts.append([x for x in opt if x[1]])
            per_group.append(opts)
        h_free = f.get("H", 0)
    else:
        groups: dict[tuple[str, int], list] = {}  # type: ignore[type-arg]
        for a in spec.atoms:
            groups.setdefault((a.element, a.h_count), []).append(a.neighbour_h)
        cs = spec.options.charge_separated and ("N", 0) in groups and ("O", 0) in groups
        for (el, h), sets in sorted(groups.items()):
            if cs and (el, h) in (("N", 0), ("O", 0)):
                continue
            v = VALENCE[el]
            states = [v]
            if el == "S" and spec.options.hypervalent_s and h == 0:
                states += [4, 6]
            if el == "P" and spec.options.pentavalent_p and h <= 1:
                states.append(5)
            gopts = []
            for split in _splits(len(sets), len(states)):
                if any(k and val - h < 0 for val, k in zip(states, split)):
                    continue
                for parts in _assign(tuple(sets), split):
                    gopts.append(
                        [(Label(el, 0, val, val - h, val - h, part), k)
                         for val, k, part in zip(states, split, parts) if k]
                    )
            if not gopts:
                return []
            per_group.append(gopts)
        if cs:
            nsets, osets = tuple(groups[("N", 0)]), tuple(groups[("O", 0)])
            copts = []
            for k in range(min(len(nsets), len(osets)) + 1):
                for nparts in _assign(nsets, (len(nsets) - k, k)):
                    for oparts in _assign(osets, (len(osets) - k, k)):
                        opt = [
                            (Label("N", 0, 3, 3, 3, nparts[0]), len(nsets) - k),
                            (Label("N", 1, 4, 4, 4, nparts[1]), k),
                            (Label("O", 0, 2, 2, 2, oparts[0]), len(osets) - k),
                            (Label("O", -1, 1, 1, 1, oparts[1]), k),
                        ]
                        copts.append([x for x in opt if x[1]])
            per_group.append(copts)
        h_free = 0
    out: list[Problem] = []
    for combo in product(*per_group) if per_group else [()]:
        pairs = [p for grp in combo for p in grp]
        pairs += plan.unit_labels
        pairs.sort(key=lambda p: _label_key(p[0]))
        labels = tuple(p[0] for p in pairs)
        counts = tuple(p[1] for p in pairs)
        if spec.atoms is None:
            total_bs = sum(lab.valence * k for lab, k in pairs if not lab.is_unit) - h_free
            total_bs += sum(lab.bs_lo * k for lab, k in pairs if lab.is_unit)
        else:
            total_bs = sum(lab.bs_lo * k for lab, k in pairs)
        if total_bs < 0 or total_bs % 2:
            continue
        out.append(Problem(labels, counts, total_bs))
    return out


def _label_key(lab: Label) -> tuple:  # type: ignore[type-arg]
    return (lab.symbol, lab.charge, lab.valence, lab.bs_lo, lab.bs_hi, str(lab.nh_sets))


class _TimeUp(Exception):
    """Raised inside the search when the time limit has passed."""


def _ticker(deadline: float | None) -> Callable[[], None] | None:
    """A cheap check to call from long loops: raises :class:`_TimeUp` once
    ``time.monotonic()`` passes ``deadline`` (None: no limit, no check)."""
    if deadline is None:
        return None
    clock = time.monotonic

    def tick() -> None:
        if clock() > deadline:
            raise _TimeUp

    return tick


_SkeletonKey = tuple[int, int, tuple[int, ...], bool, "int | None"]


class _SkeletonCache:
    """Complete skeleton lists by parameters (at most ``size``, oldest out).

    A list enters only when its enumeration ran to the end, so a search that
    a time limit stopped never leaves a partial list behind.
    """

    def __init__(self, size: int = 64) -> None:
        self.size = size
        self._data: dict[_SkeletonKey, tuple[Skeleton, ...]] = {}

    def get(self, key: _SkeletonKey) -> tuple[Skeleton, ...] | None:
        return self._data.get(key)

    def put(self, key: _SkeletonKey, value: tuple[Skeleton, ...]) -> None:
        self._data[key] = value
        while len(self._data) > self.size:
            del self._data[next(iter(self._data))]

    def cache_clear(self) -> None:
        self._data.clear()


_skeleton_list = _SkeletonCache()


def _skeleton_stream(key: _SkeletonKey, tick: Callable[[], None] | None) -> Iterator[Skeleton]:
    """The skeletons for ``key``, from the cache or streamed as they are made
    (and cached once complete)."""
    done = _skeleton_list.get(key)
    if done is not None:
        yield from done
        return
    n, max_edges, caps, girth5, max_ring = key
    leaves = caps.count(1) if n >= 3 else 0
    got: list[Skeleton] = []
    for s in iter_skeletons(
        n, max_edges, caps, min_edges=n - 1, girth5=girth5, min_leaves=leaves, tick=tick
    ):
        if max_ring is not None and not all(r == 0 or r <= max_ring for r in s.edge_smallest_ring):
            continue
        got.append(s)
        yield s
    _skeleton_list.put(key, tuple(got))


def _checked_options(spec: Spec) -> Spec:
    """The spec with its options tightened by the checks that declare
    ``generator_options(options)`` (the solver's ring prior does): what
    they leave out is never built."""
    o = spec.options
    for c in spec.checks:
        if hasattr(c, "generator_options"):
            o = c.generator_options(o)
    return spec if o == spec.options else replace(spec, options=o)


def _unit_ring_bound(plan: FragmentPlan, max_ring: int | None) -> int | None:
    """A ring-size cap that is sound on the unit graph: a ring passing a
    fragment gadget (port, centre, port) is at most two vertices longer
    there than through the fragment's own atoms (both ports on one atom)."""
    if max_ring is None or not plan.units:
        return max_ring
    return max_ring + 2 * sum(k for frag, k in plan.classes if len(frag.ports) >= 2)


def _work(
    spec: Spec, tick: Callable[[], None] | None = None
) -> tuple[list[Problem], Iterator[tuple[int, Skeleton]], FragmentPlan]:
    """The label multisets, the stream of (multiset index, skeleton) work
    items in their fixed order, and the fragment plan."""
    plan = plan_fragments(spec)
    probs = _problems(spec, plan)
    o = spec.options
    multiple = _min_multiple_bonds(spec, plan)
    max_ring = _unit_ring_bound(plan, o.max_ring_size)

    def items() -> Iterator[tuple[int, Skeleton]]:
        for pi, prob in enumerate(probs):
            n = prob.n
            max_edges = prob.total_bs // 2 - plan.internal_extra - multiple
            girth5 = o.no_small_rings and not plan.units
            key = (n, max_edges, prob.caps, girth5, max_ring)
            for s in _skeleton_stream(key, tick):
                yield pi, s

    return probs, items(), plan


def _min_multiple_bonds(spec: Spec, plan: FragmentPlan) -> int:
    """Multiple bonds the checks demand outside the fragments.

    A check may declare ``min_unsaturated_carbons(formula)``; every double or
    triple bond serves at most two carbons, so at least half that many
    multiple bonds (less those inside fragments) are needed, which caps the
    skeleton's edges (rings) below the formula's DoU.
    """
    need = max((c.min_unsaturated_carbons(spec.formula) for c in spec.checks
                if hasattr(c, "min_unsaturated_carbons")), default=0)
    if need <= 0:
        return 0
    inside = 0
    for frag, k in plan.classes:
        unsat = {i for a, b, o in frag.bonds if o >= 2 for i in (a, b) if frag.elements[i] == "C"}
        inside += k * len(unsat)
    return max(0, -(-(need - inside) // 2))


def _structures(
    spec: Spec,
    part: tuple[int, int] | None,
    stats: Stats,
    limits: Limits | None,
    counting: bool = False,
    deadline: float | None = None,
) -> Iterator[Structure | int]:
    """Structures of the spec; with ``counting``, plain batch sizes (ints)
    wherever no per-structure check is needed.

    ``deadline`` (a ``time.monotonic()`` value) overrides the time limit of
    ``limits`` (a split search passes one deadline to all its parts).  The
    time limit is checked inside skeleton enumeration and decoration too, so
    the search stops promptly wherever it is.
    """
    if part is not None:
        i, k = part
        if not (0 <= i < k):
            raise InputError(f"part {i} of {k}: need 0 <= i < n")
    if deadline is None and limits is not None and limits.time_limit_s is not None:
        deadline = time.monotonic() + limits.time_limit_s
    tick = _ticker(deadline)
    max_n = limits.max_structures if limits is not None else None
    visit = [0]
    spec = _checked_options(spec)
    try:
        probs, items, plan = _work(spec, tick)
        if part is not None:
            # contiguous blocks of the full list: needs the whole list first
            whole = list(items)
            lo, hi = len(whole) * i // k, len(whole) * (i + 1) // k
            items = iter(whole[lo:hi])
        o = spec.options
        filters = Filters(o.no_hetero_hetero, o.no_cumulenes, o.min_ring_triple)
        req = [_smarts(s) for s in spec.require]
        forb = [_smarts(s) for s in spec.forbid]
        checks = tuple(spec.checks)
        per_structure = bool(req or forb or plan.units or checks)
        fast = counting and not per_structure

        def colour_seen(_c: tuple[int, ...]) -> None:
            stats.colourings += 1

        for pi, sk in items:
            stats.skeletons += 1
            edges = sk.edges
            for vlabels, xs in decorate(sk, probs[pi], filters, visit, colour_seen, fast, tick):
                if fast:
                    k = xs  # type: ignore[assignment]
                    stats.bond_graphs += k
                    if max_n is not None and stats.emitted + k > max_n:
                        k = max_n - stats.emitted
                        stats.emitted += k
                        yield k
                        stats.stopped_by = "max_structures"
                        return
                    stats.emitted += k
                    yield k
                    continue
                stats.bond_graphs += len(xs)
                for x in xs:
                    # every finished structure passes here once, before output
                    st: Structure | None = Structure(vlabels, edges, tuple(v + 1 for v in x), None, sk)
                    if plan.units:
                        st = plan.expand(st, spec)  # type: ignore[arg-type]
                        if st is None:
                            continue
                    if checks and not all(c.admits_structure(st) for c in checks):
                        stats.rejected_by_checks += 1
                        continue
                    if req or forb:
                        mol = structure_mol(st)
                        if any(not mol.HasSubstructMatch(q) for q in req):
                            continue
                        if any(mol.HasSubstructMatch(q) for q in forb):
                            continue
                    if max_n is not None and stats.emitted >= max_n:
                        stats.stopped_by = "max_structures"
                        return
                    stats.emitted += 1
                    yield 1 if counting else st  # type: ignore[misc]
                    if tick is not None:
                        tick()
                if tick is not None:
                    tick()
    except _TimeUp:
        stats.stopped_by = "time_limit"
    finally:
        stats.visited += visit[0]


def generate(
    spec: Spec,
    *,
    limits: Limits | None = None,
    part: tuple[int, int] | None = None,
    stats: Stats | None = None,
) -> Iterator[str]:
    """Stream the canonical SMILES of every constitution of ``spec``, once each.

    Parameters
    ----------
    spec : Spec
        Formula, optional atom list and fragments, SMARTS, options.
    limits : Limits, optional
        Stop after so many structures or seconds.
    part : (int, int), optional
        ``(i, n)``: only the i-th of n disjoint parts of the search.
    stats : Stats, optional
        Filled in with counters (partial structures visited, emitted ...).

    Yields
    ------
    str
        RDKit canonical SMILES (aromatic form).

    Raises
    ------
    InputError
        Bad spec (unknown element, bad SMARTS or fragment, formula mismatch).
    LimitReached
        After yielding what was found, when a limit stopped the search;
        ``stats.stopped_by`` says which.

    Examples
    --------
    >>> from elucidate.model import Formula
    >>> sorted(generate(Spec(Formula((("C", 2), ("H", 6), ("O", 1))))))
    ['CCO', 'COC']
    """
    validate_spec(spec)
    return _generate(spec, limits, part, stats if stats is not None else Stats())


def _generate(
    spec: Spec, limits: Limits | None, part: tuple[int, int] | None, stats: Stats
) -> Iterator[str]:
    from rdkit import Chem

    for st in _structures(spec, part, stats, limits):
        yield structure_smiles(st)  # type: ignore[arg-type]
    if stats.stopped_by:
        raise LimitReached(f"stopped by {stats.stopped_by.replace('_', ' ')} after {stats.emitted} structures")


def _part_deadline(wall: float | None) -> float | None:
    """A ``time.monotonic()`` deadline from a wall-clock one (``time.time()``),
    which means the same in every process of a pool."""
    return None if wall is None else time.monotonic() + (wall - time.time())


def _wall_deadline(limits: Limits | None) -> float | None:
    if limits is None or limits.time_limit_s is None:
        return None
    return time.time() + limits.time_limit_s


def part_args(
    spec: Spec, limits: Limits | None, nparts: int
) -> list[tuple[Spec, Limits | None, tuple[int, int], float | None]]:
    """Arguments for :func:`parts_smiles` (or the count of a part) over a
    process pool: every part shares one deadline, taken now."""
    wall = _wall_deadline(limits)
    return [(spec, limits, (i, nparts), wall) for i in range(nparts)]


def _count_part(args: tuple) -> tuple[int, Stats]:  # type: ignore[type-arg]
    spec, limits, part = args[:3]
    wall = args[3] if len(args) > 3 else None
    st = Stats()
    k = 0
    for batch in _structures(spec, part, st, limits, counting=True, deadline=_part_deadline(wall)):
        k += batch  # type: ignore[operator]
    return k, st


def count(
    spec: Spec,
    *,
    limits: Limits | None = None,
    workers: int = 1,
    stats: Stats | None = None,
) -> int:
    """Number of constitutions of ``spec`` (no SMILES written unless SMARTS ask).

    Parameters
    ----------
    spec : Spec
    limits : Limits, optional
        When a limit stops the count, the partial count is returned and
        ``stats.stopped_by`` is set (no exception).
    workers : int
        Processes of a local pool; the search is split into parts.
    stats : Stats, optional
        Filled in with counters.

    Returns
    -------
    int

    Examples
    --------
    >>> from elucidate.model import Formula
    >>> count(Spec(Formula((("C", 6), ("H", 14)))))
    5
    """
    validate_spec(spec)
    if workers < 1:
        raise InputError(f"workers {workers}: need at least 1")
    stats = stats if stats is not None else Stats()
    if workers == 1:
        k, st = _count_part((spec, limits, None))
        stats.add(st)
        return k
    from concurrent.futures import ProcessPoolExecutor

    nparts = workers * 4
    total = 0
    with ProcessPoolExecutor(max_workers=workers) as pool:
        for k, st in pool.map(_count_part, part_args(spec, limits, nparts)):
            total += k
            stats.add(st)
    if limits is not None and limits.max_structures is not None and total > limits.max_structures:
        total = limits.max_structures
        stats.emitted = total
        stats.stopped_by = "max_structures"
    return total


def parts_smiles(args: tuple) -> tuple[list[str], Stats]:  # type: ignore[type-arg]
    """SMILES of one part (for a process pool); returns the list and the stats.

    ``args`` is ``(spec, limits, part)`` or, from :func:`part_args`,
    ``(spec, limits, part, wall_deadline)`` so that all parts share one
    deadline.
    """
    spec, limits, part = args[:3]
    wall = args[3] if len(args) > 3 else None
    st = Stats()
    out = [
        structure_smiles(s)  # type: ignore[arg-type]
        for s in _structures(spec, part, st, limits, deadline=_part_deadline(wall))
    ]
    return out, st


