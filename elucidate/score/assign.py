"""Match predicted H environments to observed signals and price the fit.

Two steps, as the design asks:

* :func:`quick_bound` — a cheap lower bound on the fit cost (each environment
  to its cheapest signal, integrals ignored) plus necessary conditions that
  reject outright (an environment larger than any signal, fewer environments
  than signals).  Thousands of candidates are ranked by it in milliseconds.
* :func:`assign` — the full CP-SAT model on the best few hundred: every
  environment goes to exactly one signal, or to "not observed" if its H
  exchange; a CH2 may split its two H over two signals (diastereotopic or
  vinylic =CH2) at a cost; each signal's integral must equal the H it receives
  within a tolerance; several environments may share a signal at a cost.
  Cost = Σ |δ_pred − δ_obs| / uncertainty + multiplicity mismatches +
  overlaps + integral deviations (+ 13C, see :func:`carbon_cost`).
  When the integral constraints cannot all hold, CP-SAT's
  ``sufficient_assumptions_for_infeasibility`` names the signals in conflict
  and :mod:`elucidate.score.reasons` turns them into a sentence.

Costs are in "units of typical error": a perfect fit is 0; every environment
within its prediction uncertainty adds less than 1.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field
from typing import Any

from elucidate.errors import InputError
from elucidate.model import Assignment, C13Assignment, Environment, H1Signal, Prediction, Problem, multiplicity_pattern
from elucidate.score import reasons as rs

__all__ = ["Weights", "Fit", "quick_bound", "assign", "carbon_cost", "signal_tolerance", "unusual_groups"]


@dataclass(frozen=True)
class Weights:
    """Cost weights (common practice: one multiplicity step weighs about one
    typical shift error; overlaps of first-order signals are unusual)."""

    multiplicity_step: float = 0.8
    pattern_shape: float = 0.3
    overlap_first_order: float = 1.0
    overlap_multiplet: float = 0.25
    split_ch2: float = 0.6
    split_ch2_diastereotopic: float = 0.2
    split_equivalent: float = 1.0  # topologically equivalent groups seen apart
    exchangeable_sharp: float = 1.0  # OH/NH as a sharp line is less usual
    not_observed: float = 0.3
    integral_per_h: float = 1.5
    min_uncertainty: float = 0.1
    # likelihood normalisation: a vague prediction (coarse fallback) must not
    # fit better than a sharp one just by being vague; ln(u / u_ref) per
    # non-exchangeable environment, never negative
    vague_reference: float = 0.3
    # verdicts
    consistent_z: float = 3.0  # every shift within this many typical errors
    consistent_max_ppm: float = 3.0  # ... and within this many ppm, however vague the prediction
    consistent_mult_steps: int = 1
    # 13C (elucidate.score.carbon): per carbon, in typical errors
    carbon_missing: float = 2.0  # a line without a carbon, or a carbon without a line
    carbon_shift: float = 1.0  # weight of the 13C term (3 x mean cost per carbon)
    carbon_count: float = 1.0  # per carbon a stated (2C) count is off
    carbon_overlap: float = 0.5  # per extra class on one line (accidental overlap)
    carbon_split: float = 0.5  # an equivalent pair seen as two lines (diastereotopic, rotamers)
    carbon_dept: float = 4.0  # per carbon whose H count contradicts the line's DEPT label
    carbon_min_uncertainty: float = 1.0


@dataclass(frozen=True)
class Fit:
    """The result of scoring one structure against the observed 1H (13C) data."""

    feasible: bool
    cost: float
    verdict: str  # "consistent" | "poor fit" | "rejected"
    assignments: tuple[Assignment, ...] = ()
    notes: tuple[str, ...] = ()
    reasons: tuple[str, ...] = ()
    carbon: float = 0.0
    details: dict = field(default_factory=dict, compare=False)
    c13_assignments: tuple[C13Assignment, ...] = ()


def signal_tolerance(h_count: float) -> tuple[int, int]:
    """Integer H a signal of this integral may receive (common practice:
    integrals are good to about ±10 % plus a third of a proton).

    Examples
    --------
    >>> signal_tolerance(2.0), signal_tolerance(9.0)
    ((2, 2), (8, 10))
    """
    tol = 0.34 + 0.1 * h_count
    lo = max(1, math.ceil(h_count - tol))
    hi = max(lo, math.floor(h_count + tol))
    return lo, hi


# ------------------------------------------------------------- pair costs


def _shift_dev(env: Environment, s: H1Signal) -> float:
    lo, hi = min(s.shift_low, s.shift_high), max(s.shift_low, s.shift_high)
    if env.shift < lo:
        return env.shift - lo
    if env.shift > hi:
        return env.shift - hi
    return 0.0


def _mult_steps(env: Environment, s: H1Signal) -> tuple[float, int]:
    """(shape cost units, neighbour-count steps) between predicted and observed."""
    obs = s.pattern
    if obs is None or s.broad or env.exchangeable:
        return 0.0, 0
    pred = multiplicity_pattern(env.multiplicity)
    if pred is None:
        return 1.0, 0  # predicted a multiplet, observed first order: shape only
    # small couplings (4J aromatic meta, allylic, W and =CH2 geminal, 0-3 Hz,
    # common practice) are resolved in one paper and not in the next: a
    # small J the data show and the prediction lacks, or one the prediction
    # keeps and the data do not show, is no mismatch, so the patterns
    # without them are compared too and the best reading counts
    if _aabb(s):
        return 0.0, 0  # second order: the printed J are not partner counts
    observed = [obs]
    if s.couplings and len(s.couplings) == len(obs) and any(j < LONG_RANGE_J for j in s.couplings):
        observed.append(tuple(k for k, j in zip(obs, s.couplings) if j >= LONG_RANGE_J) or (1,))
    predicted = [pred]
    if any(c.j_hz < LONG_RANGE_J for c in env.couplings):
        predicted.append(tuple(c.h_count + 1 for c in env.couplings if c.j_hz >= LONG_RANGE_J) or (1,))
    return min(_steps(o, q) for o in observed for q in predicted)


#: J (Hz) below which a splitting is taken for a long-range (or =CH2 geminal) one
LONG_RANGE_J = 2.2


def _aabb(s: H1Signal) -> bool:
    """A half of an AA'BB' ring pattern printed as a 2H dd with apparent J
    of 5-6.6 and 2.6-3.9 Hz (phthalates, 1,2-dichlorobenzene; common
    practice, the same window as ``fragments/benzene_ortho_aabb.toml``)."""
    js = sorted(s.couplings, reverse=True)
    return (s.multiplicity == "dd" and round(s.h_count) == 2 and len(js) == 2
            and 5.0 <= js[0] <= 6.6 and 2.6 <= js[1] <= 3.9)


def _steps(obs: tuple[int, ...], pred: tuple[int, ...]) -> tuple[float, int]:
    n_obs = sum(k - 1 for k in obs)
    n_pred = sum(k - 1 for k in pred)
    shape = 0.0 if tuple(sorted(obs)) == tuple(sorted(pred)) else 1.0
    return shape, min(abs(n_obs - n_pred), 4)


def _pair_cost(env: Environment, s: H1Signal, w: Weights) -> float:
    u = max(env.uncertainty, w.min_uncertainty)
    z = abs(_shift_dev(env, s)) / u
    shape, steps = _mult_steps(env, s)
    sharp = w.exchangeable_sharp if env.exchangeable and not s.broad else 0.0
    return z + w.pattern_shape * shape + w.multiplicity_step * steps + sharp


def _units(env: Environment, smiles: str = "") -> tuple[int, int]:
    """(H per unit, number of units) an environment may be cut into.

    A CH2 on one carbon may show its two H apart (diastereotopic or =CH2);
    topologically equivalent groups may show apart when rotation is slow
    or E/Z differ (the two N-CH3 of an amide, the two CH3 of an
    isopropylidene): one unit per atom.  Exchangeable H stay whole.
    """
    if env.exchangeable:
        return env.h_count, 1
    if len(env.atoms) == 1 and env.h_count == 2:
        return 1, 2
    k = len(env.atoms)
    if k == 2 and env.h_count % 2 == 0 and _apart(smiles, env.atoms):
        return env.h_count // 2, 2
    return env.h_count, 1


@functools.lru_cache(maxsize=4096)
def _apart(smiles: str, atoms: tuple[int, ...]) -> bool:
    """Whether two topologically equivalent groups may still show apart:
    both on one alkene carbon (E/Z to the other end), on an amide N (slow
    C–N rotation), or on one sp3 carbon of a molecule with a stereocentre
    elsewhere (diastereotopic groups: the isopropyl methyls of menthol, the
    gem-dimethyl of camphor give two signals); so may a pair bonded to such
    a pair, up to two bonds out (the two CH3 of an N,N-diethylamide) —
    common practice."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None or max(atoms) >= mol.GetNumAtoms():
        return False
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False))
    pair = (atoms[0], atoms[1])
    for _ in range(3):
        if _apart_here(mol, pair):
            return True
        a, b = (mol.GetAtomWithIdx(i) for i in pair)
        step = [
            (x.GetIdx(), y.GetIdx()) for x in a.GetNeighbors() for y in b.GetNeighbors()
            if x.GetIdx() != y.GetIdx() and ranks[x.GetIdx()] == ranks[y.GetIdx()]
            and x.GetIdx() not in pair and y.GetIdx() not in pair
        ]
        if len(step) != 1:
            return False
        pair = step[0]
    return False


