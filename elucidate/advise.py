"""Which measurement would tell the top candidates apart.

When the best candidates of a solve fit the data about equally well
(scores within :data:`MARGIN` of the best), the spectra already measured
cannot separate them.  :func:`next_measurements` lists observations that
would, each with the value every candidate predicts and a discrimination
figure: the predicted difference divided by the prediction's typical error.

Observations considered, for up to :data:`MAX_COMPARED` close candidates:

- **13C** (only when no 13C list was given): the shift of each carbon of the
  best candidate against the carbon it corresponds to in the others
  (carbons matched by a minimum-cost assignment on shift, keeping CH3, CH2,
  CH and C apart where the counts allow); figure ``|Δδ| / √(u₁² + u₂²)``
  with ``u`` each prediction's own typical error;
- **DEPT** (unless every given 13C line has its H count): the number of
  CH3, CH2, CH and C lines;
- **COSY**: a cross peak between two observed 1H signals, expected when the
  atoms carrying their H are bonded (³J H–C–C–H), present for one candidate
  and not another — signals named by the letters of the peak list, through
  each candidate's own assignment;
- **HMBC**: a cross peak from an observed 1H signal to a carbon two or three
  bonds from its H (²J, ³J);
- **1H coupling**: the largest coupling predicted at an observed signal;
  figure ``|ΔJ| / (σ_J √2)`` with σ_J = :data:`J_TYPICAL_ERROR_HZ`;
- **D2O shake**: which observed signals come from exchangeable H (OH, NH,
  SH) and would vanish.

A present/absent observation has no predicted number; its figure is a fixed
weight per experiment (:data:`CATEGORICAL_FIGURE`), our own judgement of how
reliably the experiment shows the difference (common practice: DEPT line
counts and D2O exchange are direct; a ³J COSY peak nearly always appears
but may be weak for a small J; HMBC peaks depend on J(C,H) and an expected
³J peak can be missing).  Observations are ranked by how many candidate
pairs they separate (figure ≥ :data:`SEPARATES`), then by the figure —
except that one separating the best two candidates always comes before
one that does not: "is it the first or the second?" is the question a
chemist asks of a close result.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import combinations
from typing import Any, Sequence

from elucidate.model import Candidate, NextMeasurement, Prediction, Problem

__all__ = [
    "MARGIN",
    "MAX_COMPARED",
    "MAX_MEASUREMENTS",
    "MAX_PER_EXPERIMENT",
    "SEPARATES",
    "J_TYPICAL_ERROR_HZ",
    "CATEGORICAL_FIGURE",
    "close_candidates",
    "next_measurements",
]

#: Candidates whose score is within this of the best are "not separated".
#: Scores sum deviations in units of typical error, so 1.0 is about one
#: typical error over the whole spectrum.
MARGIN = 1.0
#: At most this many close candidates are compared.
MAX_COMPARED = 4
#: At most this many observations are listed, and at most
#: :data:`MAX_PER_EXPERIMENT` of one experiment.
MAX_MEASUREMENTS = 10
MAX_PER_EXPERIMENT = 3
#: A pair of candidates counts as separated by an observation whose figure
#: reaches this (two typical errors).
SEPARATES = 2.0
#: Typical error of a predicted 1H–1H coupling (Hz); the handbook ranges of
#: the coupling table span a few Hz per coupling type (common practice).
J_TYPICAL_ERROR_HZ = 1.5
#: Figure of a present/absent difference, per experiment (our own weighting).
CATEGORICAL_FIGURE = {"DEPT": 4.0, "D2O shake": 4.0, "COSY": 3.0, "HMBC": 2.0}

_ORDER = ("13C", "DEPT", "D2O shake", "COSY", "HMBC", "1H coupling")
_CLASS = {0: "C", 1: "CH", 2: "CH2", 3: "CH3"}
_MIN_FIGURE = 0.5  # numeric observations separating no pair better than this are left out


def close_candidates(candidates: Sequence[Candidate], margin: float = MARGIN) -> list[Candidate]:
    """The best candidates that the data do not separate: score within
    ``margin`` of the best, at most :data:`MAX_COMPARED`, each with a
    prediction.

    Examples
    --------
    >>> from elucidate.model import Candidate
    >>> cs = [Candidate(1, "CCO", 1.0, "consistent", ()), Candidate(2, "COC", 1.6, "consistent", ()),
    ...       Candidate(3, "C=O", 9.0, "poor fit", ())]
    >>> [c.rank for c in close_candidates(cs)]
    [1, 2]
    """
    if margin < 0 or not math.isfinite(margin):
        raise ValueError(f"margin must be a non-negative number, got {margin}")
    ranked = sorted(candidates, key=lambda c: c.rank)
    if not ranked:
        return []
    best = ranked[0].score
    return [c for c in ranked if c.score <= best + margin + 1e-9][:MAX_COMPARED]


def next_measurements(
    problem: Problem,
    candidates: Sequence[Candidate],
    *,
    margin: float = MARGIN,
    limit: int = MAX_MEASUREMENTS,
) -> tuple[NextMeasurement, ...]:
    """Observations that would tell the close top candidates apart, best first.

    Parameters
    ----------
    problem : Problem
        The unknown (its signals name the 1H peaks; a given 13C list means
        13C shifts are not suggested again).
    candidates : sequence of Candidate
        Ranked candidates, with their predictions and assignments.
    margin : float
        Candidates within this score of the best are compared.
    limit : int
        Most observations returned.

    Returns
    -------
    tuple of NextMeasurement
        Empty when fewer than two candidates are close.
    """
    if limit < 0:
        raise ValueError(f"limit must be >= 0, got {limit}")
    close = close_candidates(candidates, margin)
    if len(close) < 2 or limit == 0:
        return ()
    views = [_view(c, problem) for c in close]
    return _advise(problem, views, limit)


# ------------------------------------------------------------ structure


@dataclass
class _View:
    """One candidate seen through its prediction and assignment."""

    rank: int
    smiles: str
    prediction: Prediction
    dist: Any  # topological distance matrix (heavy atoms)
    signal_atoms: dict[int, set[int]]  # observed signal -> atoms carrying its (non-exchangeable) H
    signal_envs: dict[int, set[int]]  # observed signal -> environments assigned to it
    exchange_signals: frozenset[int]  # observed signals holding exchangeable H
    carbons: list[tuple[int, int, float, float]]  # (atom, attached H, shift, uncertainty), per carbon atom
    assigned: bool


def _view(cand: Candidate, problem: Problem) -> _View:
    from rdkit import Chem

    pred = cand.prediction
    if pred is None:
        from elucidate.predict import predict

        pred = predict(cand.smiles, solvent=problem.solvent, field_mhz=problem.field_mhz)
    mol = Chem.MolFromSmiles(pred.smiles)
    dist = Chem.GetDistanceMatrix(mol)
    envs = {e.index: e for e in pred.environments}
    signal_atoms: dict[int, set[int]] = {}
    signal_envs: dict[int, set[int]] = {}
    exchange: set[int] = set()
    for a in cand.assignments:
        env = envs.get(a.environment)
        if env is None or a.signal is None:
            continue
        signal_envs.setdefault(a.signal, set()).add(env.index)
        if env.exchangeable:
            exchange.add(a.signal)
        else:
            signal_atoms.setdefault(a.signal, set()).update(env.atoms)
    carbons = sorted(
        (atom, c.attached_h, c.shift, c.uncertainty) for c in pred.carbons for atom in c.atoms
    )
    return _View(
        cand.rank, cand.smiles, pred, dist, signal_atoms, signal_envs, frozenset(exchange), carbons,
        bool(cand.assignments),
    )


def _carbon_match(ref: _View, other: _View) -> dict[int, tuple[int, int, float, float]]:
    """Each carbon atom of ``ref`` → the corresponding carbon of ``other``
    (minimum total |Δδ|, a change of H count costing as much as 100 ppm)."""
    from ortools.graph.python import linear_sum_assignment

    a, b = ref.carbons, other.carbons
    if not a or not b:
        return {}
    lsa = linear_sum_assignment.SimpleLinearSumAssignment()
    for i, (_, ha, da, _) in enumerate(a):
        for j, (_, hb, db, _) in enumerate(b):
            lsa.add_arc_with_cost(i, j, int(round(10 * abs(da - db))) + 1000 * abs(ha - hb))
    if len(a) > len(b):  # not isomers: leave the extra carbons of ref unmatched
        for i in range(len(a)):
            for j in range(len(b), len(a)):
                lsa.add_arc_with_cost(i, j, 10**6)
    elif len(b) > len(a):
        for i in range(len(a), len(b)):
            for j in range(len(b)):
                lsa.add_arc_with_cost(i, j, 0)
    if lsa.solve() != lsa.OPTIMAL:
        return {}
    out = {}
    for i in range(len(a)):
        j = lsa.right_mate(i)
        if j < len(b) and lsa.assignment_cost(i) < 10**6:
            out[a[i][0]] = b[j]
    return out


# ------------------------------------------------------------ observations


@dataclass
class _Obs:
    experiment: str
    observation: str
    values: list[str]
    figures: list[float]  # per pair, in combinations order
    basis: str

    def measurement(self, ranks: tuple[int, ...]) -> NextMeasurement:
        return NextMeasurement(
            experiment=self.experiment,
            observation=self.observation,
            ranks=ranks,
            predicted=tuple(self.values),
            discrimination=round(min(self.figures), 2),
            separated=sum(1 for f in self.figures if f >= SEPARATES),
            pairs=len(self.figures),
            basis=self.basis,
            top_pair=round(self.figures[0], 2),
        )

    def key(self) -> tuple:
        # the best two first (pair 0 in combinations order): that is the
        # question the chemist has; then how many pairs, then the margins
        sep = sum(1 for f in self.figures if f >= SEPARATES)
        return (self.figures[0] < SEPARATES, -sep, -round(min(self.figures), 4), -round(self.figures[0], 4),
                -round(sum(self.figures), 4), _ORDER.index(self.experiment), self.observation)


def _advise(problem: Problem, views: list[_View], limit: int) -> tuple[NextMeasurement, ...]:
    pairs = list(combinations(range(len(views)), 2))
    obs: list[_Obs] = []
    matches = [{c[0]: c for c in views[0].carbons}] + [_carbon_match(views[0], v) for v in views[1:]]
    if not problem.c13:
        obs += _carbon_shifts(views, matches, pairs)
    if not problem.c13 or any(s.attached_h is None for s in problem.c13):
        obs += _dept(views, pairs)
    if all(v.assigned for v in views):
        obs += _d2o(problem, views, pairs)
        obs += _cosy(problem, views, pairs)
        obs += _hmbc(problem, views, matches, pairs)
        obs += _couplings(problem, views, pairs)
    obs = [o for o in obs if max(o.figures) >= _MIN_FIGURE]
    obs.sort(key=_Obs.key)
    ranks = tuple(v.rank for v in views)
    out: list[NextMeasurement] = []
    per: dict[str, int] = {}
    for o in obs:
        if per.get(o.experiment, 0) >= MAX_PER_EXPERIMENT:
            continue
        per[o.experiment] = per.get(o.experiment, 0) + 1
        out.append(o.measurement(ranks))
        if len(out) >= limit:
            break
    return tuple(out)


def _letter(index: int) -> str:
    out = ""
    index += 1
    while index:
        index, r = divmod(index - 1, 26)
        out = chr(ord("a") + r) + out
    return out


def _signal(problem: Problem, i: int) -> str:
    return f"{_letter(i)} ({problem.h1[i].shift:.2f} ppm)"


def _categorical(experiment: str, observation: str, values: list[str], pairs: list[tuple[int, int]],
                 what: str) -> _Obs:
    w = CATEGORICAL_FIGURE[experiment]
    figures = [w if values[i] != values[j] else 0.0 for i, j in pairs]
    return _Obs(experiment, observation, values, figures, f"{what}: present or absent, fixed weight {w:g}")


def _carbon_shifts(views: list[_View], matches: list[dict], pairs: list[tuple[int, int]]) -> list[_Obs]:
    out = []
    ref = views[0]
    for c in ref.prediction.carbons:
        first = min(c.atoms)
        per = [m.get(first) for m in matches]
        if any(p is None for p in per):
            continue
        values = [f"{p[2]:.1f} ({_CLASS.get(p[1], '?')})" for p in per]
        figures = [abs(per[i][2] - per[j][2]) / math.hypot(per[i][3], per[j][3]) for i, j in pairs]
        out.append(_Obs(
            "13C",
            f"13C shift of the {_CLASS.get(c.attached_h, 'C')} carbon predicted at {c.shift:.1f} ppm "
            f"for candidate {ref.rank}",
            values, figures, "|Δδ| / √(u₁² + u₂²), u = each predicted shift's typical error",
        ))
    return out


def _dept(views: list[_View], pairs: list[tuple[int, int]]) -> list[_Obs]:
    values = []
    for v in views:
        n = {h: 0 for h in (3, 2, 1, 0)}
        for c in v.prediction.carbons:
            n[c.attached_h] = n.get(c.attached_h, 0) + 1
        values.append(", ".join(f"{n[h]} {_CLASS[h]}" for h in (3, 2, 1, 0)))
    return [_categorical("DEPT", "DEPT-135/90: number of CH3, CH2, CH and C lines", values, pairs,
                         "line counts")]


def _d2o(problem: Problem, views: list[_View], pairs: list[tuple[int, int]]) -> list[_Obs]:
    values = []
    for v in views:
        gone = sorted(v.exchange_signals)
        values.append(", ".join(_letter(i) for i in gone) + " vanish" if gone else "nothing vanishes")
    return [_categorical("D2O shake", "D2O shake: which 1H signals vanish (exchangeable OH, NH, SH)",
                         values, pairs, "exchange")]


def _cosy(problem: Problem, views: list[_View], pairs: list[tuple[int, int]]) -> list[_Obs]:
    out = []
    n = len(problem.h1)
    for a in range(n):
        for b in range(a + 1, n):
            values = []
            for v in views:
                hit = any(
                    v.dist[x][y] == 1 for x in v.signal_atoms.get(a, ()) for y in v.signal_atoms.get(b, ())
                )
                values.append("cross peak" if hit else "none")
            if len(set(values)) > 1:
                out.append(_categorical(
                    "COSY", f"COSY cross peak between {_signal(problem, a)} and {_signal(problem, b)}",
                    values, pairs, "³J H–C–C–H",
                ))
    return out


def _hmbc(problem: Problem, views: list[_View], matches: list[dict], pairs: list[tuple[int, int]]) -> list[_Obs]:
    out = []
    ref = views[0]
    for c in ref.prediction.carbons:
        per_view = []
        for m in matches:
            atoms = {m[x][0] for x in c.atoms if x in m}
            per_view.append(atoms)
        if any(not s for s in per_view):
            continue
        for i in range(len(problem.h1)):
            values = []
            for v, carbons in zip(views, per_view):
                hit = any(v.dist[h][k] in (1, 2) for h in v.signal_atoms.get(i, ()) for k in carbons)
                values.append("cross peak" if hit else "none")
            if len(set(values)) > 1:
                out.append(_categorical(
                    "HMBC",
                    f"HMBC from {_signal(problem, i)} to the {_CLASS.get(c.attached_h, 'C')} carbon "
                    f"near {c.shift:.1f} ppm",
                    values, pairs, "²J/³J C–H",
                ))
    return out


def _couplings(problem: Problem, views: list[_View], pairs: list[tuple[int, int]]) -> list[_Obs]:
    out = []
    envs = [{e.index: e for e in v.prediction.environments} for v in views]
    for i, sig in enumerate(problem.h1):
        js: list[tuple[float, str]] = []
        for v, by_index in zip(views, envs):
            best = (0.0, "")
            for k in sorted(v.signal_envs.get(i, ())):
                for cp in by_index[k].couplings:
                    if cp.j_hz > best[0]:
                        best = (cp.j_hz, cp.kind)
            js.append(best)
        values = [f"{j:.1f} Hz ({kind})" if j else "no coupling" for j, kind in js]
        figures = [abs(js[a][0] - js[b][0]) / (J_TYPICAL_ERROR_HZ * math.sqrt(2)) for a, b in pairs]
        seen = f"; observed J {', '.join(f'{j:g}' for j in sig.couplings)} Hz" if sig.couplings else ""
        out.append(_Obs(
            "1H coupling", f"largest 1H–1H coupling at {_signal(problem, i)}{seen}", values, figures,
            f"|ΔJ| / ({J_TYPICAL_ERROR_HZ:g} Hz · √2), typical spread of a predicted J",
        ))
    return out
