"""Proton groups: which heavy atoms carry the observed H, and how many each.

Each observed 1H signal of *n* H is read as a set of groups — CH3, CH2, CH,
one half of a CH2 whose two H appear in two different signals (diastereotopic
or vinylic =CH2), OH, NH, NH2, SH — whose H add up to *n*.  A CP-SAT model
chooses one reading per signal so that the whole is consistent with the
formula (carbons, heteroatoms that can carry H, total H; any H missing from
the integrals must sit on O/N/S and exchange unseen).  Several readings may
survive; each becomes a :class:`Hypothesis`: an exact multiset of heavy atoms
with fixed H counts and, where the multiplicity is first order, the number of
H on neighbouring carbons (n+1 rule).

The shift of a signal limits which groups it may hold (a CH3 above 4.7 ppm or
a C–H above 10.7 ppm does not occur in neutral organic molecules: common
practice) and makes some readings less likely than others (a CH2 in the
aromatic region, a sharp triplet read as OH, a signal read as a mixture of
different groups).  Those preferences are an integer plausibility cost; the
hypotheses come out cheapest first.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from elucidate.constrain.fragments import shares_j
from elucidate.errors import InputError
from elucidate.model import Formula, H1Signal, Problem

__all__ = [
    "GROUP_KINDS",
    "Group",
    "Hypothesis",
    "HypothesisSet",
    "attachment_class",
    "neighbour_counts",
    "proton_groups",
]

#: Group kinds: (label, element, H per group).  ``CH2/2`` is one H of a CH2
#: whose other H sits in a different signal.
GROUP_KINDS: tuple[tuple[str, str, int], ...] = (
    ("CH3", "C", 3),
    ("CH2", "C", 2),
    ("CH", "C", 1),
    ("CH2/2", "C", 1),
    ("OH", "O", 1),
    ("NH", "N", 1),
    ("NH2", "N", 2),
    ("SH", "S", 1),
)

# Highest low edge of a signal that may still hold each group (ppm, common
# practice: CH3 on N/O/halogen stays below ~4.4, CH2 incl. =CH2 and O–CH2–O
# below ~6.5, aldehyde CH up to ~10.5; exchangeable H anywhere).
_MAX_SHIFT = {"CH3": 4.7, "CH2": 6.9, "CH": 10.7, "CH2/2": 6.9,
              "OH": 99.0, "NH": 12.5, "NH2": 9.0, "SH": 5.0}

# A coupling below this (Hz) may be long-range (4J meta/allylic/propargylic)
# or to an aldehyde H; it counts as an optional vicinal partner
# (common practice: 3J(H,H) sp3 6-8 Hz, ortho 7-9 Hz; 4J 0-3 Hz).
_SMALL_J = 3.2

_SOLVENTS_SHOWING_XH_COUPLING = ("dmso", "acetone")

# A J this large (Hz) on an sp3 H is geminal: the H is one of a CH2 pair
# (2J(H,H) 12-18 Hz; vicinal sp3 couplings stay below about 12 Hz: common practice).
_GEMINAL_J = 12.0

# Ring H (aromatic, heteroaromatic) lie at or above this shift (ppm; the
# window of the ring fragment rules, common practice).
_RING_H_LOW = 6.3


@dataclass(frozen=True)
class Group:
    """One heavy atom that carries observed (or unobserved exchangeable) H.

    Parameters
    ----------
    kind : str
        ``CH3``, ``CH2``, ``CH``, ``CH2 (split)``, ``OH``, ``NH``, ``NH2``, ``SH``.
    element : str
        Element of the heavy atom.
    h_count : int
        H on the atom.
    signals : tuple of int
        Indices into ``Problem.h1`` where its H show; empty = not observed.
    neighbour_h : frozenset of int or None
        Allowed totals of H on bonded carbons (n+1 rule); ``None`` = free.
    """

    kind: str
    element: str
    h_count: int
    signals: tuple[int, ...]
    neighbour_h: frozenset[int] | None = None

    def spec_key(self) -> tuple[str, int, tuple[int, ...]]:
        """(element, H, allowed neighbour-H counts; () = no rule)."""
        nh = () if self.neighbour_h is None else tuple(sorted(self.neighbour_h))
        return (self.element, self.h_count, nh)

    def sort_key(self) -> tuple:
        return (*self.spec_key(), self.kind, self.signals)


@dataclass(frozen=True)
class Hypothesis:
    """One way of distributing the H of the formula over heavy atoms.

    ``groups`` are the heavy atoms with H; ``bare`` the number of heavy atoms
    of each element without H.  ``cost`` is the plausibility cost (0 = the
    most natural reading); ``readings`` says, per signal, what it was read as.
    """

    groups: tuple[Group, ...]
    bare: tuple[tuple[str, int], ...]
    cost: int
    readings: tuple[str, ...]

    def key(self) -> tuple:
        """What the generator sees: the multiset of atoms with H and neighbour rules."""
        return (tuple(sorted(g.spec_key() for g in self.groups)), self.bare)

    def without_neighbour_rules(self) -> "Hypothesis":
        groups = tuple(Group(g.kind, g.element, g.h_count, g.signals, None) for g in self.groups)
        return Hypothesis(groups, self.bare, self.cost, self.readings)

    def describe(self) -> str:
        counts: dict[str, int] = {}
        for g in self.groups:
            counts[g.kind] = counts.get(g.kind, 0) + 1
        parts = [f"{n} {k}" if n > 1 else k for k, n in sorted(counts.items())]
        parts += [f"{n} {el} without H" for el, n in self.bare if n]
        return ", ".join(parts)


@dataclass(frozen=True)
class HypothesisSet:
    """All surviving hypotheses, cheapest first, with the bookkeeping."""

    hypotheses: tuple[Hypothesis, ...]
    h_observed: tuple[int, ...]  # integer H per signal as used
    unobserved_h: int  # H of the formula not in the integrals (exchangeable)
    complete: bool  # False if enumeration hit its cap
    warnings: tuple[str, ...] = field(default_factory=tuple)


def attachment_class(signal: H1Signal) -> str:
    """The usual attachment class of an H at this shift (common practice).

    Examples
    --------
    >>> from elucidate.model import H1Signal
    >>> attachment_class(H1Signal(9.8, 9.8, 9.8, "s", (), 1, 1))
    'aldehyde CHO (or exchangeable XH)'
    """
    d = signal.shift
    if d >= 10.7:
        return "acid / H-bonded OH or NH"
    if d >= 9.0:
        return "aldehyde CHO (or exchangeable XH)"
    if d >= 6.5:
        return "aromatic / heteroaromatic CH (or amide NH, formyl, vinylic)"
    if d >= 4.5:
        return "vinylic CH, O–CH–O, or ester O–CH"
    if d >= 3.0:
        return "CH on O, N or halogen (or exchangeable XH)"
    if d >= 1.9:
        return "CH next to C=O, aromatic ring, C=C, C≡C, N or S"
    return "alkyl CH (or exchangeable XH)"


_XH_KINDS = ("OH", "NH", "NH2", "SH")


def neighbour_counts(
    signal: H1Signal,
    formula: Formula,
    solvent: str | None = None,
    *,
    has_xh: bool = False,
    has_nh: bool = False,
    groups: int = 1,
    xh_partner: int = 0,
) -> frozenset[int] | None:
    """Allowed numbers of H on carbons bonded to the atom(s) of this signal.

    First-order multiplicity, n+1 rule: a ``t`` means two vicinal H, a
    ``dq`` four.  Couplings below 3.2 Hz may be long-range (meta, allylic)
    and count as optional.  ``m``, broad and apparent-second-order signals
    give no rule (``None``).  H–F and H–P couplings also split signals, so a
    formula with F or P only bounds the count from above; so do NH (amides,
    slow exchange) and OH in DMSO-d6 or acetone-d6, which the generator's
    count (H on carbon only) leaves out; so does an OH/NH signal of the
    reading that reports the same J (``xh_partner``: its H, at most 2).

    When the signal holds ``groups`` > 1 groups of one kind, H of the same
    signal do not split each other (isochronous H show no coupling among
    themselves: the four H of 1,2-dichloroethane are one singlet), so up to
    ``groups - 1`` neighbours from the signal itself may add their H
    uncounted.  Two or more equivalent ring H in one signal (shift at least
    6.3 ppm) belong to an AA'BB'-type system whose second-order lines can
    look like more splittings than there are neighbours (the "dd, J = 5.7,
    3.3 Hz" of a phthalate): the count is then only an upper bound (common
    practice).

    Examples
    --------
    >>> from elucidate.model import H1Signal, Formula
    >>> f = Formula((("C", 4), ("H", 8), ("O", 2)))
    >>> sorted(neighbour_counts(H1Signal(4.12, 4.12, 4.12, "q", (7.1,), 2, 2), f))
    [3]
    >>> sorted(neighbour_counts(H1Signal(2.33, 2.33, 2.33, "dq", (7.5, 1.5), 2, 2), f))
    [1, 2, 3, 4]
    >>> sorted(neighbour_counts(H1Signal(3.73, 3.73, 3.73, "s", (), 4, 4), f, groups=2))
    [0, 2]
    """
    pattern = signal.pattern
    if pattern is None or signal.broad:
        return None
    couplings = signal.couplings if len(signal.couplings) == len(pattern) else ()
    required = 0
    optional = 0
    for i, lines in enumerate(pattern):
        partners = lines - 1
        if couplings and couplings[i] < _SMALL_J:
            optional += partners
        else:
            required += partners
    allowed = set(range(required, required + optional + 1))
    if signal.shift >= 9.3:
        # aldehyde H: 3J(CHO, CH) is 1-3 Hz and often unresolved (common practice)
        allowed = set(range(0, required + optional + 3))
    if formula["F"] or formula["P"]:
        allowed = set(range(0, required + optional + 1))
    elif has_nh or (
        has_xh and solvent and any(s in solvent.lower() for s in _SOLVENTS_SHOWING_XH_COUPLING)
    ):
        # amide NH exchanges slowly and splits its neighbours (CH3-NH: d,
        # J ~5 Hz); OH does so in DMSO-d6/acetone-d6 (common practice). The
        # generator counts only H on carbon, so allow up to two fewer.
        allowed |= {v - k for v in allowed for k in (1, 2) if v - k >= 0}
    elif xh_partner:
        allowed |= {v - k for v in allowed for k in range(1, xh_partner + 1) if v - k >= 0}
    if groups > 1:
        per = max(1, round(signal.h_count) // groups)
        if signal.shift >= _RING_H_LOW and per == 1 and pattern != (1,):
            allowed = set(range(0, max(allowed) + 1))
        # a carbon with `per` H has at most 4 - per heavy neighbours, and v H
        # on the others need at least ceil(v / 3) of them
        allowed |= {
            v + j * per for v in allowed for j in range(1, groups)
            if j + -(-v // 3) <= 4 - per
        }
    return frozenset(allowed)


def proton_groups(
    problem: Problem,
    *,
    margin: int = 4,
    max_hypotheses: int = 400,
    carbon_h: dict[int, tuple[int, int]] | None = None,
) -> HypothesisSet:
    """Enumerate H-distribution hypotheses for a problem, cheapest first.

    Parameters
    ----------
    problem : Problem
        Formula and 1H signals.
    margin : int
        Keep hypotheses whose plausibility cost is at most the best + margin.
    max_hypotheses : int
        Stop enumerating after this many raw solutions (``complete`` false).
    carbon_h : dict, optional
        ``{h: (lo, hi)}``: bounds on the number of carbons carrying h H
        (0-3), e.g. from DEPT labels (:mod:`elucidate.constrain.evidence`);
        readings outside them are never produced.

    Returns
    -------
    HypothesisSet
        Possibly empty (integrals that exceed the formula's H, or signals no
        group can explain), with warnings saying why.

    Raises
    ------
    InputError
        If ``margin`` or ``max_hypotheses`` is negative.
    """
    if margin < 0 or max_hypotheses < 1:
        raise InputError("proton_groups: margin must be >= 0 and max_hypotheses >= 1")
    return _proton_groups(problem, margin, max_hypotheses, carbon_h or {})


# ----------------------------------------------------------------- internals


def _signal_h(problem: Problem) -> tuple[list[int], list[str]]:
    warnings: list[str] = []
    hs = []
    for i, s in enumerate(problem.h1):
        n = max(1, round(s.h_count))
        if abs(s.h_count - n) > 0.25:
            warnings.append(
                f"signal {i + 1} at {s.shift:.2f} ppm: integral {s.h_count:g} H read as {n} H"
            )
        hs.append(n)
    return hs, warnings


def _overlapped(s: H1Signal) -> bool:
    """A sharp multiplet or range below 4.4 ppm: aliphatic H overlapped with,
    or strongly coupled to, other H; its integral may be shared by different
    groups (common practice)."""
    return s.pattern is None and not s.broad and s.shift < 4.4


def _kind_cost(kind: str, s: H1Signal, n_groups: int) -> int:
    d = s.shift
    sharp_multiplet = s.pattern is not None and s.pattern != (1,) and not s.broad
    cost = 0
    if kind in ("OH", "NH", "NH2", "SH"):
        if sharp_multiplet:
            # an OH/NH coupled to its CH (d or t, 3J 3-6 Hz) in a dry sample
            # is seen; larger or several couplings are C-H (common practice)
            one_small_j = len(s.pattern or ()) == 1 and all(j <= 6.0 for j in s.couplings)
            cost += 2 if one_small_j and s.couplings else 4
        elif not s.broad:
            cost += 1
    else:
        if s.broad:
            cost += 1
        if kind == "CH2" and d > 6.6:
            cost += 4
        if kind == "CH3" and d > 4.1:
            cost += 2
        # a CH3 gives a sharp s/d/t; one reported as a multiplet is usually
        # overlapped by other H (common practice)
        if kind == "CH3" and _overlapped(s):
            cost += 1 if n_groups == 1 else 2
        # several equivalent CH2 or CH in one aliphatic signal: possible
        # (symmetry) but less usual than CH3 groups or one CH2
        if kind in ("CH", "CH2") and d < 4.4 and n_groups > 1:
            cost += 2
        if kind == "CH2/2":
            # a ring CH2 often shows its two H apart in overlapped multiplets;
            # a 1H sp3 signal with a J of 12 Hz or more shows its geminal
            # partner (2J(H,H) 12-18 Hz, common practice)
            geminal = d < 4.4 and round(s.h_count) == 1 and any(j >= _GEMINAL_J for j in s.couplings)
            if not geminal:
                cost += 1 if 4.4 <= d <= 6.6 or _overlapped(s) else 2
    return cost


def _proton_groups(
    problem: Problem, margin: int, max_hypotheses: int, carbon_h: dict[int, tuple[int, int]]
) -> HypothesisSet:
    from ortools.sat.python import cp_model

    formula = problem.formula
    hs, warnings = _signal_h(problem)
    total_obs = sum(hs)
    deficit = formula["H"] - total_obs
    if deficit < 0:
        warnings.append(
            f"the integrals add up to {total_obs} H but {formula.hill} has {formula['H']}:"
            " no H-count hypothesis fits"
        )
        return HypothesisSet((), tuple(hs), 0, True, tuple(warnings))

    elements_with_h = {"C": formula["C"], "O": formula["O"], "N": formula["N"], "S": formula["S"]}
    m = cp_model.CpModel()
    x: dict[tuple[int, str], object] = {}
    used: dict[tuple[int, str], object] = {}
    cost_terms = []
    for i, s in enumerate(problem.h1):
        n = hs[i]
        kinds_here = []
        for kind, el, per in GROUP_KINDS:
            if elements_with_h[el] == 0 or s.shift_low > _MAX_SHIFT[kind] or per > n:
                continue
            ub = n // per
            if kind == "CH2/2":
                ub = min(ub, 2)
            v = m.new_int_var(0, ub, f"x{i}_{kind}")
            b = m.new_bool_var(f"u{i}_{kind}")
            m.add(v >= 1).only_enforce_if(b)
            m.add(v == 0).only_enforce_if(~b)
            x[i, kind] = v
            used[i, kind] = b
            kinds_here.append((kind, per))
        if not kinds_here:
            warnings.append(f"signal {i + 1} at {s.shift:.2f} ppm: no group of this formula can give it")
            return HypothesisSet((), tuple(hs), deficit, True, tuple(warnings))
        m.add(sum(per * x[i, k] for k, per in kinds_here) == n)
        n_types = sum(used[i, k] for k, _ in kinds_here)
        max_types = 3 if (s.pattern is None and n >= 5) else 2
        m.add(n_types <= max_types)
        extra = m.new_int_var(0, max_types, f"mix{i}")
        m.add(extra >= n_types - 1)
        # an overlapped aliphatic multiplet of several H is often a mixture
        cost_terms.append((2 if _overlapped(s) and n >= 2 else 3) * extra)
        for k, _ in kinds_here:
            # cost per group kind is a function of the count (n_groups) — use the
            # one-group and several-group costs
            c1 = _kind_cost(k, s, 1)
            c2 = _kind_cost(k, s, 2)
            if c1:
                cost_terms.append(c1 * used[i, k])
            if c2 > c1:
                several = m.new_bool_var(f"sev{i}_{k}")
                m.add(x[i, k] >= 2).only_enforce_if(several)
                m.add(x[i, k] <= 1).only_enforce_if(~several)
                cost_terms.append((c2 - c1) * several)

    def total(kind: str):
        return sum(v for (i, k), v in x.items() if k == kind)

    # unobserved exchangeable H
    un = {}
    for kind, el, per in GROUP_KINDS[4:]:
        if elements_with_h[el] and deficit >= per:
            un[kind] = m.new_int_var(0, deficit // per, f"un_{kind}")
    m.add(sum(dict((k, p) for k, _, p in GROUP_KINDS)[k] * v for k, v in un.items()) == deficit)
    for v in un.values():
        cost_terms.append(v)

    halves = total("CH2/2")
    for (i, k), v in x.items():
        if k == "CH2/2":
            m.add(2 * v <= halves)
    n_half_pairs = m.new_int_var(0, formula["C"], "pairs")
    m.add(2 * n_half_pairs == halves)
    m.add(total("CH3") + total("CH2") + total("CH") + n_half_pairs <= formula["C"])
    by_h = {
        3: total("CH3") + 0 * n_half_pairs,
        2: total("CH2") + n_half_pairs,
        1: total("CH") + 0 * n_half_pairs,
        0: formula["C"] - total("CH3") - total("CH2") - total("CH") - n_half_pairs,
    }
    for h, (lo, hi) in sorted(carbon_h.items()):
        m.add(by_h[h] >= lo)
        m.add(by_h[h] <= hi)
    m.add(total("OH") + un.get("OH", 0) <= formula["O"])
    m.add(total("NH") + total("NH2") + un.get("NH", 0) + un.get("NH2", 0) <= formula["N"])
    m.add(total("SH") + un.get("SH", 0) <= formula["S"])

    objective = sum(cost_terms)
    m.minimize(objective)
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.max_time_in_seconds = 10.0
    status = solver.solve(m)
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        warnings.append(
            "no way to read every signal as CH3/CH2/CH/OH/NH/SH groups within the formula"
            + (" and the DEPT carbon counts" if carbon_h else "")
        )
        return HypothesisSet((), tuple(hs), deficit, True, tuple(warnings))
    best = round(solver.objective_value)

    m.clear_objective()
    cost_var = m.new_int_var(0, best + margin, "cost")
    m.add(cost_var == objective)
    solutions: list[tuple[int, dict]] = []

    class _Collect(cp_model.CpSolverSolutionCallback):
        def __init__(self) -> None:
            super().__init__()
            self.capped = False

        def on_solution_callback(self) -> None:
            values = {key: self.value(v) for key, v in x.items()}
            values.update({("un", k): self.value(v) for k, v in un.items()})
            solutions.append((self.value(cost_var), values))
            if len(solutions) >= max_hypotheses:
                self.capped = True
                self.stop_search()

    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.enumerate_all_solutions = True
    solver.parameters.max_time_in_seconds = 10.0
    cb = _Collect()
    status = solver.solve(m, cb)
    complete = not cb.capped and status == cp_model.OPTIMAL
    if not complete:
        warnings.append(
            f"H-count hypotheses: enumeration stopped after {len(solutions)} readings"
        )

    seen: dict[tuple, Hypothesis] = {}
    for cost, values in sorted(solutions, key=lambda cv: (cv[0], sorted((str(k), v) for k, v in cv[1].items()))):
        hyp = _build(problem, formula, hs, values, cost)
        # readings that give the generator the same atoms may still differ in
        # which signal holds which group, and fragment rules carve their atoms
        # out of the matched signals' groups: keep both
        k = (hyp.key(), tuple(sorted((g.spec_key(), g.signals) for g in hyp.groups)))
        if k not in seen or seen[k].cost > hyp.cost:
            seen[k] = hyp
    hyps = sorted(seen.values(), key=lambda h: (h.cost, repr(h.key())))
    return HypothesisSet(tuple(hyps), tuple(hs), deficit, complete, tuple(warnings))


def _build(problem: Problem, formula: Formula, hs: list[int], values: dict, cost: int) -> Hypothesis:
    groups: list[Group] = []
    readings: list[str] = []
    has_xh = any(
        v for (i, k), v in values.items() if k in ("OH", "NH", "NH2", "SH") and v
    )
    has_nh = any(v for (i, k), v in values.items() if k in ("NH", "NH2") and v)
    halves: list[int] = []
    for i, s in enumerate(problem.h1):
        kinds = [(k, values.get((i, k), 0)) for k, _, _ in GROUP_KINDS]
        present = [(k, v) for k, v in kinds if v]
        pure = len(present) == 1 and present[0][0] in ("CH3", "CH2", "CH")
        # an OH or NH of this reading that shows the same J couples to it
        # (CH-OH of a dry CDCl3 solution: d, J = 3-5 Hz, on both signals)
        xh_partner = sum(
            v for (j, k), v in values.items()
            if v and isinstance(j, int) and j != i and k in _XH_KINDS and shares_j(s, problem.h1[j])
            and not any(w for (j2, k2), w in values.items() if j2 == j and k2 not in _XH_KINDS)
        )
        nb = (
            neighbour_counts(s, formula, problem.solvent, has_xh=has_xh, has_nh=has_nh, groups=present[0][1],
                             xh_partner=min(xh_partner, 2))
            if pure else None
        )
        text = []
        for kind, count in present:
            text.append(f"{count} {kind}" if count > 1 else kind)
            if kind == "CH2/2":
                halves += [i] * count
                continue
            el = next(e for k, e, _ in GROUP_KINDS if k == kind)
            per = next(p for k, _, p in GROUP_KINDS if k == kind)
            for _ in range(count):
                groups.append(Group(kind, el, per, (i,), nb if kind in ("CH3", "CH2", "CH") else None))
        readings.append(f"{hs[i]}H at {s.shift:.2f}: " + " + ".join(text))
    # pair halves of split CH2 across signals (first with last: a fixed, deterministic pairing)
    # pair the k-th half with the (k + n/2)-th in signal order: no signal holds
    # more than half of them (model constraint), so each pair spans two signals
    halves.sort()
    n_pairs = len(halves) // 2
    for k in range(n_pairs):
        groups.append(Group("CH2 (split)", "C", 2, (halves[k], halves[k + n_pairs]), None))
    for kind, el, per in GROUP_KINDS[4:]:
        for _ in range(values.get(("un", kind), 0)):
            groups.append(Group(kind, el, per, (), None))
    if any(values.get(("un", k), 0) for k, _, _ in GROUP_KINDS[4:]):
        readings.append(
            "not in the integrals: "
            + ", ".join(f"{values[('un', k)]} {k}" for k, _, _ in GROUP_KINDS[4:] if values.get(("un", k)))
        )
    used: dict[str, int] = {}
    for g in groups:
        used[g.element] = used.get(g.element, 0) + 1
    bare = tuple(
        (el, n - used.get(el, 0))
        for el, n in formula.counts
        if el != "H" and n - used.get(el, 0) > 0
    )
    return Hypothesis(tuple(sorted(groups, key=Group.sort_key)), bare, cost, tuple(readings))