def _apart_here(mol: Any, atoms: tuple[int, int]) -> bool:
    from rdkit import Chem

    from elucidate.predict.environments import stereocentres

    a, b = (mol.GetAtomWithIdx(i) for i in atoms)
    common = {n.GetIdx() for n in a.GetNeighbors()} & {n.GetIdx() for n in b.GetNeighbors()}
    centres: list[int] | None = None
    for x in (mol.GetAtomWithIdx(i) for i in common):
        if x.GetSymbol() == "C" and x.GetHybridization() == Chem.HybridizationType.SP3:
            centres = stereocentres(mol) if centres is None else centres
            if any(c != x.GetIdx() for c in centres):
                return True
        for bond in x.GetBonds():
            other = bond.GetOtherAtom(x)
            if x.GetSymbol() == "C" and bond.GetBondType() == Chem.BondType.DOUBLE and other.GetSymbol() == "C":
                return True
            if x.GetSymbol() == "N" and other.GetSymbol() == "C" and other.GetIdx() not in atoms and any(
                bb.GetBondType() == Chem.BondType.DOUBLE and bb.GetOtherAtom(other).GetSymbol() in ("O", "S")
                for bb in other.GetBonds()
            ):
                return True
    return False


def _vagueness(envs: tuple[Environment, ...], w: Weights) -> float:
    return sum(
        max(0.0, math.log(max(e.uncertainty, w.min_uncertainty) / w.vague_reference))
        for e in envs
        if not e.exchangeable
    )


