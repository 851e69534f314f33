"""constrain.groups: H-distribution hypotheses from a peak list."""

import pytest

from elucidate.constrain.groups import attachment_class, neighbour_counts, proton_groups
from elucidate.errors import InputError
from elucidate.model import Formula, H1Signal, Problem


def sig(shift, mult, h, j=(), broad=False):
    return H1Signal(shift, shift, shift, mult, tuple(j), h, h, broad=broad)


def formula(**counts):
    order = ("C", "H", "Br", "Cl", "F", "I", "N", "O", "P", "S", "Si")
    return Formula(tuple((el, counts[el]) for el in order if counts.get(el)))


# Ethyl acetate in CDCl3: 4.12 (q, 7.1, 2H), 2.05 (s, 3H), 1.26 (t, 7.1, 3H)
# (Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 1997, 62, 7512, trace-impurity table).
ETHYL_ACETATE = Problem(
    formula(C=4, H=8, O=2),
    (sig(4.12, "q", 2, [7.1]), sig(2.05, "s", 3), sig(1.26, "t", 3, [7.1])),
)

# Isobutyl propanoate, the worked example of DESIGN.md (values from memory).
ISOBUTYL_PROPANOATE = Problem(
    formula(C=7, H=14, O=2),
    (sig(3.87, "d", 2, [6.7]), sig(2.33, "q", 2, [7.6]), sig(1.92, "m", 1),
     sig(1.14, "t", 3, [7.6]), sig(0.93, "d", 6, [6.7])),
)


def _atoms(h):
    return sorted((g.kind, g.h_count, tuple(sorted(g.neighbour_h)) if g.neighbour_h else None) for g in h.groups)


def test_ethyl_acetate_best_reading():
    # n+1 rule (common practice): q -> 3 neighbouring H, s -> 0, t -> 2.
    hs = proton_groups(ETHYL_ACETATE)
    best = hs.hypotheses[0]
    assert _atoms(best) == [("CH2", 2, (3,)), ("CH3", 3, (0,)), ("CH3", 3, (2,))]
    assert dict(best.bare) == {"C": 1, "O": 2}
    assert best.cost == 0 and hs.complete


def test_isobutyl_propanoate_worked_example():
    # DESIGN.md: CH2 with one vicinal H, CH2 with three, CH (no rule), CH3 with
    # two, two equivalent CH3 with one; the 7th carbon and both O carry no H.
    best = proton_groups(ISOBUTYL_PROPANOATE).hypotheses[0]
    assert _atoms(best) == [
        ("CH", 1, None), ("CH2", 2, (1,)), ("CH2", 2, (3,)),
        ("CH3", 3, (1,)), ("CH3", 3, (1,)), ("CH3", 3, (2,)),
    ]
    assert dict(best.bare) == {"C": 1, "O": 2}


def test_hypotheses_sorted_and_distinct():
    hs = proton_groups(ISOBUTYL_PROPANOATE, margin=6)
    costs = [h.cost for h in hs.hypotheses]
    assert costs == sorted(costs)
    keys = [h.key() for h in hs.hypotheses]
    assert len(keys) == len(set(keys)) > 1


def test_missing_oh_goes_unobserved():
    # Ethanol in CDCl3 without its OH line: 3.72 (q, 2H), 1.25 (t, 3H)
    # (Gottlieb et al. 1997). The missing H must sit on O, unobserved.
    p = Problem(formula(C=2, H=6, O=1), (sig(3.72, "q", 2, [7.0]), sig(1.25, "t", 3, [7.0])))
    hs = proton_groups(p)
    assert hs.unobserved_h == 1
    best = hs.hypotheses[0]
    assert ("OH", 1, None) in _atoms(best)
    assert [g.signals for g in best.groups if g.kind == "OH"] == [()]


def test_integrals_above_formula_give_no_hypothesis():
    p = Problem(formula(C=2, H=6, O=1), (sig(3.72, "q", 4), sig(1.25, "t", 3)))
    hs = proton_groups(p)
    assert hs.hypotheses == ()
    assert "7 H" in hs.warnings[-1]


def test_vinyl_ch2_split_over_two_signals():
    # Vinyl acetate (from memory): 7.27 (dd, 14.0, 6.3), 4.87 (dd, 14.0, 1.6),
    # 4.56 (dd, 6.3, 1.6), 2.13 (s, 3H): the =CH2 H appear as two signals.
    p = Problem(
        formula(C=4, H=6, O=2),
        (sig(7.27, "dd", 1, [14.0, 6.3]), sig(4.87, "dd", 1, [14.0, 1.6]),
         sig(4.56, "dd", 1, [6.3, 1.6]), sig(2.13, "s", 3)),
    )
    hs = proton_groups(p, margin=4)
    splits = [
        g.signals for h in hs.hypotheses for g in h.groups if g.kind == "CH2 (split)"
    ]
    assert (1, 2) in splits


def test_shift_limits_group_kinds():
    # A CH3 above 4.7 ppm does not occur (common practice): a 3H signal at
    # 9.8 ppm must be read as CH/XH groups, never as one CH3.
    p = Problem(formula(C=3, H=6, O=1), (sig(9.8, "s", 3), sig(1.1, "t", 3, [7.0])))
    for h in proton_groups(p, margin=10).hypotheses:
        assert not any(g.kind == "CH3" and g.signals == (0,) for g in h.groups)


