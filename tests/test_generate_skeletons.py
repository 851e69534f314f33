"""The leaf-stripped skeleton path against the full canonical augmentation.

Skeletons for atoms that can only be leaves (cap 1: CH3, OH, NH2, halogens in
a fixed-H search) are built from their leaf-free cores with the leaves hung on
per orbit of the core's automorphism group.  The reference is the plain
canonical augmentation on all vertices (``reference_skeletons``); both must give
the same isomorphism classes, each once.
"""

from __future__ import annotations

import re

import pytest

from elucidate.generate import AtomSpec, Spec, count
from elucidate.generate.skeletons import (
    _nauty_graph,
    _nw,
    iter_skeletons,
    reference_skeletons,
)
from elucidate.model import Formula


def F(text: str) -> Formula:
    counts = {el: int(n) if n else 1 for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", text)}
    order = ["C", "H"] + sorted(el for el in counts if el not in ("C", "H"))
    return Formula(tuple((el, counts[el]) for el in order if el in counts))


def _certs(sks) -> list[bytes]:  # type: ignore[no-untyped-def]
    return [_nw().graph_cert(_nauty_graph(s.n, s.adj)) for s in sks]


# (n, max_edges, caps, girth5): degree caps as a fixed-H search makes them
# (4 = C, 3 = CH, 2 = CH2/O, 1 = CH3/OH/halogen), trees to three rings
SKELETON_CASES = [
    (3, 2, (4, 1, 1), False),
    (3, 3, (2, 2, 1), False),
    (4, 3, (4, 1, 1, 1), False),
    (5, 6, (4, 4, 2, 1, 1), False),
    (6, 7, (4, 3, 3, 2, 1, 1), False),
    (6, 8, (4, 4, 4, 4, 1, 1), False),
    (7, 8, (4, 3, 3, 3, 3, 2, 1), False),
    (7, 9, (4, 4, 3, 2, 2, 1, 1), True),
    (7, 10, (4, 4, 3, 2, 1, 1, 1), False),
    (8, 10, (4, 4, 4, 3, 3, 2, 1, 1), False),
    (8, 11, (4, 4, 4, 2, 1, 1, 1, 1), False),
    (9, 10, (4, 4, 2, 1, 1, 1, 1, 1, 1), False),
    (9, 11, (4, 4, 2, 2, 2, 2, 2, 1, 1), True),
    (9, 12, (4, 4, 4, 4, 3, 3, 2, 2, 1), False),
    (10, 12, (4, 3, 3, 3, 3, 3, 3, 2, 1, 1), False),
    (10, 11, (4, 4, 4, 4, 1, 1, 1, 1, 1, 1), False),
]


@pytest.mark.parametrize("n, max_edges, caps, girth5", SKELETON_CASES)
def test_leaf_stripped_skeletons_match_full_augmentation(n, max_edges, caps, girth5) -> None:  # type: ignore[no-untyped-def]
    leaves = caps.count(1)
    got = _certs(iter_skeletons(n, max_edges, caps, min_edges=n - 1, girth5=girth5, min_leaves=leaves))
    want = _certs(reference_skeletons(n, max_edges, caps, min_edges=n - 1, girth5=girth5, min_leaves=leaves))
    assert len(got) == len(set(got))  # each isomorphism class once
    assert set(got) == set(want)


def test_leaf_stripped_skeletons_have_their_automorphism_groups() -> None:
    # every skeleton carries its full group: its size equals nauty's order
    for s in iter_skeletons(7, 8, (4, 3, 3, 2, 1, 1, 1), min_edges=6, min_leaves=3):
        order = _nw().graph_autgrp(_nauty_graph(s.n, s.adj))[1]
        assert len(s.group) == round(order)


# Monochloroalkanes CnH2n+1Cl are alkyl groups: OEIS A000598 (rooted quartic
# trees), n = 1..10.  The Cl is a cap-1 atom, so this goes through the
# leaf-stripped path.
CHLOROALKANES = [1, 1, 2, 4, 8, 17, 39, 89, 211, 507]


@pytest.mark.parametrize("n, expected", list(enumerate(CHLOROALKANES, start=1)))
def test_chloroalkanes_match_oeis_a000598(n: int, expected: int) -> None:
    assert count(Spec(F(f"C{n}H{2 * n + 1}Cl"))) == expected  # OEIS A000598


# Alkanes with fixed H per carbon: the CH3 are leaves.  Summed over every
# (CH3, CH2, CH, C) split of CnH2n+2 the counts give OEIS A000602.
ALKANES = {5: 3, 6: 5, 7: 9, 8: 18, 9: 35, 10: 75}  # OEIS A000602


def _splits(n: int):  # type: ignore[no-untyped-def]
    # p CH3 + s CH2 + t CH + q C with p = t + 2q + 2 (an acyclic CnH2n+2)
    for q in range(n + 1):
        for t in range(n + 1 - q):
            p = t + 2 * q + 2
            s = n - p - t - q
            if s >= 0:
                yield p, s, t, q


@pytest.mark.parametrize("n, expected", sorted(ALKANES.items()))
def test_fixed_h_alkanes_sum_to_oeis_a000602(n: int, expected: int) -> None:
    total = 0
    for p, s, t, q in _splits(n):
        atoms = (*[AtomSpec("C", 3)] * p, *[AtomSpec("C", 2)] * s, *[AtomSpec("C", 1)] * t,
                 *[AtomSpec("C", 0)] * q)
        total += count(Spec(F(f"C{n}H{2 * n + 2}"), atoms=atoms))
    assert total == expected  # OEIS A000602