def _splittable(env: Environment, smiles: str = "") -> bool:
    return _units(env, smiles)[1] > 1


def _split_penalty(env: Environment, w: Weights) -> float:
    if len(env.atoms) == 1:
        return w.split_ch2_diastereotopic if env.diastereotopic else w.split_ch2
    return w.split_equivalent


# ------------------------------------------------------------ quick bound


def quick_bound(problem: Problem, prediction: Prediction, weights: Weights = Weights()) -> tuple[float, str | None]:
    """Lower bound on :func:`assign`'s cost, or a rejection reason.

    Returns
    -------
    (bound, reason)
        ``reason`` is None when the structure passes the necessary checks.
    """
    signals = problem.h1
    envs = prediction.environments
    if not signals:
        return 0.0, None
    caps = [signal_tolerance(s.h_count) for s in signals]
    largest = max(hi for _, hi in caps)
    for e in envs:
        if e.exchangeable:
            continue
        if _units(e, prediction.smiles)[0] > largest:
            return math.inf, rs.too_large(e, largest)
    units = sum(_units(e, prediction.smiles)[1] for e in envs)
    if units < len(signals):
        return math.inf, rs.too_few_environments(len(envs), len(signals))
    fixed = sum(e.h_count for e in envs if not e.exchangeable)
    total_all = sum(e.h_count for e in envs)
    lo_sum = sum(lo for lo, _ in caps)
    hi_sum = sum(hi for _, hi in caps)
    if fixed > hi_sum + 0:
        return math.inf, (
            f"has {fixed} non-exchangeable H but the signals hold at most {hi_sum}H"
        )
    if total_all < lo_sum:
        return math.inf, f"has {total_all} H but the signals need at least {lo_sum}H"
    bound = 0.0
    for e in envs:
        best = min(_pair_cost(e, s, weights) for s in signals)
        if e.exchangeable:
            best = min(best, weights.not_observed)
        bound += best
    from elucidate.score.carbon import c13_bound

    return bound + _vagueness(envs, weights) + c13_bound(problem, prediction, weights), None