@pytest.mark.parametrize(
    "signal, expected",
    [
        (sig(4.12, "q", 2, [7.1]), {3}),           # n+1: quartet, 3 neighbours
        (sig(1.26, "t", 3, [7.1]), {2}),
        (sig(2.55, "sept", 1, [6.9]), {6}),        # isopropyl CH
        (sig(3.40, "dd", 1, [8.0, 2.0]), {1, 2}),  # J < 3.2 Hz may be 4J: optional
        (sig(1.50, "m", 2), None),                 # multiplet: no rule
        (sig(2.00, "s", 1, broad=True), None),     # broad: no rule
        (sig(9.70, "s", 1), {0, 1, 2}),            # aldehyde 3J often unresolved
    ],
)
def test_neighbour_counts(signal, expected):
    f = formula(C=6, H=12, O=1)
    got = neighbour_counts(signal, f)
    assert (None if got is None else set(got)) == expected


def test_neighbour_counts_with_fluorine_only_bound_above():
    # H-F coupling splits too (common practice), so a triplet in a fluorinated
    # compound means at most 2 vicinal H.
    f = formula(C=2, H=5, F=1)
    assert set(neighbour_counts(sig(1.35, "t", 3, [7.0]), f)) == {0, 1, 2}


@pytest.mark.parametrize(
    "name, signal, groups, expected",
    [
        # isochronous H do not split each other (common practice)
        ("1,2-dichloroethane, 3.73 (s, 4H)", sig(3.73, "s", 4), 2, {0, 2}),      # Gottlieb et al. 1997
        ("benzene, 7.36 (s, 6H)", sig(7.36, "s", 6), 6, {0, 1, 2, 3}),               # Gottlieb et al. 1997
        ("butane CH2, q (4H)", sig(1.30, "q", 4, [7.3]), 2, {3, 5}),              # from memory
        ("isopropyl CH3 pair, d (6H)", sig(0.93, "d", 6, [6.7]), 2, {1}),        # a CH3 has one neighbour
        # AA'BB' ring pair: the apparent dd of a phthalate is only an upper bound
        ("dimethyl phthalate, 7.72 (dd, 5.7, 3.3, 2H)", sig(7.72, "dd", 2, [5.7, 3.3]), 2, {0, 1, 2, 3}),  # from memory
    ],
)
def test_neighbour_counts_of_several_groups_in_one_signal(name, signal, groups, expected):
    f = formula(C=10, H=10, O=4)
    assert set(neighbour_counts(signal, f, groups=groups)) == expected


def test_geminal_j_marks_a_split_ch2():
    # camphor, CDCl3 (benchmark data, unknowns_large.toml, from memory):
    # 2.35 (ddd, 18.3, ...) and 1.84 (d, 18.3) are the two H of the CH2 next
    # to C=O; a J of 12-18 Hz on sp3 H is geminal (common practice), so a
    # reading with that split CH2 stays within the strict margin (3)
    from elucidate.parse import load_problem

    p = load_problem(
        formula="C10H16O",
        h1="2.35 (ddd, J = 18.3, 4.7, 3.2 Hz, 1H), 2.09 (t, J = 4.5 Hz, 1H), 1.98-1.90 (m, 1H), "
           "1.84 (d, J = 18.3 Hz, 1H), 1.72-1.64 (m, 1H), 1.45-1.30 (m, 2H), 0.96 (s, 3H), 0.92 (s, 3H), 0.84 (s, 3H)",
    )
    hs = proton_groups(p, margin=3)
    assert any(any(g.kind == "CH2 (split)" and 0 in g.signals for g in h.groups) for h in hs.hypotheses)
    assert any(
        sorted(g.kind for g in h.groups).count("CH2 (split)") + sorted(g.kind for g in h.groups).count("CH2") == 3
        and sum(g.kind == "CH" for g in h.groups) == 1
        for h in hs.hypotheses
    )  # the true distribution: 3 CH2, 1 CH, 3 CH3


def test_attachment_classes():
    assert attachment_class(sig(11.5, "s", 1, broad=True)).startswith("acid")
    assert attachment_class(sig(7.3, "m", 5)).startswith("aromatic")
    assert attachment_class(sig(0.9, "t", 3)).startswith("alkyl")


def test_bad_arguments():
    with pytest.raises(InputError, match="margin"):
        proton_groups(ETHYL_ACETATE, margin=-1)


def test_amide_nh_splitting_allowed():
    # N-methylacetamide (from memory): 2.80 (d, J = 4.8 Hz, 3H) — the CH3
    # couples to the amide NH, which the neighbour count (H on C) leaves out.
    p = Problem(formula(C=3, H=7, N=1, O=1),
                (sig(5.90, "s", 1, broad=True), sig(2.80, "d", 3, [4.8]), sig(1.98, "s", 3)))
    best = proton_groups(p).hypotheses[0]
    ch3 = [g for g in best.groups if g.signals == (1,)]
    assert ch3 and 0 in ch3[0].neighbour_h


def test_ch_coupled_to_its_oh_needs_no_carbon_neighbour_h():
    # diphenylmethanol (benzhydrol) in dry CDCl3 (case of unknowns_large.toml,
    # from memory): CH 5.84 (d, J = 3.5 Hz) and OH 2.25 (d, J = 3.5 Hz); the
    # CH's partner is the OH, so its carbon neighbours may carry no H
    from elucidate.parse import load_problem

    p = load_problem(formula="C13H12O", h1="7.40-7.22 (m, 10H), 5.84 (d, J = 3.5 Hz, 1H), 2.25 (d, J = 3.5 Hz, 1H)")
    hset = proton_groups(p)
    assert any(
        g.signals == (1,) and g.kind == "CH" and g.neighbour_h is not None and 0 in g.neighbour_h
        and any(o.kind == "OH" and o.signals == (2,) for o in h.groups)
        for h in hset.hypotheses for g in h.groups
    )
