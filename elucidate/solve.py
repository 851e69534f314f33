"""One unknown through the stages: constrain → generate → predict → score.

:func:`solve` returns every candidate allowed by the hard constraints, ranked
by fit, with the reasons for each rejection; :func:`explain` tells where one
given structure stands and why.

How the pieces fit (see docs/solve-dev.md):

1. ``constrain.groups`` reads the peak list as H-distribution hypotheses
   (which heavy atoms carry which H, and how many H their carbon
   neighbours carry — n+1 rule); ``constrain.fragments`` finds the fragments
   the signal patterns imply (hard ones are placed as super-atoms, soft ones
   only score).
2. Each hypothesis becomes one generator :class:`Spec`; the streams are
   merged and deduplicated by canonical SMILES.
3. Each new structure is predicted, given a cheap bound (or rejected on the
   spot with a reason), and the best few hundred get the full CP-SAT
   assignment.  Structures whose bound cannot beat the current top ``top``
   are not worth a full model, which keeps the ranking exact.
4. If a level leaves no candidate, or none fits well and the time left can
   cover a wider search, the hard constraints are relaxed step by step
   (hard fragments → more hypotheses → multiplicity rules → formula only);
   each step taken is listed in ``relaxed``, a step skipped for lack of time
   in ``not_searched`` and the warnings.
"""

from __future__ import annotations

import math
import time
from collections import Counter
from dataclasses import dataclass, field
from typing import Any, Callable

from elucidate._ortools import load_cp_model
from elucidate.advise import next_measurements
from elucidate.constrain.evidence import Evidence, Graph, read_evidence
from elucidate.constrain.fragments import (
    FragmentMatch,
    by_family,
    describe_evidence,
    fragment_atoms,
    hard_alternatives,
    match_fragments,
)
from elucidate.constrain.groups import Group, Hypothesis, HypothesisSet, proton_groups
from elucidate.errors import InputError, LimitReached
from elucidate.model import Candidate, Explanation, Prediction, Problem, Rejection, SolveResult
from elucidate.score import reasons as rs
from elucidate.score.assign import Fit, Weights, assign, quick_bound, unusual_groups

__all__ = ["solve", "explain", "strict_rejections", "Level", "LEVELS"]

#: Full CP-SAT models run on at least this many of the best-bounded structures.
FULL_MODEL_MIN = 300
#: Formula-only enumeration (last relaxation) stops after this many structures
#: unless the user set --max-structures.
FORMULA_ONLY_CAP = 20000
#: Rejection examples kept in the result (all are counted).
REJECTION_EXAMPLES = 25
#: Hypotheses left unsearched that an incomplete result names (all are counted).
NOT_SEARCHED_SHOWN = 8
#: Candidates (best first) whose per-item evidence status (2D cross peaks) is worked out for the report.
CHECKED_CANDIDATES = 50
#: Narrow and wide plausibility margins for the H-distribution hypotheses.
MARGIN_STRICT = 3
MARGIN_WIDE = 8
#: A wider level runs on a poor fit only if the time left is at least this
#: many times its estimated time (time per generator run so far times the
#: runs it adds; a wider run is larger than a strict one, hence the margin).
RELAX_TIME_FACTOR = 2.0


@dataclass(frozen=True)
class Level:
    """One set of hard constraints, strictest first."""

    name: str
    relaxation: str  # sentence listed in ``relaxed`` when this level runs
    margin: int | None  # hypothesis margin; None = formula only
    neighbour_rules: bool
    hard_fragments: bool
    min_tier: int = 1  # evidence (constrain.evidence) of this tier or higher stays hard

    def in_force(self, evidence: tuple[Evidence, ...]) -> tuple[Evidence, ...]:
        """The evidence that stays a hard constraint at this level."""
        return tuple(e for e in evidence if e.tier >= self.min_tier)


LEVELS: tuple[Level, ...] = (
    Level("strict", "", MARGIN_STRICT, True, True, 0),
    Level("long-range", "widened to admit 4-bond correlations and overlapped signals", MARGIN_STRICT, True, True, 1),
    Level("no-shift-rules", "turned into scores only", MARGIN_STRICT, True, True, 2),
    Level(
        "no-fragments",
        "hard fragment rules turned into soft ones and less likely H-count readings admitted",
        MARGIN_WIDE, True, False, 3,
    ),
    Level(
        "no-multiplicity",
        "multiplicity (n+1 neighbour-H) rules dropped; multiplicities only score",
        MARGIN_WIDE, False, False, 3,
    ),
    Level(
        "formula-only",
        "H-count readings of the peak list dropped: every isomer of the formula considered",
        None, False, False, 3,
    ),
)


def _relaxation(prev: Level, level: Level, evidence: tuple[Evidence, ...]) -> str | None:
    """The sentence listed when ``level`` follows ``prev`` (None: the level
    changes nothing and is skipped)."""
    dropped = [e.relaxation for e in prev.in_force(evidence) if e not in level.in_force(evidence)]
    same_rest = (prev.margin, prev.neighbour_rules, prev.hard_fragments) == (
        level.margin, level.neighbour_rules, level.hard_fragments)
    if same_rest and not dropped:
        return None
    if same_rest:
        return ", ".join(dropped) + " " + level.relaxation
    if dropped:
        return level.relaxation + "; dropped as hard rules: " + ", ".join(dropped)
    return level.relaxation


@dataclass(frozen=True)
class _Tallied:
    """An evidence constraint handed to the generator, counting what it turns down."""

    evidence: Evidence
    tally: dict = field(default_factory=dict, compare=False, hash=False)

    def min_unsaturated_carbons(self, formula: Any) -> int:
        return self.evidence.min_unsaturated_carbons(formula)

    def generator_options(self, options: Any) -> Any:
        return self.evidence.generator_options(options)

    def admits_structure(self, st: Any) -> bool:
        if self.evidence.admits_structure(st):
            return True
        self.tally[self.evidence.key] = self.tally.get(self.evidence.key, 0) + 1
        return False