# ----------------------------------------------------------- full model


def assign(
    problem: Problem,
    prediction: Prediction,
    *,
    weights: Weights = Weights(),
    time_limit_s: float = 2.0,
) -> Fit:
    """Best assignment of predicted environments to observed signals (CP-SAT).

    Parameters
    ----------
    problem : Problem
        Observed signals (and 13C).
    prediction : Prediction
        Predicted environments of one structure.
    weights : Weights
        Cost weights.
    time_limit_s : float
        CP-SAT time limit per structure.

    Returns
    -------
    Fit
        ``feasible`` False with ``reasons`` when no assignment respects the
        integrals.

    Raises
    ------
    InputError
        If the problem has no 1H signals.
    """
    if not problem.h1:
        raise InputError("scoring needs at least one 1H signal")
    if time_limit_s <= 0:
        raise InputError("time limit must be positive")
    return _assign(problem, prediction, weights, time_limit_s)


_SCALE = 100


def _assign(problem: Problem, prediction: Prediction, w: Weights, time_limit_s: float) -> Fit:
    from ortools.sat.python import cp_model

    signals = problem.h1
    envs = prediction.environments
    n_s = len(signals)
    caps = [signal_tolerance(s.h_count) for s in signals]
    m = cp_model.CpModel()
    # halves[e][i]: number of "units" of env e at signal i.  Non-splittable
    # envs use one unit (all their H), splittable CH2 two units of 1 H.
    units: dict[tuple[int, int], cp_model.IntVar] = {}
    absent: dict[int, cp_model.IntVar] = {}
    cost_terms = []
    h_at = [[] for _ in range(n_s)]
    pair_cost: dict[tuple[int, int], float] = {}
    for ei, e in enumerate(envs):
        per_unit, n_units = _units(e, prediction.smiles)
        split = n_units > 1
        row = []
        for i, s in enumerate(signals):
            if per_unit > caps[i][1]:
                continue
            v = m.new_int_var(0, n_units, f"y{ei}_{i}")
            units[ei, i] = v
            row.append(v)
            h_at[i].append(per_unit * v)
            c = _pair_cost(e, s, w)
            pair_cost[ei, i] = c
            cost_terms.append(round(_SCALE * c / n_units) * v)
        if e.exchangeable:
            a = m.new_bool_var(f"absent{ei}")
            absent[ei] = a
            m.add(sum(row) == n_units * (1 - a)) if row else m.add(a == 1)
            cost_terms.append(round(_SCALE * w.not_observed) * a)
        else:
            if not row:
                return Fit(False, math.inf, "rejected", reasons=(rs.too_large(e, max(c[1] for c in caps)),))
            m.add(sum(row) == n_units)
        if split:
            # cost per extra signal the units spread over
            used = []
            for i in range(n_s):
                if (ei, i) in units:
                    b = m.new_bool_var(f"used{ei}_{i}")
                    m.add(units[ei, i] >= 1).only_enforce_if(b)
                    m.add(units[ei, i] == 0).only_enforce_if(~b)
                    used.append(b)
            spread = m.new_int_var(0, n_units, f"spread{ei}")
            m.add(spread >= sum(used) - 1)
            cost_terms.append(round(_SCALE * _split_penalty(e, w)) * spread)
    # integrals, each switchable by an assumption literal
    assumptions = []
    for i, s in enumerate(signals):
        lo, hi = caps[i]
        target = round(s.h_count)
        recv = m.new_int_var(0, sum(e.h_count for e in envs), f"recv{i}")
        m.add(recv == sum(h_at[i]))
        lit = m.new_bool_var(f"integral{i}")
        m.add(recv >= lo).only_enforce_if(lit)
        m.add(recv <= hi).only_enforce_if(lit)
        assumptions.append(lit)
        dev = m.new_int_var(0, 100, f"dev{i}")
        m.add(dev >= recv - target)
        m.add(dev >= target - recv)
        cost_terms.append(round(_SCALE * w.integral_per_h) * dev)
        # overlaps: number of distinct envs at this signal beyond the first
        present = []
        for ei in range(len(envs)):
            if (ei, i) in units:
                b = m.new_bool_var(f"at{ei}_{i}")
                m.add(units[ei, i] >= 1).only_enforce_if(b)
                m.add(units[ei, i] == 0).only_enforce_if(~b)
                present.append(b)
        extra = m.new_int_var(0, len(envs), f"extra{i}")
        m.add(extra >= sum(present) - 1)
        ov = w.overlap_multiplet if (s.pattern is None or s.broad) else w.overlap_first_order
        cost_terms.append(round(_SCALE * ov) * extra)
    m.add_assumptions(assumptions)
    m.minimize(sum(cost_terms))
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.max_time_in_seconds = time_limit_s
    status = solver.solve(m)
    if status == cp_model.INFEASIBLE:
        core = solver.sufficient_assumptions_for_infeasibility()
        by_index = {lit.index: i for i, lit in enumerate(assumptions)}
        idx = sorted(by_index[c] for c in core if c in by_index)
        if not idx:
            idx = list(range(n_s))
        reason = rs.integral_conflict(
            [signals[i] for i in idx], [round(signals[i].h_count) for i in idx], envs
        )
        return Fit(False, math.inf, "rejected", reasons=(reason,), details={"core": idx})
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
        return Fit(
            False, math.inf, "rejected",
            reasons=(f"the assignment model found no answer within {time_limit_s:g} s",),
        )

    assignments: list[Assignment] = []
    notes: list[str] = []
    worst_z = worst_ppm = 0.0
    worst_steps = 0
    for ei, e in enumerate(envs):
        placed = [(i, solver.value(units[ei, i])) for i in range(n_s) if (ei, i) in units]
        placed = [(i, k) for i, k in placed if k]
        if not placed:
            assignments.append(Assignment(ei, None, e.h_count, e.shift, None, None, e.multiplicity, None,
                                          round(w.not_observed, 4)))
            notes.append(f"{e.h_count}H {e.label or 'exchangeable H'} predicted near {e.shift:.1f} ppm: not observed (exchange)")
            continue
        per_unit = _units(e, prediction.smiles)[0]
        for i, k in placed:
            s = signals[i]
            dev = _shift_dev(e, s)
            u = max(e.uncertainty, w.min_uncertainty)
            z = abs(dev) / u
            shape, steps = _mult_steps(e, s)
            worst_z = max(worst_z, z)
            worst_ppm = max(worst_ppm, abs(dev))
            worst_steps = max(worst_steps, steps)
            h = per_unit * k
            assignments.append(Assignment(ei, i, h, e.shift, s.shift, round(e.shift - s.shift, 4),
                                          e.multiplicity, s.multiplicity, round(pair_cost[ei, i], 4)))
            if z > w.consistent_z or abs(dev) > w.consistent_max_ppm:
                notes.append(rs.shift_note(e, s, round(s.h_count), dev))
            if steps > w.consistent_mult_steps - 1 and steps:
                notes.append(rs.multiplicity_note(e, s, round(s.h_count)))
        if len(placed) >= 2:
            what = "its two H" if len(e.atoms) == 1 else "its equivalent groups"
            notes.append(
                f"{e.label or 'CH2'}: {what} read as {len(placed)} signals ("
                + ", ".join(f"{signals[i].shift:.2f}" for i, _ in placed) + " ppm)"
            )
    for i, s in enumerate(signals):
        got = sum(a.h_count for a in assignments if a.signal == i)
        if got != round(s.h_count):
            notes.append(f"{rs.describe_signal(s)} receives {got}H")
    from elucidate.score.carbon import assign_c13

    c13 = assign_c13(problem, prediction, w)
    carbon, carbon_bad = c13.cost, c13.clearly_wrong
    notes += c13.notes
    vague = _vagueness(envs, w)
    if vague > 0.5:
        notes.append(f"coarse prediction for some H (vagueness cost {vague:.2f})")
    cost = solver.objective_value / _SCALE + carbon + vague
    consistent = worst_z <= w.consistent_z and worst_ppm <= w.consistent_max_ppm and worst_steps <= w.consistent_mult_steps and not carbon_bad
    assignments.sort(key=lambda a: (a.signal if a.signal is not None else 10**6, a.environment))
    return Fit(
        True,
        round(cost, 4),
        "consistent" if consistent else "poor fit",
        tuple(assignments),
        tuple(notes),
        carbon=round(carbon, 4),
        details={"worst_z": worst_z, "worst_steps": worst_steps},
        c13_assignments=c13.assignments,
    )


