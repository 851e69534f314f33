"""Assign observed 13C lines to predicted carbon classes (an optimal assignment).

A *class* is a set of symmetry-equivalent carbons with one predicted shift
(:class:`elucidate.model.CarbonShift`); a *line* is one observed 13C signal
(:class:`elucidate.model.C13Signal`, with its ``(2C)`` count and DEPT label
when given).  The model, solved exactly with CP-SAT:

* every class goes to exactly one line, or is "not seen" (a weak
  quaternary carbon can be missed) at ``carbon_missing`` per carbon;
* a pair of equivalent carbons that real spectra often show as two lines —
  the two methyls of an isopropyl (or gem-dimethyl) group in a molecule with
  a stereocentre (diastereotopic), two groups on an amide N (slow C–N
  rotation), two groups on one alkene carbon (E/Z) — may be split over two
  lines at ``carbon_split``; no other class may take two lines;
* a line that takes no class costs ``carbon_missing`` (more lines than the
  structure has distinct carbons is a strong sign against it);
* several classes on one line (accidental overlap) cost ``carbon_overlap``
  per class beyond the first;
* when the list states carbon counts (any line carries ``(2C)`` or more),
  every line's count is compared with the carbons it receives at
  ``carbon_count`` per carbon off;
* cost per carbon = |δ_pred − δ_obs| / u, u the class's typical error (at
  least ``carbon_min_uncertainty``), plus ``carbon_dept`` when the line's DEPT
  label gives another number of attached H than the carbon has.

The model minimises ``Σ shift costs / N_C + Σ penalties / N_lines``: the mean
shift cost per carbon of the formula plus the structural penalties (lines
without a carbon, carbons without a line, overlaps, splits, counts) per
observed line; both denominators are the same for every candidate of one
problem, so the ranking sees a plain weighted sum.  The term added to a fit
is three times that (``carbon_shift`` = 1), the scale the ranking has always
used for 13C, so it stays comparable with the 1H cost.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from elucidate.model import C13Assignment, C13Signal, CarbonShift, Prediction, Problem

if TYPE_CHECKING:  # pragma: no cover
    from elucidate.score.assign import Weights

__all__ = ["C13Fit", "assign_c13", "c13_bound", "may_split"]

_SCALE = 100_000
#: Up to this many splittable pairs the fast path tries every split subset.
_MAX_SPLIT_ENUMERATION = 3
_DEPT_NAMES = {0: "C", 1: "CH", 2: "CH2", 3: "CH3"}


@dataclass(frozen=True)
class C13Fit:
    """The 13C part of a fit.

    ``cost`` is the term added to the fit (scaled as the module says);
    ``total`` the model's objective (mean shift cost per carbon + penalties
    per line, in typical errors); ``clearly_wrong`` is set
    when a line is left unexplained, a carbon has no line, a DEPT label is
    contradicted or the mean cost per carbon is above 3.
    """

    cost: float
    total: float
    assignments: tuple[C13Assignment, ...] = ()
    notes: tuple[str, ...] = ()
    clearly_wrong: bool = False


_EMPTY = C13Fit(0.0, 0.0)


# ----------------------------------------------------------------- helpers


@functools.lru_cache(maxsize=8192)
def _has_stereocentre(smiles: str) -> bool:
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None:
        return False
    return bool(Chem.FindMolChiralCenters(mol, includeUnassigned=True, useLegacyImplementation=False))


@functools.lru_cache(maxsize=8192)
def _gem_methyls(smiles: str, atoms: tuple[int, ...]) -> bool:
    """Two CH3 on one carbon (isopropyl, gem-dimethyl)."""
    from rdkit import Chem

    mol = Chem.MolFromSmiles(smiles) if smiles else None
    if mol is None or len(atoms) != 2 or max(atoms) >= mol.GetNumAtoms():
        return False
    a, b = (mol.GetAtomWithIdx(i) for i in atoms)
    if a.GetTotalNumHs() != 3 or b.GetTotalNumHs() != 3:
        return False
    na = {n.GetIdx() for n in a.GetNeighbors()}
    nb = {n.GetIdx() for n in b.GetNeighbors()}
    return bool(na & nb)


def may_split(smiles: str, carbon: CarbonShift) -> bool:
    """Whether a class of two equivalent carbons may show as two 13C lines.

    True for the two methyls of an isopropyl or gem-dimethyl group when the
    molecule has a stereocentre (diastereotopic), and for two groups on an
    amide N or on one alkene carbon (slow rotation, E/Z) — common practice.

    Examples
    --------
    >>> from elucidate.model import CarbonShift
    >>> may_split("CC(C)C(C)O", CarbonShift((0, 2), 3, 18.0, 2.5))   # 3-methylbutan-2-ol
    True
    >>> may_split("CC(C)CO", CarbonShift((0, 2), 3, 19.0, 2.5))      # 2-methylpropan-1-ol
    False
    """
    atoms = tuple(carbon.atoms)
    if len(atoms) != 2 or not smiles:
        return False
    from elucidate.score.assign import _apart

    if _apart(smiles, atoms):
        return True
    return _gem_methyls(smiles, atoms) and _has_stereocentre(smiles)


def _per_carbon(c: CarbonShift, line: C13Signal, w: Weights) -> float:
    u = max(c.uncertainty, w.carbon_min_uncertainty)
    cost = abs(c.shift - line.shift) / u
    if line.attached_h is not None and line.attached_h != c.attached_h:
        cost += w.carbon_dept
    return cost


def _term(shift_sum: float, penalties: float, n_c: int, k: int) -> float:
    """Mean shift cost per carbon plus structural penalties per line (the
    model's objective before the factor 3 of the fit)."""
    return shift_sum / max(n_c, 1) + penalties / max(k, 1)


# ------------------------------------------------------------------- bound


def c13_bound(problem: Problem, prediction: Prediction, w: Weights) -> float:
    """A lower bound on ``assign_c13(...).cost``, cheap enough for every
    generated structure.

    Where the fast exact path applies (no stated counts, few splittable
    pairs) this is the cost itself (cached, so :func:`assign_c13` reuses
    it); otherwise each class at its cheapest line (or not seen), overlaps
    and counts ignored, plus the lines the classes cannot cover even when
    every splittable pair splits.
    """
    lines = problem.c13
    classes = prediction.carbons
    if not lines or not classes:
        return 0.0
    split_ok = [may_split(prediction.smiles, c) for c in classes]
    if _fast(lines, split_ok):
        return assign_c13(problem, prediction, w).cost
    k, n = len(lines), len(classes)
    n_c = sum(len(c.atoms) for c in classes)
    total = 0.0
    for c in classes:
        best = min(_per_carbon(c, line, w) for line in lines)
        total += len(c.atoms) * min(best / n_c, w.carbon_missing / k)
    cap = len(classes) + sum(split_ok)
    total += max(0, min(k, cap) - n) * min(w.carbon_split, w.carbon_missing) / k
    total += max(0, k - cap) * w.carbon_missing / k
    return 3.0 * w.carbon_shift * total


def _fast(lines: tuple[C13Signal, ...], split_ok: list[bool]) -> bool:
    """Whether the linear-sum-assignment path is exact for this input."""
    return not any(line.carbons > 1 for line in lines) and sum(split_ok) <= _MAX_SPLIT_ENUMERATION


# ------------------------------------------------------------------- model


def assign_c13(problem: Problem, prediction: Prediction, w: Weights) -> C13Fit:
    """Optimal assignment of ``problem.c13`` lines to ``prediction.carbons``.

    Parameters
    ----------
    problem : Problem
        Observed 13C lines (may be empty: then the term is 0).
    prediction : Prediction
        Predicted carbon classes.
    w : Weights
        Cost weights (:class:`elucidate.score.assign.Weights`).

    Returns
    -------
    C13Fit
        Cost, one :class:`C13Assignment` per (class, line) pair used, per
        class not seen and per line left unexplained, and notes.
    """
    if not problem.c13 or not prediction.carbons:
        return _EMPTY
    return _assign_cached(problem.c13, prediction.carbons, prediction.smiles, w)


@functools.lru_cache(maxsize=1024)
def _assign_cached(lines: tuple[C13Signal, ...], classes: tuple[CarbonShift, ...], smiles: str, w: Weights) -> C13Fit:
    q = [[_per_carbon(c, line, w) for line in lines] for c in classes]
    split_ok = [may_split(smiles, c) for c in classes]
    stated = any(line.carbons > 1 for line in lines)
    if _fast(lines, split_ok):
        on, missing = _solve_lsa(lines, classes, w, q, split_ok)
    else:
        on, missing = _solve_cpsat(lines, classes, w, q, split_ok, stated)
    return _decode(lines, classes, w, q, on, stated, missing)


def _weights(classes: tuple[CarbonShift, ...], k: int) -> tuple[float, float]:
    """Integer-scaled weights of one carbon's shift cost and of one penalty."""
    return _SCALE / max(sum(len(c.atoms) for c in classes), 1), _SCALE / max(k, 1)


def _solve_lsa(
    lines: tuple[C13Signal, ...],
    classes: tuple[CarbonShift, ...],
    w: Weights,
    q: list[list[float]],
    split_ok: list[bool],
) -> tuple[dict[tuple[int, int], int], list[bool]]:
    """The model without stated counts as a linear sum assignment.

    Without count terms the cost of a line depends only on how many classes
    it takes: none costs ``carbon_missing``, each beyond the first
    ``carbon_overlap``.  So each line is a *primary* slot (taking it saves
    ``carbon_missing``) and every class may instead *overflow* to its best
    line at ``carbon_overlap`` extra, or be not seen; the overflow choice
    is the class's own.  Rows: the classes (a split pair: two one-carbon
    rows) and one dummy per line; columns: the line slots and one overflow
    column per row.  Splits are enumerated (each subset of splittable
    pairs), so the optimum equals the CP-SAT model's.
    """
    from ortools.graph.python import linear_sum_assignment

    k = len(lines)
    a, b = _weights(classes, k)
    eligible = [ci for ci, ok in enumerate(split_ok) if ok]
    best: tuple[int, dict[tuple[int, int], int], list[bool]] | None = None
    for mask in range(1 << len(eligible)):
        split = {eligible[j] for j in range(len(eligible)) if mask >> j & 1}
        rows: list[tuple[int, int]] = []  # (class, carbons in this row)
        for ci, c in enumerate(classes):
            if ci in split:
                rows += [(ci, 1), (ci, 1)]
            else:
                rows.append((ci, len(c.atoms)))
        n_r = len(rows)
        lsa = linear_sum_assignment.SimpleLinearSumAssignment()
        overflow: list[tuple[int | None, int]] = []  # (line or None = not seen, cost)
        for r, (ci, carbons) in enumerate(rows):
            for li in range(k):
                lsa.add_arc_with_cost(r, li, round(a * q[ci][li] * carbons - b * w.carbon_missing))
            li_best = min(range(k), key=lambda li: (q[ci][li], li))
            over = round(a * q[ci][li_best] * carbons + b * w.carbon_overlap)
            if ci in split:
                overflow.append((li_best, over))
            else:
                gone = round(b * w.carbon_missing * carbons)
                overflow.append((li_best, over) if over <= gone else (None, gone))
            lsa.add_arc_with_cost(r, k + r, overflow[-1][1])
        for d in range(k):
            lsa.add_arc_with_cost(n_r + d, d, 0)
            for r in range(n_r):
                lsa.add_arc_with_cost(n_r + d, k + r, 0)
        if lsa.solve() != lsa.OPTIMAL:  # pragma: no cover - a perfect matching always exists
            raise RuntimeError("13C assignment found no solution")
        cost = lsa.optimal_cost() + round(b * w.carbon_split) * len(split)
        if best is not None and cost >= best[0]:
            continue
        on: dict[tuple[int, int], int] = {}
        missing = [False] * len(classes)
        for r, (ci, carbons) in enumerate(rows):
            col = lsa.right_mate(r)
            li = col if col < k else overflow[r][0]
            if li is None:
                missing[ci] = True
            else:
                on[ci, li] = on.get((ci, li), 0) + carbons
        best = (cost, on, missing)
    assert best is not None
    return best[1], best[2]


def _solve_cpsat(
    lines: tuple[C13Signal, ...],
    classes: tuple[CarbonShift, ...],
    w: Weights,
    q: list[list[float]],
    split_ok: list[bool],
    stated: bool,
) -> tuple[dict[tuple[int, int], int], list[bool]]:
    """The full model (with stated counts) in CP-SAT.

    A class is never put on a line whose shift cost alone exceeds what
    leaving the class unseen could add (its own penalty, the line left
    empty, the count off by its carbons): such a pair is in no optimum, so
    the variable is not made.
    """
    from ortools.sat.python import cp_model

    k = len(lines)
    a, b = _weights(classes, k)
    m = cp_model.CpModel()
    terms = []
    x: dict[tuple[int, int], Any] = {}  # class c (or part of it) on line l
    n: dict[tuple[int, int], Any] = {}  # carbons of c on line l (expression)
    miss = []
    for ci, c in enumerate(classes):
        size = len(c.atoms)
        # dropping the class instead: its penalty, the lines it leaves empty, the counts
        emptied = 2 if split_ok[ci] else 1
        worst = b * (w.carbon_missing * (size + emptied) + (w.carbon_count * size if stated else 0.0))
        unit = 1 if split_ok[ci] else size
        allowed = [li for li in range(k) if a * q[ci][li] * unit <= worst + 1e-9]
        gone = m.new_bool_var(f"miss{ci}")
        miss.append(gone)
        terms.append(round(b * w.carbon_missing * size) * gone)
        if split_ok[ci]:
            parts = []
            for li in allowed:
                v = m.new_int_var(0, size, f"n{ci}_{li}")
                xb = m.new_bool_var(f"x{ci}_{li}")
                m.add(v >= xb)
                m.add(v <= size * xb)
                x[ci, li], n[ci, li] = xb, v
                parts.append(xb)
                terms.append(round(a * q[ci][li]) * v)
            m.add(sum(n[ci, li] for li in allowed) + size * gone == size)
            sp = m.new_bool_var(f"split{ci}")
            m.add(sp >= sum(parts) - 1)
            terms.append(round(b * w.carbon_split) * sp)
        else:
            row = []
            for li in allowed:
                xb = m.new_bool_var(f"x{ci}_{li}")
                x[ci, li] = xb
                n[ci, li] = size * xb
                row.append(xb)
                terms.append(round(a * q[ci][li] * size) * xb)
            m.add(sum(row) + gone == 1)
    for li, line in enumerate(lines):
        keys = [(ci, li) for ci in range(len(classes)) if (ci, li) in x]
        here = [x[key] for key in keys]
        cov = m.new_bool_var(f"cov{li}")
        m.add(cov <= sum(here))
        terms.append(round(b * w.carbon_missing) * (1 - cov))
        if len(here) > 1:
            extra = m.new_int_var(0, len(here), f"extra{li}")
            m.add(extra >= sum(here) - 1)
            terms.append(round(b * w.carbon_overlap) * extra)
        if stated:
            recv = sum(n[key] for key in keys)
            dev = m.new_int_var(0, sum(len(c.atoms) for c in classes) + line.carbons, f"dev{li}")
            m.add(dev >= recv - line.carbons)
            m.add(dev >= line.carbons - recv - line.carbons * (1 - cov))
            terms.append(round(b * w.carbon_count) * dev)
    m.minimize(sum(terms))
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1
    solver.parameters.max_time_in_seconds = 2.0
    # small models: presolve costs more than it saves; the LP relaxation helps
    solver.parameters.cp_model_presolve = False
    solver.parameters.linearization_level = 2
    status = solver.solve(m)
    if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):  # pragma: no cover - the model is always feasible
        raise RuntimeError("13C assignment model found no solution")
    on = {key: int(solver.value(n[key])) for key, v in x.items() if solver.value(v)}
    return on, [bool(solver.value(v)) for v in miss]