@dataclass
class _Entry:
    smiles: str
    prediction: Prediction | None
    bound: float
    level: int
    fit: Fit | None = None
    soft_cost: float = 0.0
    soft_notes: tuple[str, ...] = ()


@dataclass
class _Run:
    """Mutable bookkeeping of one solve run."""

    problem: Problem
    deadline: float | None
    max_structures: int | None
    top: int = 10
    weights: Weights = field(default_factory=Weights)
    entries: dict[str, _Entry] = field(default_factory=dict)
    rejected: dict[str, tuple[str, str]] = field(default_factory=dict)  # smiles -> (category, sentence)
    generated: int = 0
    specs: int = 0
    visited: int = 0
    stopped_by: str | None = None
    relaxed: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    hypotheses_complete: bool = True
    levels_run: list[int] = field(default_factory=list)
    sentences: dict[int, str] = field(default_factory=dict)  # level index -> its listed relaxation
    full_models: int = 0
    progress: Callable[[str, int, int | None], None] | None = None
    evidence: tuple[Evidence, ...] = ()
    tally: dict[str, int] = field(default_factory=dict)  # evidence key -> structures turned down
    not_searched: list[str] = field(default_factory=list)
    pool: Any = None  # elucidate.workers.SolvePool when workers > 1


# ------------------------------------------------------------------ public


def solve(
    problem: Problem,
    *,
    top: int = 10,
    time_limit_s: float | None = None,
    max_structures: int | None = None,
    progress: Callable[[str, int, int | None], None] | None = None,
    workers: int = 1,
) -> SolveResult:
    """Rank every structure allowed by the peak list's hard constraints.

    Parameters
    ----------
    problem : Problem
        Formula, 1H signals (13C optional), user require/forbid SMARTS.
    top : int
        Number of ranked candidates to return.
    time_limit_s : float, optional
        Wall-clock limit for the whole search; when hit, ``complete`` is
        False and the best so far are returned.
    max_structures : int, optional
        Cap on generated structures (same effect as the time limit).
    progress : callable, optional
        ``progress(phase, done, total)`` is called as structures are built
        and scored (see :mod:`elucidate.report.progress`); ``None``: silent.
    workers : int
        Local processes for building, predicting and scoring structures
        (:mod:`elucidate.workers`); the result is the same for any number.

    Returns
    -------
    SolveResult

    Raises
    ------
    InputError
        No 1H signals, or a non-positive ``top`` / limit / ``workers``.

    Examples
    --------
    >>> from elucidate.parse import load_problem
    >>> p = load_problem(formula="C4H8O2",
    ...     h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    >>> r = solve(p)
    >>> r.candidates[0].smiles, r.complete
    ('CCOC(C)=O', True)
    """
    _validate(problem, top, time_limit_s, max_structures, workers)
    load_cp_model()  # CP-SAT without pandas (start-up)
    run, ranked = _solve(problem, time_limit_s, max_structures, top, progress, workers)
    return _result(run, ranked, top)


def explain(
    problem: Problem,
    smiles: str,
    *,
    top: int = 10,
    time_limit_s: float | None = None,
    max_structures: int | None = None,
    progress: Callable[[str, int, int | None], None] | None = None,
    workers: int = 1,
) -> Explanation:
    """Why one structure is (or is not) a good answer, and where it ranks.

    Parameters
    ----------
    problem : Problem
        The unknown.
    smiles : str
        The structure the chemist has in mind.
    top, time_limit_s, max_structures, progress, workers
        As for :func:`solve` (the ranking needs the full search).

    Returns
    -------
    Explanation
        ``verdict`` is ``consistent``, ``poor fit`` or ``rejected``.

    Raises
    ------
    InputError
        Bad SMILES (names it), or the same errors as :func:`solve`.
    """
    _validate(problem, top, time_limit_s, max_structures, workers)
    load_cp_model()  # CP-SAT without pandas (start-up)
    canonical = _canonical(smiles)
    return _explain(problem, canonical, top, time_limit_s, max_structures, progress, workers)


# ------------------------------------------------------------- validation


def _validate(
    problem: Problem, top: int, time_limit_s: float | None, max_structures: int | None, workers: int = 1
) -> None:
    if not problem.h1:
        raise InputError("no 1H signals: solve needs a 1H peak list (--h1 or [h1] in the case file)")
    if top < 1:
        raise InputError(f"--top {top}: must be at least 1")
    if time_limit_s is not None and time_limit_s <= 0:
        raise InputError(f"--time-limit {time_limit_s:g}: must be positive")
    if max_structures is not None and max_structures < 1:
        raise InputError(f"--max-structures {max_structures}: must be at least 1")
    if workers < 1:
        raise InputError(f"--workers {workers}: must be at least 1")


def _canonical(smiles: str) -> str:
    from rdkit import Chem, RDLogger

    RDLogger.DisableLog("rdApp.*")
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None or not smiles.strip():
        raise InputError(f"SMILES {smiles!r} does not parse")
    return Chem.MolToSmiles(mol)


# ------------------------------------------------------------------ search


def _solve(
    problem: Problem,
    time_limit_s: float | None,
    max_structures: int | None,
    top: int = 10,
    progress: Any = None,
    workers: int = 1,
) -> tuple[_Run, list[_Entry]]:
    start = time.monotonic()
    run = _Run(problem, None if time_limit_s is None else start + time_limit_s, max_structures, top)
    run.progress = progress
    if workers > 1:
        from elucidate.workers import SolvePool

        with SolvePool(workers) as run.pool:  # stopped at once on an error or Ctrl-C
            result = _search(run)
        run.pool = None
        return result
    return _search(run)


