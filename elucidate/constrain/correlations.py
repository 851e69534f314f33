"""2D correlations (HSQC, COSY, HMBC) as hard, explainable, relaxable constraints.

The generator's structures do not say which atom gives which signal, so the
check is existential: a structure meets the cross peaks when there is *some*
assignment of the correlated 1H signals to H-bearing atoms and of the
correlated 13C lines to carbons such that

* HSQC ``dH/dC``: the H of the 1H signal sit on a carbon of the 13C line
  (one bond);
* COSY ``dH/dH``: the two 1H signals sit on bonded atoms (H-X-Y-H, three
  bonds) or on one CH2 whose two H appear at the two shifts (geminal);
* HMBC ``dH/dC``: a carbon of the 13C line is two or three bonds from the H
  (heavy-atom distance 1 or 2 between the H-bearing atom and the carbon).

What a signal can stand for comes from its integral.  In the strict reading
(:class:`Correlations`, ``long_range=False``, tier 0) a first-order signal
with a single shift (``s``, ``d``, ``t``, ``q``, ``dd`` ...) is one
environment: ``k`` atoms of one symmetry class carrying ``h`` H each with
``k*h`` H in the integral, or one H each of ``k`` equivalent CH2 (a CH2 whose
two H appear at two shifts); a 13C line is one symmetry class, and the HSQC
peaks of one line are one carbon.  Any other signal (``m``, a range, ``br``)
may be an overlap of several environments: a set of atoms whose H add up to
the integral.  Different signals sit on different atoms, except the two H of
one CH2 (or NH2) at two shifts; different lines are different carbons,
each in the shift region of its line (``data/c13_regions.csv``: a line
above 166 ppm is a C=O or C=N carbon, ...).  A
cross peak marked weak (``w``, ``weak``) may be one bond longer (4J).

The first relaxation (``long_range=True``) admits 4-bond COSY and HMBC
correlations (heavy-atom distance 2 and 3), HMBC peaks of the H's own
carbon, and reads every signal and line as a possible overlap.  The later
steps drop the correlations one class at a time, least certain first: the
long-range reading of all peaks has tier 1 (dropped with the 13C shift
rules), and a long-range reading of the HSQC and COSY peaks alone tier 2
(dropped with the hard fragments).  So the ladder is: 2-3 bonds -> 4J
admitted -> without HMBC -> without 2D, each step listed in ``relaxed``.

Symmetry classes are colour-refinement classes of the heavy-atom graph
(element, H count, degree; bond orders ignored, so Kekulé structures do not
split equivalent ring atoms).  They are unions of the true classes, so
asking the atoms of one environment to share a class never turns down a
structure that could carry the data.

The absence of a cross peak is never a constraint.  NOESY peaks (through
space) are read and shown but constrain nothing.

The search is a small backtracking over one witness atom per cross-peak end,
pruned with bond distances (breadth-first) and the integral budget of each
signal; it gives up after :data:`MAX_NODES` steps and then admits the
structure (never a false rejection).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Any

from elucidate.constrain.evidence import _NEEDS, Evidence, Graph, carbon_regions
from elucidate.model import CheckRow, Problem
from elucidate.parse.correlations import is_from_cross_peaks

__all__ = ["MAX_NODES", "CHECK_NODES", "Correlations", "correlation_evidence", "signal_totals"]

#: Backtracking steps per structure before the check gives up (and admits).
MAX_NODES = 20000
#: Backtracking steps per search when working out each peak's status for the report.
CHECK_NODES = 2000

_GROUP = {3: "CH3", 2: "CH2", 1: "CH"}
_WEAK = ("weak", "very weak")


def signal_totals(n: float) -> tuple[int, ...]:
    """Whole numbers of H a signal integrating to ``n`` H may hold.

    The tolerance is the scorer's, ±(0.34 + 0.1 n) (common practice for
    integrals of a few per cent error).

    >>> signal_totals(3.0), signal_totals(10.0), signal_totals(0.8)
    ((3,), (9, 10, 11), (1,))
    """
    tol = 0.34 + 0.1 * n
    out = tuple(t for t in range(max(1, int(n - tol)), int(n + tol) + 2) if abs(t - n) <= tol + 1e-9)
    return out or (max(1, round(n)),)


@dataclass(frozen=True)
class _Sig:
    index: int  # into Problem.h1
    shift: float
    n: float
    mult: str
    single: bool  # first order with one shift: one environment (strict reading)
    totals: tuple[int, ...]

    def words(self) -> str:
        return f"the {self.n:g}H at {self.shift:.2f} ({self.mult})"


@dataclass(frozen=True)
class _Line:
    index: int  # into Problem.c13
    shift: float
    h: int  # DEPT attached H, -1 if not given
    need: str = ""  # what the line's 13C shift region asks of its carbon (constrain/data/c13_regions.csv)
    derived: bool = False  # read off the cross peaks (no 13C list): may stand for several carbons


@dataclass(frozen=True)
class _Peak:
    kind: str  # HSQC | COSY | HMBC
    a: int  # local signal index
    b: int  # local signal (COSY) or line (HSQC/HMBC) index
    weak: bool
    label: str


@dataclass(frozen=True)
class _Var:
    """One witness atom: for the signals in ``sigs`` and (if >= 0) the line."""

    sigs: tuple[int, ...]
    line: int
    carbon: bool


class _Cap(Exception):
    pass


class _View:
    """Per-structure data the search needs: H counts, classes, distances."""

    def __init__(self, graph: Graph, reach: int) -> None:
        n = len(graph.symbols)
        self.n = n
        self.hs = graph.hs
        self.flags = graph.flags()
        self.carbon = [s == "C" for s in graph.symbols]
        adj: list[list[int]] = [[] for _ in range(n)]
        for u, v in graph.edges:
            adj[u].append(v)
            adj[v].append(u)
        self.adj = adj
        self.reach = reach
        self._dist: dict[int, dict[int, int]] = {}
        colour = [hash((graph.symbols[i], graph.hs[i], len(adj[i]))) for i in range(n)]
        k = len(set(colour))
        while True:
            new = [hash((colour[i], tuple(sorted(colour[j] for j in adj[i])))) for i in range(n)]
            k2 = len(set(new))
            colour = new
            if k2 == k:
                break
            k = k2
        ids: dict[int, int] = {}
        self.cls = [ids.setdefault(c, len(ids)) for c in colour]
        self.members: dict[int, list[int]] = {}
        for i, c in enumerate(self.cls):
            self.members.setdefault(c, []).append(i)

    def ball(self, a: int) -> dict[int, int]:
        """Atoms within ``reach`` bonds of ``a`` -> distance."""
        d = self._dist.get(a)
        if d is None:
            d = {a: 0}
            frontier = [a]
            for depth in range(1, self.reach + 1):
                nxt = []
                for u in frontier:
                    for v in self.adj[u]:
                        if v not in d:
                            d[v] = depth
                            nxt.append(v)
                frontier = nxt
            self._dist[a] = d
        return d


@dataclass(frozen=True, eq=True)
class Correlations(Evidence):
    """HSQC, COSY and HMBC cross peaks as one existential constraint.

    Build it with :func:`correlation_evidence`.

    Examples
    --------
    >>> from elucidate.parse import load_problem
    >>> p = load_problem(formula="C4H8O2",
    ...     h1="3.67 (s, 3H), 2.32 (q, J = 7.6 Hz, 2H), 1.14 (t, J = 7.6 Hz, 3H)",
    ...     c13="174.8, 51.5, 27.5, 9.2", hsqc="3.67/51.5, 1.14/9.2", hmbc="3.67/174.8, 1.14/174.8")
    >>> strict = correlation_evidence(p)[0]
    >>> strict.reason(Graph.from_smiles("CCC(=O)OC")) is None     # methyl propanoate
    True
    >>> strict.reason(Graph.from_smiles("CCOC(C)=O")) is not None  # ethyl acetate
    True
    """

    signals: tuple[_Sig, ...] = ()
    lines: tuple[_Line, ...] = ()
    peaks: tuple[_Peak, ...] = ()
    long_range: bool = False
    n_carbons: int = 0  # carbons in the formula (for group_bounds)
    drop_tier: int = 2  # tier of a long-range reading (1: with HMBC, 2: HSQC/COSY only)

    @property
    def key(self) -> str:  # type: ignore[override]
        if not self.long_range:
            return "2d"
        return "2d-long-range" if self.drop_tier == 1 else "2d-hsqc-cosy"

    @property
    def title(self) -> str:  # type: ignore[override]
        kinds = [k for k in ("HSQC", "COSY", "HMBC") if any(p.kind == k for p in self.peaks)]
        what = "/".join(kinds) or "2D"
        return f"{what} correlations" + (" (long-range reading)" if self.long_range else "")

    @property
    def tier(self) -> int:  # type: ignore[override]
        return self.drop_tier if self.long_range else 0

    @property
    def relaxation(self) -> str:  # type: ignore[override]
        if self.long_range:
            kinds = "/".join(k for k in ("HSQC", "COSY", "HMBC") if any(p.kind == k for p in self.peaks))
            if self.drop_tier == 1:
                rest = "/".join(k for k in ("HSQC", "COSY") if any(p.kind == k for p in self.peaks))
                return "the HMBC cross peaks" + (f" (the least certain class; {rest} still hard)" if rest else "")
            return f"the {kinds} cross peaks"
        return "the 2-3-bond reading of the 2D correlations (first-order signals one environment)"

    def describe(self) -> str:
        parts = []
        for kind, words in (
            ("HSQC", "H on the carbon of the line"),
            ("COSY", "H on bonded atoms or one CH2" + (", or 4 bonds apart" if self.long_range else "")),
            ("HMBC", ("a carbon of the line 2-4 bonds from the H" if self.long_range
                      else "a carbon of the line 2-3 bonds from the H")),
        ):
            mine = [p.label for p in self.peaks if p.kind == kind]
            if mine:
                parts.append(f"{kind} {', '.join(m.split(' ', 1)[1] for m in mine)}: {words}")
        return "; ".join(parts) or self.title

    def group_bounds(self) -> dict[int, tuple[int, int]] | None:
        """Carbon counts the HSQC peaks imply.

        Each 13C line with an HSQC peak is a different carbon bearing H, so
        at most ``C - lines`` carbons carry none.  In the strict reading a
        line with HSQC peaks to two 1H signals is one CH2 whose two H appear
        at two shifts, so there are at least that many CH2.

        >>> from elucidate.parse import load_problem
        >>> p = load_problem(formula="C4H8O2", h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
        ...                  c13="171.1, 60.4, 21.0, 14.2", hsqc="4.12/60.4, 2.05/21.0, 1.26/14.2")
        >>> correlation_evidence(p)[0].group_bounds()
        {0: (0, 1)}
        """
        by_line: dict[int, set[int]] = {}
        for p in self.peaks:
            if p.kind == "HSQC":
                by_line.setdefault(p.b, set()).add(p.a)
        if not by_line or self.n_carbons <= 0:
            return None
        out = {0: (0, max(0, self.n_carbons - sum(1 for line in by_line if not self.lines[line].derived)))}
        if not self.long_range:
            split = sum(
                1 for line, sigs in by_line.items()
                if len(sigs) >= 2 and not self.lines[line].derived and all(1 in self.signals[s].totals for s in sigs)
            )
            if split:
                out[2] = (split, self.n_carbons)
        return out

    # ------------------------------------------------------------ checking

    def admits_structure(self, st: Any) -> bool:
        labels = st.labels
        graph = Graph(tuple(lab.symbol for lab in labels), tuple(st.hs()), tuple(st.edges), tuple(st.orders))
        view = self._view(graph)
        # each peak alone first: tiny searches that turn most wrong structures down at once
        for p in range(len(self.peaks)):
            if self._feasible(graph, self._model((p,)), view) is False:
                return False
        return self._feasible(graph, self._model(tuple(range(len(self.peaks)))), view) is not False

    def reason(self, graph: Graph) -> str | None:
        everything = tuple(range(len(self.peaks)))
        if self._feasible(graph, self._model(everything)) is not False:
            return None
        view = self._view(graph)
        for p in everything:
            if self._feasible(graph, self._model((p,)), view) is False:
                return self._alone(self.peaks[p])
        # every peak holds alone: find a small set that cannot hold together
        chosen: list[int] = []
        for p in everything:
            chosen.append(p)
            if self._feasible(graph, self._model(tuple(chosen)), view) is False:
                break
        for p in list(chosen):
            rest = tuple(q for q in chosen if q != p)
            if rest and self._feasible(graph, self._model(rest), view) is False:
                chosen.remove(p)
        names = [self.peaks[p].label for p in chosen]
        sigs = sorted({self.signals[i].shift for p in chosen for i in self._sig_ends(self.peaks[p])}, reverse=True)
        lines = sorted({self.lines[self.peaks[p].b].shift for p in chosen if self.peaks[p].kind != "COSY"}, reverse=True)
        what = "the 1H signals at " + ", ".join(f"{s:.2f}" for s in sigs)
        if lines:
            what += " and the 13C lines at " + ", ".join(f"{s:.1f}" for s in lines)
        return (
            f"the cross peaks {_and(names)} cannot all hold at once: each is met alone, but no assignment "
            f"of {what} to this structure's atoms meets them together"
        )

    def _sig_ends(self, peak: _Peak) -> tuple[int, ...]:
        return (peak.a, peak.b) if peak.kind == "COSY" else (peak.a,)

    def _alone(self, peak: _Peak) -> str:
        sig = self.signals[peak.a]
        longer = self.long_range or peak.weak
        if peak.kind == "HSQC":
            line = self.lines[peak.b]
            label = f" (DEPT {_GROUP.get(line.h, 'C')})" if line.h >= 0 else ""
            return (
                f"{peak.label} puts {sig.words()} on the carbon of the {line.shift:.1f} line{label}; "
                f"this structure has no carbon that can carry {self._reading(sig)}"
            )
        if peak.kind == "COSY":
            other = self.signals[peak.b]
            how = "bonded atoms, one CH2, or atoms two bonds apart (4J)" if longer else \
                "bonded atoms (3-bond H-H coupling) or one CH2 (geminal)"
            return (
                f"{peak.label} needs {sig.words()} and {other.words()} on {how}; in this structure no "
                f"{self._reading(sig)} and {self._reading(other)} are that close"
            )
        line = self.lines[peak.b]
        bonds = "two to four" if longer else "two or three"
        return (
            f"{peak.label} needs a carbon of the {line.shift:.1f} line {bonds} bonds from {sig.words()}; "
            f"in this structure no carbon that can give that line is that close to "
            f"a {self._reading(sig)}"
        )

    def _reading(self, sig: _Sig) -> str:
        """What the signal can stand for, in words."""
        if not sig.single or self.long_range:
            return f"set of atoms holding {_or([str(t) for t in sig.totals])} H"
        words = []
        for t in sorted(sig.totals, key=lambda t: (abs(t - sig.n), t)):
            for h in (3, 2, 1):
                if t % h == 0:
                    k = t // h
                    words.append(f"{_GROUP[h]}" if k == 1 else f"{k} equivalent {_GROUP[h]}")
            words.append(f"one H each of {t} equivalent CH2" if t > 1 else "one H of a CH2")
        return words[0] + (f" (or {words[1]})" if len(words) > 1 else "")

    # ------------------------------------------------------------ the search

    def _view(self, graph: Graph) -> _View:
        return _View(graph, 3 if self.long_range or any(p.weak for p in self.peaks) else 2)

    @functools.lru_cache(maxsize=512)  # noqa: B019 - few objects, small models
    def _model(self, chosen: tuple[int, ...]) -> tuple[tuple[_Var, ...], tuple[tuple[int, int, int, int], ...], tuple]:
        """Witness variables, distance constraints (u, v, dmin, dmax) and the
        variables' keys for a set of peaks."""
        vars_: list[_Var] = []
        index: dict[tuple, int] = {}
        cons: list[tuple[int, int, int, int]] = []

        def var(key: tuple, v: _Var) -> int:
            if key not in index:
                index[key] = len(vars_)
                vars_.append(v)
            return index[key]

        hsqc_by_line: dict[int, list[int]] = {}
        for p in chosen:
            peak = self.peaks[p]
            if peak.kind == "HSQC":
                hsqc_by_line.setdefault(peak.b, []).append(peak.a)
        for line, sigs in sorted(hsqc_by_line.items()):
            if self.long_range or self.lines[line].derived:
                for s in sorted(set(sigs)):
                    var(("hsqc", line, s), _Var((s,), line, True))
            else:  # one carbon per line: its HSQC signals share it
                var(("hsqc", line), _Var(tuple(sorted(set(sigs))), line, True))
        for p in chosen:
            peak = self.peaks[p]
            longer = 1 if (self.long_range or peak.weak) else 0
            if peak.kind == "COSY":
                u = var(("h", p, 0), _Var((peak.a,), -1, False))
                v = var(("h", p, 1), _Var((peak.b,), -1, False))
                cons.append((u, v, 0, 1 + longer))
            elif peak.kind == "HMBC":
                u = var(("h", p, 0), _Var((peak.a,), -1, False))
                v = var(("c", p), _Var((), peak.b, True))
                cons.append((u, v, 0 if self.long_range else 1, 2 + longer))
        return tuple(vars_), tuple(cons), tuple(index)

    def _feasible(self, graph: Graph, model: tuple, view: _View | None = None) -> bool | None:
        """True / False, or None when the step cap was hit (undecided: admit)."""
        return self._solve(graph, model, view)[0]

    def _solve(self, graph: Graph, model: tuple, view: _View | None = None,
               max_nodes: int = MAX_NODES) -> tuple[bool | None, dict]:
        """(feasible, witness): the witness maps each variable key to its atom."""
        vars_, cons, keys = model
        if not vars_:
            return True, {}
        view = view or self._view(graph)
        search = _Search(self, view, vars_, cons, max_nodes)
        try:
            ok = search.run()
        except _Cap:
            return None, {}
        return ok, (dict(zip(keys, search.assign)) if ok else {})

    # ------------------------------------------------------------ per candidate

    def check_rows(self, graph: Graph) -> tuple[CheckRow, ...]:
        """Each cross peak on one structure: met, met only in the long-range
        reading, or not met (with the reason).

        When all peaks hold together in the strict reading they are all met,
        with the atoms of one assignment meeting them all.  Otherwise the
        peaks are taken in the order given: a peak is met when it holds
        together with the peaks met before it (so a set that cannot hold at
        once shows its later members as not met), met (long-range) when it
        holds with them in the widened reading.  Only the strict reading
        reports, once for all readings.

        >>> from elucidate.parse import load_problem
        >>> p = load_problem(formula="C4H8O2", h1="4.12 (q, J = 7.1 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)",
        ...                  c13="171.1, 60.4, 21.0, 14.2", cosy="4.12/1.26", hmbc="2.05/171.1, 1.26/171.1")
        >>> [(r.label, r.status, r.atoms) for r in correlation_evidence(p)[0].check_rows(Graph.from_smiles("CCOC(C)=O"))]
        [('COSY 4.12/1.26', 'met', (1, 0)), ('HMBC 2.05/171.1', 'met', (4, 3)), ('HMBC 1.26/171.1', 'met (4 bonds)', (0, 3))]
        """
        if self.long_range:
            return ()
        view = self._view(graph)
        everything = tuple(range(len(self.peaks)))
        ok, joint = self._solve(graph, self._model(everything), view)
        if ok is not False:
            return tuple(CheckRow(self.peaks[p].kind, self.peaks[p].label, "met", self._atoms(p, joint))
                         for p in everything)
        wide = Correlations(self.signals, self.lines, self.peaks, long_range=True, n_carbons=self.n_carbons)
        wide_view = wide._view(graph)
        # the strict reading with every COSY/HMBC peak one bond longer (as if marked weak)
        four_j = Correlations(self.signals, self.lines, tuple(_Peak(q.kind, q.a, q.b, True, q.label) for q in self.peaks),
                              long_range=False, n_carbons=self.n_carbons)
        four_view = four_j._view(graph)
        # peaks that fail alone are out at once; the rest are taken in order (searches capped at
        # CHECK_NODES steps: an undecided search counts as met)
        alone = {p: self._solve(graph, self._model((p,)), view)[0] is not False for p in everything}
        kept: list[int] = []
        for p in everything:
            if alone[p] and self._solve(graph, self._model(tuple(kept + [p])), view, CHECK_NODES)[0] is not False:
                kept.append(p)
        _, witness = self._solve(graph, self._model(tuple(kept)), view, CHECK_NODES)
        rows = []
        for p in everything:
            peak = self.peaks[p]
            if p in kept:
                rows.append(CheckRow(peak.kind, peak.label, "met", self._atoms(p, witness)))
                continue
            base = tuple(kept + [p]) if alone[p] else (p,)
            four, four_witness = four_j._solve(graph, four_j._model(base), four_view, CHECK_NODES)
            if four is not False and peak.kind != "HSQC":
                rows.append(CheckRow(peak.kind, peak.label, "met (4 bonds)", four_j._atoms(p, four_witness)))
                continue
            far, wide_witness = wide._solve(graph, wide._model(base), wide_view, CHECK_NODES)
            if far is not False:
                rows.append(CheckRow(peak.kind, peak.label, "met (long-range)", wide._atoms(p, wide_witness)))
                continue
            why = (f"{peak.label} cannot hold together with the cross peaks met before it" if alone[p]
                   else wide._alone(peak))
            rows.append(CheckRow(peak.kind, peak.label, "not met", (), why))
        return tuple(rows)

    def _atoms(self, p: int, witness: dict) -> tuple[int, ...]:
        """The witness atoms of peak ``p`` (see :class:`~elucidate.model.CheckRow`)."""
        peak = self.peaks[p]
        if peak.kind == "HSQC":
            atom = witness.get(("hsqc", peak.b), witness.get(("hsqc", peak.b, peak.a)))
            return () if atom is None else (atom,)
        if peak.kind == "COSY":
            got = (witness.get(("h", p, 0)), witness.get(("h", p, 1)))
        else:
            got = (witness.get(("h", p, 0)), witness.get(("c", p)))
        return () if None in got else got  # type: ignore[return-value]