def _decode(
    lines: tuple[C13Signal, ...],
    classes: tuple[CarbonShift, ...],
    w: Weights,
    q: list[list[float]],
    on: dict[tuple[int, int], int],
    stated: bool,
    missing: list[bool],
) -> C13Fit:
    """Records, notes and the exact (unrounded) cost of the chosen assignment."""
    rows: list[C13Assignment] = []
    notes: list[str] = []
    pen = 0.0  # structural penalties (per line / class / split)
    bad = False
    shift_total = 0.0  # per-carbon shift (and DEPT) costs
    for (ci, li), carbons in sorted(on.items(), key=lambda kv: (kv[0][1], classes[kv[0][0]].atoms)):
        c, line = classes[ci], lines[li]
        cost = q[ci][li] * carbons
        shift_total += cost
        rows.append(C13Assignment(
            li, tuple(c.atoms), carbons, c.shift, line.shift, round(c.shift - line.shift, 4),
            c.attached_h, line.attached_h, c.uncertainty, round(cost, 4),
        ))
        if line.attached_h is not None and line.attached_h != c.attached_h:
            bad = True
            notes.append(
                f"13C: line {line.shift:.1f} ({_DEPT_NAMES.get(line.attached_h, line.attached_h)}) is given "
                f"a {_DEPT_NAMES.get(c.attached_h, c.attached_h)} carbon (predicted {c.shift:.1f})"
            )
    for ci, c in enumerate(classes):
        used = sorted(li for (cj, li) in on if cj == ci)
        if len(used) > 1:
            pen += w.carbon_split
            notes.append(
                f"13C: the equivalent carbons predicted at {c.shift:.1f} show as {len(used)} lines ("
                + ", ".join(f"{lines[li].shift:.1f}" for li in used) + ")"
            )
        if missing[ci]:
            bad = True  # ranked by its cost, but not "consistent"
            pen += w.carbon_missing * len(c.atoms)
            rows.append(C13Assignment(None, tuple(c.atoms), len(c.atoms), c.shift, None, None,
                                      c.attached_h, None, c.uncertainty,
                                      round(w.carbon_missing * len(c.atoms), 4)))
            notes.append(f"13C: no line for the {_DEPT_NAMES.get(c.attached_h, 'C')} carbon predicted at {c.shift:.1f}")
    unexplained = []
    for li, line in enumerate(lines):
        here = [ci for (ci, lj) in on if lj == li]
        if not here:
            unexplained.append(li)
            pen += w.carbon_missing
            rows.append(C13Assignment(li, (), 0, None, line.shift, None, None, line.attached_h, None,
                                      round(w.carbon_missing, 4)))
        else:
            pen += w.carbon_overlap * (len(here) - 1)
            if stated:
                recv = sum(on[ci, li] for ci in here)
                pen += w.carbon_count * abs(recv - line.carbons)
    if unexplained:
        bad = True
        if len(lines) > len(classes):
            notes.append(f"13C: {len(lines)} lines observed but this structure has only {len(classes)} distinct carbons")
        notes.append("13C: no carbon for the line" + ("s " if len(unexplained) > 1 else " ")
                     + ", ".join(f"{lines[li].shift:.1f}" for li in unexplained))
    rows.sort(key=lambda r: (r.line if r.line is not None else 10**6, r.atoms))
    n_c = sum(len(c.atoms) for c in classes)
    mean = shift_total / max(n_c, 1)
    if mean > 3.0:
        bad = True
        notes.append(f"13C shifts fit poorly (mean cost {mean:.1f} typical errors per carbon)")
    total = _term(shift_total, pen, n_c, len(lines))
    return C13Fit(round(3.0 * w.carbon_shift * total, 4), round(total, 4), tuple(rows), tuple(notes), bad)