def _search(run: _Run) -> tuple[_Run, list[_Entry]]:
    problem = run.problem
    run.warnings.extend(problem.warnings)
    matches = match_fragments(problem)
    hard = [m for m in matches if m.rule.strength == "hard"]
    run.evidence = read_evidence(problem)
    hyp_cache: dict[tuple, HypothesisSet] = {}
    prev_specs: set = set()
    prev_level: Level | None = None
    searched_s = 0.0  # time spent in the levels run so far
    searched = 0  # generator specs run so far
    for li, level in enumerate(LEVELS):
        planned = None
        if prev_level is not None:
            sentence = _relaxation(prev_level, level, run.evidence)
            if sentence is None:
                continue
            if run.stopped_by:
                run.not_searched.append(f"relaxation level '{level.name}' ({sentence})")
                continue

            def estimate(level: Level = level) -> float:
                # time per spec so far times the specs this level adds
                nonlocal planned
                planned = _level_specs(problem, level, hard, hyp_cache, run)
                fresh = sum(1 for spec, _ in planned[0] if _spec_key(spec) not in prev_specs)
                return searched_s / max(searched, 1) * max(fresh, 1)

            go, note = _should_relax(run, estimate)
            if not go:
                if note:
                    run.not_searched.append(f"relaxation level '{level.name}' and wider ({sentence}): {note}")
                    run.warnings.append(
                        "no candidate is consistent with every signal, but relaxing the hard rules further "
                        f"(level '{level.name}') was not tried: {note}"
                    )
                break
            run.relaxed.append(sentence)
            run.sentences[li] = sentence
        prev_level = level
        run.levels_run.append(li)
        level_start = time.monotonic()
        specs, complete, warnings = planned or _level_specs(problem, level, hard, hyp_cache, run)
        run.hypotheses_complete = complete
        run.warnings.extend(w for w in warnings if w not in run.warnings)
        if run.pool is not None and not run.stopped_by:
            _plan(run, [s for s, _ in specs if _spec_key(s) not in prev_specs], level)
        for k, (spec, label) in enumerate(specs):
            if run.stopped_by:
                run.not_searched.append(f"{label} (level '{level.name}')")
                continue
            key = _spec_key(spec)
            if key in prev_specs:
                continue
            prev_specs.add(key)
            searched += 1
            _consume(run, spec, li, level)
            if run.stopped_by:
                run.not_searched.append(f"{label} (level '{level.name}', stopped part-way)")
        _score_pool(run, matches, hard if not level.hard_fragments else [])
        searched_s += time.monotonic() - level_start
    ranked = _ranked(run)
    return run, ranked


def _has_consistent(run: _Run) -> bool:
    return any(e.fit is not None and e.fit.verdict == "consistent" for e in run.entries.values())


def _should_relax(run: _Run, estimate: Callable[[], float]) -> tuple[bool, str]:
    """Whether the next, wider level runs, and why not when it does not.

    A level that leaves no candidate at all (the hard rules contradict the
    data: no reading fits, or every structure built was turned down) is
    always relaxed.  When candidates exist but none fits consistently, the
    next level runs only if the time left can cover it: ``estimate()`` (the
    time per generator run so far times the runs the level adds) times
    ``RELAX_TIME_FACTOR``.  A consistent candidate ends the relaxation.
    """
    if not run.entries:
        return True, ""
    if _has_consistent(run):
        return False, ""
    if run.deadline is None:
        return True, ""
    need = RELAX_TIME_FACTOR * estimate()
    if run.deadline - time.monotonic() >= need:
        return True, ""
    # no figures in the sentence: output stays the same bytes for the same input
    return False, "the time left is less than the wider search would take"


def _level_specs(
    problem: Problem, level: Level, hard: list[FragmentMatch], cache: dict, run: _Run
) -> tuple[list, bool, tuple[str, ...]]:
    """Generator specs of one level (with labels), whether the H-count
    readings are complete, and the warnings of reading them."""
    from elucidate.generate import AtomSpec, FragmentSpec, Spec

    evidence = level.in_force(run.evidence)
    checks = tuple(_Tallied(e, run.tally) for e in evidence)
    if level.margin is None:
        spec = Spec(problem.formula, None, (), tuple(problem.require), tuple(problem.forbid), _options(problem), checks)
        return [(spec, "every isomer of the formula")], True, ()
    bounds: dict[int, tuple[int, int]] = {}
    for e in evidence:
        for h, (lo, hi) in (e.group_bounds() or {}).items():
            old = bounds.get(h, (0, problem.formula["C"]))
            bounds[h] = (max(old[0], lo), min(old[1], hi))
    ckey = (level.margin, tuple(sorted(bounds.items())))
    if ckey not in cache:
        cache[ckey] = proton_groups(problem, margin=level.margin, carbon_h=bounds)
    hset: HypothesisSet = cache[ckey]
    specs = []
    seen = set()
    # one spec per hypothesis and per choice of one alternative in each
    # fragment family (product over families); a pair that cannot host the
    # chosen fragments is dropped
    choices = hard_alternatives(hard) if level.hard_fragments else [()]
    for hyp in hset.hypotheses:
        h = hyp if level.neighbour_rules else hyp.without_neighbour_rules()
        for choice in choices:
            carved = _carve_choice(h, choice)
            if carved is None:
                continue
            groups, bare, found, _ = carved
            frags = [FragmentSpec(f[0], f[1], f[2]) for f in found]
            atoms = [AtomSpec(g.element, g.h_count, g.neighbour_h, _label(g, problem)) for g in groups]
            atoms += [AtomSpec(el, 0, None, "") for el, n in sorted(bare.items()) for _ in range(n)]
            spec = Spec(problem.formula, tuple(atoms), tuple(frags), tuple(problem.require), tuple(problem.forbid),
                        _options(problem), checks)
            key = _spec_key(spec)
            if key in seen:
                continue
            seen.add(key)
            label = "H-count reading: " + h.describe()
            if frags:
                label += " with " + ", ".join(f.label or f.smiles for f in frags)
            specs.append((spec, label))
    return specs, hset.complete, hset.warnings