class _Search:
    def __init__(self, ev: Correlations, view: _View, vars_: tuple[_Var, ...], cons: tuple,
                 max_nodes: int = MAX_NODES) -> None:
        self.ev = ev
        self.max_nodes = max_nodes
        self.view = view
        self.vars = vars_
        self.cons_of: list[list[tuple[int, int, int]]] = [[] for _ in vars_]
        for u, v, lo, hi in cons:
            self.cons_of[u].append((v, lo, hi))
            self.cons_of[v].append((u, lo, hi))
        self.assign = [-1] * len(vars_)
        self.members: dict[int, dict[int, int]] = {}  # signal -> atom -> refs
        self.users: dict[int, dict[int, int]] = {}  # atom -> signal -> refs
        self.line_members: dict[int, dict[int, int]] = {}
        self.carbon_line: dict[int, dict[int, int]] = {}
        self.nodes = 0
        self.domains = [self._domain(v) for v in vars_]
        self.order = self._order()

    # ---- static parts

    def _sig_accepts(self, s: int, a: int) -> bool:
        sig = self.ev.signals[s]
        h = self.view.hs[a]
        if h < 1:
            return False
        if sig.single and not self.ev.long_range:
            size = len(self.view.members[self.view.cls[a]])
            shares = (h, 1) if h == 2 else (h,)
            return any(t % sh == 0 and 1 <= t // sh <= size for t in sig.totals for sh in shares)
        return (1 if h == 2 else h) <= max(sig.totals)

    def _domain(self, v: _Var) -> list[int]:
        out = []
        for a in range(self.view.n):
            if v.carbon and not self.view.carbon[a]:
                continue
            if v.line >= 0:
                line = self.ev.lines[v.line]
                if line.h >= 0 and self.view.hs[a] != line.h:
                    continue
                if line.need and not self.ev.long_range and not _NEEDS[line.need](self.view.flags[a]):
                    continue
            if v.sigs and not all(self._sig_accepts(s, a) for s in v.sigs):
                continue
            if len(v.sigs) > 1 and self.view.hs[a] != 2:
                continue
            out.append(a)
        return out

    def _order(self) -> list[int]:
        left = set(range(len(self.vars)))
        order: list[int] = []
        while left:
            placed = set(order)
            best = min(
                left,
                key=lambda v: (-sum(1 for w, _, _ in self.cons_of[v] if w in placed),
                               len(self.domains[v]), v),
            )
            order.append(best)
            left.remove(best)
        return order

    # ---- state

    def _add(self, v: int, a: int) -> bool:
        var = self.vars[v]
        for s in var.sigs:
            m = self.members.setdefault(s, {})
            m[a] = m.get(a, 0) + 1
            u = self.users.setdefault(a, {})
            u[s] = u.get(s, 0) + 1
        if var.line >= 0:
            m = self.line_members.setdefault(var.line, {})
            m[a] = m.get(a, 0) + 1
            c = self.carbon_line.setdefault(a, {})
            c[var.line] = c.get(var.line, 0) + 1
        self.assign[v] = a
        return self._consistent(var, a)

    def _remove(self, v: int, a: int) -> None:
        var = self.vars[v]
        for s in var.sigs:
            _dec(self.members[s], a)
            _dec(self.users[a], s)
        if var.line >= 0:
            _dec(self.line_members[var.line], a)
            _dec(self.carbon_line[a], var.line)
        self.assign[v] = -1

    def _consistent(self, var: _Var, a: int) -> bool:
        if var.line >= 0:
            if len(self.carbon_line[a]) > 1:
                return False
            if not self.ev.long_range:
                cls = self.view.cls
                if len({cls[x] for x in self.line_members[var.line]}) > 1:
                    return False
        for s in self.users.get(a, {}):
            if not self._sig_ok(s):
                return False
        return True

    def _sig_ok(self, s: int, final: bool = False) -> bool:
        atoms = list(self.members.get(s, {}))
        if not atoms:
            return True
        hs = self.view.hs
        shared = [x for x in atoms if len(self.users[x]) > 1]
        for x in shared:
            if hs[x] != 2 or len(self.users[x]) > 2:
                return False
        sig = self.ev.signals[s]
        if sig.single and not self.ev.long_range:
            cls = self.view.cls
            c = cls[atoms[0]]
            if any(cls[x] != c for x in atoms):
                return False
            h = hs[atoms[0]]
            shares = (1,) if shared else ((h, 1) if h == 2 else (h,))
            pool = self.view.members[c]
            spare = len(pool)
            if final:
                spare = len(atoms) + sum(
                    1 for x in pool if x not in self.members[s]
                    and (not self.users.get(x) or (h == 2 and len(self.users[x]) < 2))
                )
            return any(
                t % sh == 0 and len(atoms) <= t // sh <= spare for t in sig.totals for sh in shares
            )
        return sum(1 if hs[x] == 2 else hs[x] for x in atoms) <= max(sig.totals)

    # ---- search

    def run(self) -> bool:
        return self._go(0)

    def _go(self, k: int) -> bool:
        if k == len(self.order):
            return all(self._sig_ok(s, final=True) for s in self.members)
        v = self.order[k]
        checks = [(self.assign[w], lo, hi) for w, lo, hi in self.cons_of[v] if self.assign[w] >= 0]
        for a in self.domains[v]:
            self.nodes += 1
            if self.nodes > self.max_nodes:
                raise _Cap
            ok = True
            for b, lo, hi in checks:
                d = self.view.ball(b).get(a)
                if d is None or not lo <= d <= hi:
                    ok = False
                    break
            if not ok:
                continue
            if self._add(v, a) and self._ahead(v) and self._go(k + 1):
                return True
            self._remove(v, a)
        return False

    def _ahead(self, v: int) -> bool:
        """Forward check: every unplaced variable bound to ``v`` still has an
        atom within its distance bounds of all its placed partners."""
        for w, _, _ in self.cons_of[v]:
            if self.assign[w] >= 0:
                continue
            placed = [(self.assign[u], lo, hi) for u, lo, hi in self.cons_of[w] if self.assign[u] >= 0]
            balls = [(self.view.ball(b), lo, hi) for b, lo, hi in placed]
            if not any(all((d := ball.get(x)) is not None and lo <= d <= hi for ball, lo, hi in balls)
                       for x in self.domains[w]):
                return False
        return True


def _dec(counter: dict[int, int], key: int) -> None:
    counter[key] -= 1
    if not counter[key]:
        del counter[key]


def _and(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _or(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " or " + items[-1]


# ----------------------------------------------------------------- reading


def correlation_evidence(problem: Problem) -> tuple[Correlations, ...]:
    """The readings of the problem's matched HSQC/COSY/HMBC cross peaks,
    strictest first (empty when there are none).

    The strict reading (tier 0); the long-range reading of every peak
    (tier 1, when there are HMBC peaks); the long-range reading of the HSQC
    and COSY peaks alone (tier 2, when there are any).
    """
    peaks = [c for c in problem.correlations if c.matched and c.kind in ("HSQC", "COSY", "HMBC")]
    if not peaks:
        return ()
    sig_ids: dict[int, int] = {}
    line_ids: dict[int, int] = {}
    signals: list[_Sig] = []
    lines: list[_Line] = []

    def sig(i: int) -> int:
        if i not in sig_ids:
            s = problem.h1[i]
            single = s.pattern is not None and s.shift_low == s.shift_high
            sig_ids[i] = len(signals)
            signals.append(_Sig(i, s.shift, s.h_count, ("br " if s.broad else "") + s.multiplicity, single,
                                signal_totals(s.h_count)))
        return sig_ids[i]

    def line(j: int) -> int:
        if j not in line_ids:
            c = problem.c13[j]
            line_ids[j] = len(lines)
            derived = is_from_cross_peaks(c)
            # a line read off the cross peaks spans the δC values that made it
            ends = {c.shift} if not derived else {
                p.shift2 for p in problem.correlations if p.kind in ("HSQC", "HMBC") and p.signal2 == j}
            regions = {next((r.needs for r in carbon_regions() if r.holds(x)), "") for x in ends or {c.shift}}
            lines.append(_Line(j, c.shift, -1 if c.attached_h is None else c.attached_h,
                               regions.pop() if len(regions) == 1 else "", derived))
        return line_ids[j]

    out = []
    for c in peaks:
        a = sig(c.signal1)  # type: ignore[arg-type]
        b = sig(c.signal2) if c.kind == "COSY" else line(c.signal2)  # type: ignore[arg-type]
        out.append(_Peak(c.kind, a, b, c.intensity in _WEAK, c.label))
    common = (tuple(signals), tuple(lines), tuple(out))
    n_c = problem.formula["C"]
    found = [Correlations(*common, long_range=False, n_carbons=n_c)]
    near = tuple(p for p in out if p.kind != "HMBC")
    if len(near) < len(out):  # HMBC present: the long-range reading of all, then without HMBC
        found.append(Correlations(*common, long_range=True, n_carbons=n_c, drop_tier=1))
    if near:
        found.append(Correlations(tuple(signals), tuple(lines), near, long_range=True, n_carbons=n_c,
                                  drop_tier=2))
    return tuple(found)