# ------------------------------------------------------------------ 13C


def carbon_cost(problem: Problem, prediction: Prediction, w: Weights = Weights()) -> tuple[float, list[str], bool]:
    """13C term: the optimal assignment of observed lines to predicted carbon
    classes (:func:`elucidate.score.carbon.assign_c13`).

    Returns
    -------
    (cost, notes, clearly_wrong)
    """
    from elucidate.score.carbon import assign_c13

    fit = assign_c13(problem, prediction, w)
    return fit.cost, list(fit.notes), fit.clearly_wrong


# --------------------------------------------------------- plausibility


@functools.cache
def _unusual_table() -> tuple[tuple[str, Any, float, str], ...]:
    """Rows of data/unusual.csv as (name, compiled SMARTS, weight, source)."""
    import csv
    from importlib import resources

    from rdkit import Chem

    text = resources.files("elucidate.score").joinpath("data/unusual.csv").read_text(encoding="utf-8")
    rows = []
    for row in csv.DictReader(text.splitlines()):
        query = Chem.MolFromSmarts(row["smarts"])
        if query is None:
            raise InputError(f"score/data/unusual.csv: SMARTS {row['smarts']!r} does not parse")
        rows.append((row["name"], query, float(row["weight"]), row["source"]))
    return tuple(rows)


def unusual_groups(smiles: str) -> tuple[float, tuple[str, ...]]:
    """Soft prior against rarely isolated groups (ynamines, simple enols,
    peroxides, ...), from ``score/data/unusual.csv`` (source per row).

    Returns (cost, notes); a structure without such groups costs 0.

    Examples
    --------
    >>> unusual_groups("CCOC(C)=O")
    (0.0, ())
    >>> unusual_groups("NC#Cc1ccccc1")[0]
    2.0
    """
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        raise InputError(f"SMILES {smiles!r} does not parse")
    cost = 0.0
    notes = []
    for name, query, weight, source in _unusual_table():
        if mol.HasSubstructMatch(query):
            cost += weight
            notes.append(f"contains a {name}: +{weight:g} ({source})")
    return cost, tuple(notes)