def _options(problem: Problem) -> Any:
    """Generator switches the formula calls for: nitro groups and N-oxides
    when N and O are present, S(IV/VI) with S, P(V) with P."""
    from elucidate.generate import Options

    f = problem.formula
    return Options(
        hypervalent_s=f["S"] > 0 and f["O"] > 0,
        pentavalent_p=f["P"] > 0,
        charge_separated=f["N"] > 0 and f["O"] >= 2,
    )


def _label(g: Group, problem: Problem) -> str:
    where = "/".join(f"{problem.h1[i].shift:.2f}" for i in g.signals) or "unobserved"
    return f"{g.kind}@{where}"


def _spec_key(spec: Any) -> tuple:
    atoms = None if spec.atoms is None else tuple(
        sorted((a.element, a.h_count, tuple(sorted(a.neighbour_h)) if a.neighbour_h is not None else ()) for a in spec.atoms)
    )
    frags = tuple(sorted((f.smiles, tuple(sorted((k, tuple(sorted(v))) for k, v in f.neighbour_h.items()))) for f in spec.fragments))
    checks = tuple(sorted(repr(c.evidence) for c in spec.checks))
    return atoms, frags, checks


def _carve_choice(hyp: Hypothesis, choice: tuple[FragmentMatch, ...]):  # type: ignore[no-untyped-def]
    """Carve every fragment of one choice out of a hypothesis, in order:
    (groups left, bare atoms left, the fragments, the groups taken), or
    None when the hypothesis cannot host them all."""
    groups, bare = list(hyp.groups), dict(hyp.bare)
    frags: list = []
    taken: list[Group] = []
    for match in choice:
        carved = _carve(groups, bare, match)
        if carved is None:
            return None
        groups, bare, frag, took = carved
        frags.append(frag)
        taken += took
    return groups, bare, frags, taken


def _carve(groups: list[Group], bare: dict[str, int], match: FragmentMatch):
    """Take a hard fragment's atoms out of a hypothesis (None if it cannot host it)."""
    groups = list(groups)
    bare = dict(bare)
    allowed = set(match.signals)
    # a fragment owning only part of a signal's H (rings sharing a
    # multiplet) takes groups up to its share of each signal
    left = dict(match.shares) if match.shares else None
    picked: dict[tuple[str, int], list[tuple[int, Group]]] = {}
    for idx, (el, h) in enumerate(fragment_atoms(match.rule.smiles)):
        if h == 0:
            if bare.get(el, 0) <= 0:
                return None
            bare[el] -= 1
            continue
        pick = next(
            (g for g in groups if g.element == el and g.h_count == h and g.signals
             and set(g.signals) <= allowed and g.kind != "CH2 (split)"
             and (left is None or (len(g.signals) == 1 and left.get(g.signals[0], 0) >= h))),
            None,
        )
        if pick is None:
            return None
        if left is not None:
            left[pick.signals[0]] -= h
        groups.remove(pick)
        picked.setdefault((el, h), []).append((idx, pick))
    # Which fragment atom stands for which signal is not known (ortho vs para
    # H of a phenyl), so atoms of one (element, H) class share the union of
    # their groups' neighbour rules — or get none if any group has none.
    nb: dict[int, frozenset[int]] = {}
    taken: list[Group] = []
    for members in picked.values():
        sets = [g.neighbour_h for _, g in members]
        union = frozenset().union(*sets) if all(x is not None for x in sets) else None
        for idx, g in members:
            taken.append(Group(g.kind, g.element, g.h_count, g.signals, union))
            if union is not None:
                nb[idx] = union
    return groups, {k: v for k, v in bare.items() if v}, (match.rule.smiles, nb, match.rule.name), taken


def _remaining(run: _Run) -> tuple[float | None, int | None]:
    t = None if run.deadline is None else run.deadline - time.monotonic()
    n = None if run.max_structures is None else run.max_structures - run.generated
    return t, n


def _consume(run: _Run, spec: Any, level_index: int, level: Level) -> None:
    from elucidate.generate import Limits, Stats, generate

    t, n = _remaining(run)
    if (t is not None and t <= 0) or (n is not None and n <= 0):
        run.stopped_by = "time limit" if t is not None and t <= 0 else "structure limit"
        return
    if level.margin is None and run.max_structures is None:
        n = FORMULA_ONLY_CAP
    stats = Stats()
    run.specs += 1
    count_here = 0
    limits = Limits(max_structures=n, time_limit_s=t)
    if run.pool is not None:
        stream = run.pool.structures(spec, limits, stats, run.problem, run.weights)
    else:
        stream = ((smi, None) for smi in generate(spec, limits=limits, stats=stats))
    try:
        for smi, prepared in stream:
            count_here += 1
            run.generated += 1
            if run.progress is not None:
                run.progress("building structures", run.generated, None)
            if smi in run.entries or smi in run.rejected:
                continue
            _add(run, smi, level_index, prepared)
    except LimitReached:
        run.stopped_by = _which_limit(run, level, count_here, n)
    stopped = getattr(stats, "stopped_by", None)
    if stopped and not run.stopped_by:
        run.stopped_by = _which_limit(run, level, count_here, n)
    run.visited += int(getattr(stats, "visited", 0) or 0)


def _plan(run: _Run, specs: list, level: Level) -> None:
    """Let the worker pool start a level's searches ahead of :func:`_consume`."""
    from elucidate.generate import Limits

    t, n = _remaining(run)
    if level.margin is None and run.max_structures is None:
        n = FORMULA_ONLY_CAP
    run.pool.plan(specs, Limits(max_structures=n, time_limit_s=t), run.problem, run.weights)


def _which_limit(run: _Run, level: Level, count: int, n: int | None) -> str:
    if n is not None and count >= n:
        if level.margin is None and run.max_structures is None:
            return f"formula-only cap of {FORMULA_ONLY_CAP} structures"
        return "structure limit"
    return "time limit"


def _prepare(problem: Problem, weights: Weights, smi: str) -> tuple[Prediction, float, str | None]:
    """A new structure's prediction, cheap bound and rejection reason (None: kept)."""
    from elucidate.predict import predict

    prediction = predict(smi, solvent=problem.solvent, field_mhz=problem.field_mhz)
    bound, reason = quick_bound(problem, prediction, weights)
    return prediction, bound, reason


def _add(run: _Run, smi: str, level_index: int, prepared: tuple | None = None) -> None:
    prediction, bound, reason = prepared or _prepare(run.problem, run.weights, smi)
    if reason is not None:
        run.rejected[smi] = (_category(reason), reason)
        return
    run.entries[smi] = _Entry(smi, prediction, bound, level_index)


def _category(reason: str) -> str:
    """Group rejection sentences for the summary (drop the numbers of the
    particular structure, keep the signal it fails)."""
    if reason.startswith("needs a "):
        return reason.split(" (", 1)[0]
    if reason.startswith("cannot give these signals"):
        return "several signals' integrals cannot all be met"
    if reason.startswith("has only"):
        return "too few distinct H environments"
    if "no observed signal holds more than" in reason:
        return "a set of equivalent H larger than any signal"
    if "non-exchangeable H but" in reason or "signals need at least" in reason:
        return "H count does not match the integrals"
    return reason


# ---------------------------------------------------------------- scoring


def _score_pool(run: _Run, matches: list[FragmentMatch], demoted_hard: list[FragmentMatch]) -> None:
    soft = [m for m in matches if m.rule.strength == "soft"] + list(demoted_hard)
    pending = sorted((e for e in run.entries.values() if e.fit is None), key=lambda e: (e.bound, e.smiles))
    if not pending:
        return
    done = sorted((e.fit.cost + e.soft_cost for e in run.entries.values() if e.fit is not None and e.fit.feasible))
    ahead = None if run.pool is None else run.pool.fits(run.problem, run.weights, [e.prediction for e in pending])
    try:
        _score_in_order(run, pending, done, soft, ahead)
    finally:
        if ahead is not None:
            ahead.close()


def _score_in_order(run: _Run, pending: list[_Entry], done: list[float], soft: list[FragmentMatch],
                    ahead: Any) -> None:
    for k, entry in enumerate(pending):
        kth = done[run.top - 1] if len(done) >= run.top else math.inf
        if run.full_models >= FULL_MODEL_MIN and entry.bound >= kth:
            break  # bound-only: cannot enter the top `top`
        if run.deadline is not None and time.monotonic() > run.deadline and k >= run.top:
            run.stopped_by = run.stopped_by or "time limit"
            break  # out of time: the rest keep their cheap bound
        if run.progress is not None:
            run.progress("scoring", k + 1, len(pending))
        fit = next(ahead) if ahead is not None else assign(run.problem, entry.prediction, weights=run.weights)
        run.full_models += 1
        if not fit.feasible:
            run.rejected[entry.smiles] = (_category(fit.reasons[0]), fit.reasons[0])
            del run.entries[entry.smiles]
            continue
        entry.fit = fit
        entry.soft_cost, entry.soft_notes = _soft_terms(entry.smiles, soft)
        done.append(fit.cost + entry.soft_cost)
        done.sort()


def _soft_terms(smiles: str, soft: list[FragmentMatch]) -> tuple[float, tuple[str, ...]]:
    """Soft fragments the data suggest but the structure lacks, plus the
    prior against rarely isolated groups."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    cost, prior_notes = unusual_groups(smiles)
    notes = list(prior_notes)
    for alternatives in by_family(soft):
        # a family counts once: the structure needs one of its alternatives
        if any(mol.HasSubstructMatch(_fragment_query(m.rule.smiles)) for m in alternatives):
            continue
        cost += max(m.rule.weight for m in alternatives)
        if len(alternatives) == 1:
            m = alternatives[0]
            notes.append(f"no {m.rule.name} group, which the data suggest ({m.rule.source})")
        else:
            names = " or ".join(m.rule.name for m in alternatives)
            notes.append(f"no {names} ring, one of which the data suggest ({alternatives[0].rule.source})")
    return cost, tuple(notes)


_QUERIES: dict[str, Any] = {}


def _has_fragments(mol: Any, choice: tuple[FragmentMatch, ...]) -> bool:
    """Does the molecule contain every fragment of a choice, as many times
    as the choice holds it (two phenyls: two matches)?"""
    need = Counter(m.rule.smiles for m in choice)
    return all(len(mol.GetSubstructMatches(_fragment_query(frag), maxMatches=n + 1)) >= n
               for frag, n in need.items())


def _fragment_query(smiles: str) -> Any:
    """SMARTS query of a fragment with exact H counts; dummies match any atom."""
    if smiles in _QUERIES:
        return _QUERIES[smiles]
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    query = Chem.RWMol(Chem.MolFromSmarts(Chem.MolToSmarts(mol)))
    for atom in mol.GetAtoms():
        if atom.GetAtomicNum() == 0:
            qa = Chem.AtomFromSmarts("*")
        else:
            arom = "a" if atom.GetIsAromatic() else "A"
            qa = Chem.AtomFromSmarts(f"[#{atom.GetAtomicNum()};{arom};H{atom.GetTotalNumHs()}]")
        query.ReplaceAtom(atom.GetIdx(), qa)
    # a port bond is single in the fragment, but the generator may close it
    # into a fused aromatic ring (a benzo ring of an indole or benzofuran is
    # a 1,2-disubstituted benzene fragment), where RDKit reads it aromatic
    port_bond = Chem.BondFromSmarts("-,:")
    for bond in mol.GetBonds():
        if 0 in (bond.GetBeginAtom().GetAtomicNum(), bond.GetEndAtom().GetAtomicNum()):
            query.ReplaceBond(bond.GetIdx(), port_bond)
    _QUERIES[smiles] = query.GetMol()
    return _QUERIES[smiles]


def _total(entry: _Entry) -> float:
    return (entry.fit.cost if entry.fit is not None else entry.bound) + entry.soft_cost


def _ranked(run: _Run) -> list[_Entry]:
    full = [e for e in run.entries.values() if e.fit is not None]
    bound_only = [e for e in run.entries.values() if e.fit is None]
    full.sort(key=lambda e: (round(_total(e), 6), e.smiles))
    bound_only.sort(key=lambda e: (round(e.bound, 6), e.smiles))
    return full + bound_only


def _candidate(entry: _Entry, rank: int, run: _Run) -> Candidate:
    notes = list(entry.fit.notes if entry.fit else ("ranked by its cheap bound only",))
    notes += entry.soft_notes
    if entry.level > 0:
        notes.append(f"found only after relaxing: {run.sentences.get(entry.level, LEVELS[entry.level].relaxation)}")
    verdict = entry.fit.verdict if entry.fit else "poor fit"
    rows: tuple = ()
    if rank <= CHECKED_CANDIDATES and any(type(e).check_rows is not Evidence.check_rows for e in run.evidence):
        # atom indices as in the drawing (the prediction's SMILES when there is one)
        graph = Graph.from_smiles(entry.prediction.smiles if entry.prediction is not None else entry.smiles)
        rows = tuple(row for e in run.evidence for row in e.check_rows(graph))
    return Candidate(
        rank=rank,
        smiles=entry.smiles,
        score=round(_total(entry), 4),
        verdict=verdict,
        assignments=entry.fit.assignments if entry.fit else (),
        notes=tuple(notes),
        prediction=entry.prediction,
        c13_assignments=entry.fit.c13_assignments if entry.fit else (),
        checks=rows,
    )


def _result(run: _Run, ranked: list[_Entry], top: int) -> SolveResult:
    candidates = tuple(_candidate(e, i + 1, run) for i, e in enumerate(ranked[:top]))
    counts: dict[str, int] = {}
    for cat, _ in run.rejected.values():
        counts[cat] = counts.get(cat, 0) + 1
    titles = {e.key: e.title for e in run.evidence}
    for key, n in run.tally.items():
        counts[f"{titles[key]} not met (turned down while building)"] = n
    rejected_counts = tuple(sorted(counts.items(), key=lambda kv: (-kv[1], kv[0])))
    examples = tuple(
        Rejection(smi, (sentence,)) for smi, (_, sentence) in sorted(run.rejected.items())[:REJECTION_EXAMPLES]
    )
    complete = run.stopped_by is None and run.hypotheses_complete
    warnings = list(run.warnings)
    if not complete:
        warnings.append(
            "INCOMPLETE SEARCH: "
            + (f"stopped by the {run.stopped_by}" if run.stopped_by else "H-count hypotheses were capped")
            + "; the true structure may be missing from the list"
        )
        if run.not_searched:
            shown = run.not_searched[:NOT_SEARCHED_SHOWN]
            more = len(run.not_searched) - len(shown)
            warnings.append(
                "not searched: " + "; ".join(shown) + (f"; and {more} more" if more > 0 else "")
            )
    n_full = sum(1 for e in run.entries.values() if e.fit is not None)
    result_counts = (
        ("levels", len(run.levels_run)),
        ("generator_runs", run.specs),
        ("generated", run.generated),
        ("unique", len(run.entries) + len(run.rejected)),
        ("partial_structures_visited", run.visited),
        ("ranked", len(ranked)),
        ("full_models", run.full_models),
        ("fully_scored", n_full),
        ("bound_only", len(ranked) - n_full),
        ("rejected", len(run.rejected) + sum(run.tally.values())),
        ("rejected_while_building", sum(run.tally.values())),
        ("not_searched", len(run.not_searched)),
    )
    return SolveResult(
        problem=run.problem,
        complete=complete,
        candidates=candidates,
        rejected=examples,
        rejected_counts=rejected_counts,
        relaxed=tuple(run.relaxed),
        counts=result_counts,
        warnings=tuple(warnings),
        stopped_by=run.stopped_by,
        not_searched=tuple(run.not_searched),
        evidence=tuple(f"{e.title}: {e.describe()}" for e in run.evidence),
        next_measurements=next_measurements(run.problem, candidates),
    )


# ----------------------------------------------------------------- explain


def _structure_atoms(smiles: str) -> list[tuple[str, int, int]]:
    """(element, H, H on bonded carbons) for each heavy atom."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    out = []
    for a in mol.GetAtoms():
        nb = sum(n.GetTotalNumHs() for n in a.GetNeighbors() if n.GetSymbol() == "C")
        out.append((a.GetSymbol(), a.GetTotalNumHs(), nb))
    return out


def _hypothesis_fits(hyp: Hypothesis, atoms: list[tuple[str, int, int]]) -> bool:
    """Bipartite matching of hypothesis groups to structure atoms."""
    groups = list(hyp.groups)
    bare = dict(hyp.bare)
    need_bare: dict[str, int] = {}
    with_h = []
    for i, (el, h, nb) in enumerate(atoms):
        if h == 0:
            need_bare[el] = need_bare.get(el, 0) + 1
        else:
            with_h.append(i)
    if need_bare != {k: v for k, v in bare.items() if v}:
        return False
    if len(with_h) != len(groups):
        return False
    match: dict[int, int] = {}

    def ok(g: Group, i: int) -> bool:
        el, h, nb = atoms[i]
        return g.element == el and g.h_count == h and (g.neighbour_h is None or nb in g.neighbour_h)

    def augment(gi: int, seen: set[int]) -> bool:
        for i in with_h:
            if i in seen or not ok(groups[gi], i):
                continue
            seen.add(i)
            if i not in match or augment(match[i], seen):
                match[i] = gi
                return True
        return False

    return all(augment(gi, set()) for gi in range(len(groups)))


def strict_rejections(problem: Problem, smiles: str) -> tuple[str, ...]:
    """Why a structure breaks the hard constraints of the strictest level.

    The same constraints the search applies at level ``strict`` (the first
    of :data:`LEVELS`): the H-count readings of the peak list with their
    n+1 neighbour-H rules (narrowed by any DEPT counts in force), the hard
    fragments carved out as the search carves them, the evidence in force
    and the user's SMARTS.  Cheap: nothing is generated.

    Parameters
    ----------
    problem : Problem
        The unknown.
    smiles : str
        The structure (any valid SMILES).

    Returns
    -------
    tuple of str
        One sentence per broken rule; empty when the structure meets them
        all (then the strict search can produce it).

    Raises
    ------
    InputError
        Bad SMILES (names it), or a problem without 1H signals.

    Examples
    --------
    >>> from elucidate.parse import load_problem
    >>> p = load_problem(formula="C4H8O2",
    ...     h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)")
    >>> strict_rejections(p, "CCOC(C)=O")
    ()
    >>> strict_rejections(p, "COCC(C)=O")[0].startswith("the 2H quartet at 4.12 ppm needs a CH2 with 3 H")
    True
    """
    _validate(problem, 1, None, None)
    canonical = _canonical(smiles)
    if _formula_of(canonical) != problem.formula.hill:
        return (f"its formula is {_formula_of(canonical)}, not {problem.formula.hill}",)
    return tuple(_constraint_reasons(problem, canonical, LEVELS[0]))


def _strict_hypotheses(problem: Problem, level: Level, evidence: tuple[Evidence, ...]) -> HypothesisSet:
    """The H-count readings the search uses at ``level`` (DEPT bounds applied)."""
    bounds: dict[int, tuple[int, int]] = {}
    for e in level.in_force(evidence):
        for h, (lo, hi) in (e.group_bounds() or {}).items():
            old = bounds.get(h, (0, problem.formula["C"]))
            bounds[h] = (max(old[0], lo), min(old[1], hi))
    return proton_groups(problem, margin=level.margin, carbon_h=bounds)


def _carved_hypotheses(hyp: Hypothesis, choices: list[tuple[FragmentMatch, ...]]) -> list[Hypothesis]:
    """The hypothesis as each choice of hard fragments leaves it for the
    generator: fragment atoms keep the union of their groups' neighbour rules."""
    out = []
    for choice in choices:
        carved = _carve_choice(hyp, choice)
        if carved is not None:
            groups, _, _, taken = carved
            out.append(Hypothesis(tuple(groups + taken), hyp.bare, hyp.cost, hyp.readings))
    return out


def _constraint_reasons(problem: Problem, smiles: str, level: Level) -> list[str]:
    """Why a structure violates the hard constraints of ``level`` (empty if it does not)."""
    from rdkit import Chem

    atoms = _structure_atoms(smiles)
    mol = Chem.MolFromSmiles(smiles)
    evidence = read_evidence(problem)
    hset = _strict_hypotheses(problem, level, evidence)
    hard = [m for m in match_fragments(problem) if m.rule.strength == "hard"] if level.hard_fragments else []
    # only the fragment choices this structure contains can produce it
    present = [choice for choice in hard_alternatives(hard) if _has_fragments(mol, choice)]
    reasons: list[str] = []
    if not hset.hypotheses:
        reasons.append("no reading of the peak list as H-bearing groups fits the formula"
                       + (" and the DEPT counts" if any(e.group_bounds() for e in evidence) else ""))
    elif present:
        fits = [
            carved for hyp in hset.hypotheses for carved in _carved_hypotheses(hyp, present)
        ]
        if not any(_hypothesis_fits(h, atoms) for h in fits):
            reasons += _hypothesis_reasons(problem, hset, atoms)
    for e in level.in_force(evidence):
        why = e.reason(Graph.from_smiles(smiles))
        if why is not None:
            reasons.append(f"{why} ({e.title}, a hard rule)")
    for alternatives in by_family(hard):
        if any(mol.HasSubstructMatch(_fragment_query(m.rule.smiles)) for m in alternatives):
            continue
        first = alternatives[0]
        said = f"{first.rule.evidence} ({describe_evidence(first, problem)})"
        if len(alternatives) == 1:
            reasons.append(f"{said} imply {first.rule.phrase} (hard rule: {first.rule.source}); this structure has none")
        else:
            phrases = [m.rule.phrase for m in alternatives]
            either = ", ".join(phrases[:-1]) + " or " + phrases[-1]
            reasons.append(
                f"{said} imply {either} (the data cannot tell which; hard rule: {first.rule.source}); "
                "this structure has none of them"
            )
    # several rings read from one window (two phenyls) need as many copies
    singles = [alts[0] for alts in by_family(hard) if len(alts) == 1]
    copies = Counter(m.rule.smiles for m in singles)
    for frag, need in sorted(copies.items()):
        have = len(mol.GetSubstructMatches(_fragment_query(frag)))
        if need > 1 and 0 < have < need:
            first = next(m for m in singles if m.rule.smiles == frag)
            reasons.append(f"{first.rule.evidence} ({describe_evidence(first, problem)}) imply {need} rings of this "
                           f"kind: {first.rule.phrase} (hard rule: {first.rule.source}); this structure has {have}")
    for sm in problem.require:
        q = Chem.MolFromSmarts(sm)
        if q is not None and not mol.HasSubstructMatch(q):
            reasons.append(f"lacks the required substructure {sm}")
    for sm in problem.forbid:
        q = Chem.MolFromSmarts(sm)
        if q is not None and mol.HasSubstructMatch(q):
            reasons.append(f"contains the forbidden substructure {sm}")
    return reasons


def _hypothesis_reasons(problem: Problem, hset: HypothesisSet, atoms: list[tuple[str, int, int]]) -> list[str]:
    """Sentences for a structure that no H-count reading (with its n+1 rules) fits."""
    best = next((h for h in hset.hypotheses if _hypothesis_fits(h.without_neighbour_rules(), atoms)), None)
    reasons: list[str] = []
    if best is not None:
        # the H counts fit: name the multiplicity rules that fail
        for i, s in enumerate(problem.h1):
            for g in (g for g in best.groups if g.signals == (i,) and g.neighbour_h is not None):
                hits = [nb for el, h, nb in atoms if el == g.element and h == g.h_count]
                if not any(nb in g.neighbour_h for nb in hits):
                    want = "/".join(str(v) for v in sorted(g.neighbour_h))
                    have = ", ".join(str(v) for v in sorted(set(hits))) or "none"
                    reasons.append(
                        f"the {rs.describe_signal(s)} needs a {g.kind} with {want} H on neighbouring "
                        f"carbons (n+1 rule); this structure's {g.kind} groups have {have}"
                    )
                    break
        if not reasons:
            reasons.append(
                "its groups cannot all meet the n+1 neighbour-H rules of the H-count reading "
                f"({best.describe()}) at once"
            )
        return reasons
    counts: dict[str, int] = {}
    for el, h, _ in atoms:
        key = (f"{el}H{h}" if h > 1 else f"{el}H") if h else f"{el} without H"
        counts[key] = counts.get(key, 0) + 1
    have = ", ".join(f"{n} {k}" for k, n in sorted(counts.items()))
    return [
        "its H distribution matches no reading of the peak list "
        f"(structure: {have}; most likely reading: {hset.hypotheses[0].describe()})"
    ]


def _formula_of(smiles: str) -> str:
    from rdkit import Chem
    from rdkit.Chem.rdMolDescriptors import CalcMolFormula

    return CalcMolFormula(Chem.MolFromSmiles(smiles))


def _explain(
    problem: Problem, smiles: str, top: int, time_limit_s: float | None, max_structures: int | None,
    progress: Any = None, workers: int = 1,
) -> Explanation:
    from elucidate.predict import predict

    formula = _formula_of(smiles)
    if formula != problem.formula.hill:
        reason = f"its formula is {formula}, not {problem.formula.hill}"
        return Explanation(problem, smiles, "rejected", None, 0, None, Rejection(smiles, (reason,)), (reason,), True, ())
    constraint_reasons = _constraint_reasons(problem, smiles, LEVELS[0])
    prediction = predict(smiles, solvent=problem.solvent, field_mhz=problem.field_mhz)
    bound, quick_reason = quick_bound(problem, prediction)
    fit = None
    reasons: list[str] = list(constraint_reasons)
    if quick_reason is not None:
        reasons.insert(0, quick_reason)
    else:
        fit = assign(problem, prediction)
        if not fit.feasible:
            reasons = list(fit.reasons) + reasons
    run, ranked = _solve(problem, time_limit_s, max_structures, top, progress, workers)
    rank = next((i + 1 for i, e in enumerate(ranked) if e.smiles == smiles), None)
    total = len(ranked)
    if fit is None or not fit.feasible:
        verdict = "rejected"
        candidate = None
        rejection = Rejection(smiles, tuple(reasons))
    else:
        matches = match_fragments(problem)
        soft = [m for m in matches if m.rule.strength == "soft"]
        soft_cost, soft_notes = _soft_terms(smiles, soft)
        entry = _Entry(smiles, prediction, bound, 0, fit, soft_cost, soft_notes)
        if rank is None:
            # not generated under the hard constraints: where would it stand?
            would = 1 + sum(1 for e in ranked if _total(e) < _total(entry))
            reasons.append(f"by its fit alone it would rank {would} of {total + 1}")
        candidate = _candidate(entry, rank or 0, run)
        verdict = "rejected" if constraint_reasons and rank is None else fit.verdict
        if verdict != "consistent":
            reasons += list(fit.notes)
        rejection = Rejection(smiles, tuple(reasons)) if verdict == "rejected" else None
    complete = run.stopped_by is None and run.hypotheses_complete
    warnings = tuple(run.warnings) + (
        () if complete else (f"INCOMPLETE SEARCH: stopped by the {run.stopped_by or 'hypothesis cap'}; the rank is among the structures seen",)
    )
    return Explanation(problem, smiles, verdict, rank, total, candidate, rejection, tuple(reasons), complete, warnings)
