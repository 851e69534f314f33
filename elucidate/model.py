"""Plain data shared by all stages: what goes in, what comes out.

One unknown travels as a :class:`Problem` (parse), is turned into candidate
structures (generate), each gets a :class:`Prediction` (predict), is scored
into a :class:`Candidate` or a :class:`Rejection` (score), and the lot is a
:class:`SolveResult` (report). Every class here is a frozen dataclass with
a ``to_json()`` that gives plain JSON-ready values, so the CLI's ``--json``
and the HTML report read the same objects.

Stages may add fields at the end of these classes (with defaults); renaming
or removing one is a change of the JSON contract and needs a test update.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from typing import Any

__all__ = [
    "ELEMENTS",
    "VALENCE",
    "Formula",
    "H1Signal",
    "C13Signal",
    "SetAside",
    "CORRELATION_KINDS",
    "HETERONUCLEAR",
    "CrossPeak",
    "Problem",
    "Coupling",
    "Environment",
    "CarbonShift",
    "Prediction",
    "Assignment",
    "C13Assignment",
    "CheckRow",
    "Candidate",
    "Rejection",
    "SolveResult",
    "NextMeasurement",
    "Explanation",
    "multiplicity_pattern",
]

#: Elements a formula may contain, in Hill order after C and H.
ELEMENTS: tuple[str, ...] = ("C", "H", "Br", "Cl", "F", "I", "N", "O", "P", "S", "Si")

#: Default (lowest) valence of each element (common practice).
VALENCE: dict[str, int] = {
    "C": 4, "Si": 4, "N": 3, "P": 3, "O": 2, "S": 2,
    "H": 1, "F": 1, "Cl": 1, "Br": 1, "I": 1,
}

_HALOGENS = ("F", "Cl", "Br", "I")


def _json(value: Any) -> Any:
    if isinstance(value, float):
        return round(value, 4)
    if isinstance(value, dict):
        return {k: _json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json(v) for v in value]
    return value


class _JsonMixin:
    def to_json(self) -> dict[str, Any]:
        """Plain, JSON-serialisable dict of this record (floats rounded to 4 dp)."""
        return _json(asdict(self))  # type: ignore[call-overload]


@dataclass(frozen=True)
class Formula(_JsonMixin):
    """A molecular formula as element counts.

    Parameters
    ----------
    counts : tuple of (element, count)
        Every element with a non-zero count, in Hill order (C, H, then
        alphabetical).  Build one with :func:`elucidate.parse.parse_formula`.
    """

    counts: tuple[tuple[str, int], ...]

    def __getitem__(self, element: str) -> int:
        return dict(self.counts).get(element, 0)

    def as_dict(self) -> dict[str, int]:
        return dict(self.counts)

    @property
    def hill(self) -> str:
        """Hill-order text, e.g. ``C9H10O2``."""
        return "".join(f"{el}{n if n > 1 else ''}" for el, n in self.counts)

    @property
    def heavy_atoms(self) -> int:
        return sum(n for el, n in self.counts if el != "H")

    @property
    def dou_twice(self) -> int:
        """Twice the degree of unsaturation (an integer for any formula).

        DoU = C + Si − (H + X)/2 + (N + P)/2 + 1 (common practice).
        """
        c = self["C"] + self["Si"]
        x = self["H"] + sum(self[h] for h in _HALOGENS)
        n = self["N"] + self["P"]
        return 2 * c - x + n + 2

    @property
    def dou(self) -> float:
        """Degree of unsaturation (rings + π bonds); may be half-integer or
        negative for formulas that are not neutral closed-shell molecules."""
        return self.dou_twice / 2

    def to_json(self) -> dict[str, Any]:
        dou = self.dou_twice // 2 if self.dou_twice % 2 == 0 else self.dou
        return {"formula": self.hill, "elements": self.as_dict(), "dou": dou}


_MULT_WORDS = {"quint": 5, "sext": 6, "sept": 7}
_MULT_LETTERS = {"s": 1, "d": 2, "t": 3, "q": 4}


def multiplicity_pattern(multiplicity: str) -> tuple[int, ...] | None:
    """The n+1 line counts a first-order multiplicity stands for.

    ``'s'`` → ``(1,)``, ``'dt'`` → ``(2, 3)``, ``'quint'`` → ``(5,)``;
    ``'m'`` (or anything not first order) → ``None``.

    Examples
    --------
    >>> multiplicity_pattern("ddd")
    (2, 2, 2)
    >>> multiplicity_pattern("m") is None
    True
    """
    if multiplicity in _MULT_WORDS:
        return (_MULT_WORDS[multiplicity],)
    if multiplicity and all(ch in _MULT_LETTERS for ch in multiplicity):
        if multiplicity == "s":
            return (1,)
        if "s" in multiplicity:
            return None
        return tuple(_MULT_LETTERS[ch] for ch in multiplicity)
    return None


@dataclass(frozen=True)
class H1Signal(_JsonMixin):
    """One observed 1H signal, normalised.

    ``multiplicity`` is one of ``s d t q quint sext sept m`` or a compound of
    ``d t q`` (``dd``, ``dt``, ``td``, ``ddd``, ``dq``, ``tt`` …); broadness and
    "apparent" are separate flags (``br s`` → ``"s"`` with ``broad=True``).
    ``couplings`` are J in Hz, largest first.  ``h_count`` is the number of H
    after any rescaling of relative integrals; ``integral`` is as given.
    """

    shift: float
    shift_low: float
    shift_high: float
    multiplicity: str
    couplings: tuple[float, ...]
    h_count: float
    integral: float
    broad: bool = False
    apparent: bool = False
    assignment: str | None = None
    text: str = ""

    @property
    def pattern(self) -> tuple[int, ...] | None:
        return multiplicity_pattern(self.multiplicity)


@dataclass(frozen=True)
class C13Signal(_JsonMixin):
    """One observed 13C signal; ``attached_h`` from DEPT (3/2/1/0) if known."""

    shift: float
    carbons: int = 1
    attached_h: int | None = None
    text: str = ""


@dataclass(frozen=True)
class SetAside(_JsonMixin):
    """A signal the user annotated as the solvent, water or an impurity.

    It is read but kept out of :attr:`Problem.h1` / :attr:`Problem.c13`;
    ``text`` is the signal as given (``"7.26 (CHCl3)"``), ``label`` the
    annotation (``"CHCl3"``), ``reason`` what it was taken for (``"the
    residual solvent signal"``), ``where`` its place in the input.
    """

    nucleus: str  # "1H" | "13C"
    shift: float
    text: str
    label: str
    reason: str
    where: str = ""


#: 2D experiments a case may carry; the first three are hard constraints.
CORRELATION_KINDS: tuple[str, ...] = ("HSQC", "COSY", "HMBC", "NOESY")
#: Heteronuclear experiments (first shift 1H, second 13C); the others are 1H/1H.
HETERONUCLEAR: frozenset[str] = frozenset({"HSQC", "HMBC"})


@dataclass(frozen=True)
class CrossPeak(_JsonMixin):
    """One 2D cross peak, matched to the 1D signals.

    ``shift1`` is the 1H shift (the first 1H shift for COSY/NOESY) and
    ``shift2`` the 13C shift (HSQC/HMBC) or the second 1H shift.
    ``signal1`` indexes :attr:`Problem.h1`; ``signal2`` indexes
    :attr:`Problem.c13` (HSQC/HMBC) or :attr:`Problem.h1` (COSY/NOESY).
    Either is ``None`` when the shift matched no signal or more than one
    (the peak is then shown but used in no constraint).
    """

    kind: str  # "HSQC" | "COSY" | "HMBC" | "NOESY"
    shift1: float
    shift2: float
    signal1: int | None = None
    signal2: int | None = None
    intensity: str = ""
    note: str = ""
    where: str = ""

    @property
    def matched(self) -> bool:
        return self.signal1 is not None and self.signal2 is not None

    @property
    def label(self) -> str:
        """``"HMBC 3.67/174.8"``: the kind and the shifts as a chemist writes them."""
        second = f"{self.shift2:.1f}" if self.kind in HETERONUCLEAR else f"{self.shift2:.2f}"
        return f"{self.kind} {self.shift1:.2f}/{second}"


@dataclass(frozen=True)
class Problem(_JsonMixin):
    """A validated unknown: formula, spectra, and user constraints."""

    formula: Formula
    h1: tuple[H1Signal, ...]
    c13: tuple[C13Signal, ...] = ()
    solvent: str | None = None
    field_mhz: float | None = None
    require: tuple[str, ...] = ()
    forbid: tuple[str, ...] = ()
    name: str | None = None
    description: str | None = None
    warnings: tuple[str, ...] = ()
    set_aside: tuple[SetAside, ...] = ()  # solvent/impurity signals, not in h1/c13
    c13_complete: bool = False  # every distinct carbon has its own 13C line
    correlations: tuple[CrossPeak, ...] = ()  # 2D cross peaks (HSQC, COSY, HMBC, NOESY)

    @property
    def h_total(self) -> float:
        return sum(s.h_count for s in self.h1)

    def to_json(self) -> dict[str, Any]:
        out = self.formula.to_json()
        out.update(
            {
                "name": self.name,
                "description": self.description,
                "h1": [s.to_json() for s in self.h1],
                "h1_total": round(self.h_total, 4),
                "c13": [s.to_json() for s in self.c13],
                "solvent": self.solvent,
                "field_mhz": self.field_mhz,
                "require": list(self.require),
                "forbid": list(self.forbid),
                "warnings": list(self.warnings),
                "set_aside": [a.to_json() for a in self.set_aside],
                "c13_complete": self.c13_complete,
                "correlations": [c.to_json() for c in self.correlations],
            }
        )
        return out


@dataclass(frozen=True)
class Coupling(_JsonMixin):
    """A coupling partner of an environment: ``h_count`` H of ``environment``
    at a typical ``j_hz`` for its ``kind`` (e.g. ``"vicinal sp3"``)."""

    environment: int
    h_count: int
    j_hz: float
    kind: str


@dataclass(frozen=True)
class Environment(_JsonMixin):
    """A set of topologically equivalent H with their predicted signal.

    ``atoms`` are the heavy atoms carrying the H, as indices in the input
    SMILES order.  ``derivation`` lists the terms that sum to ``shift``, in
    the published method's words.
    """

    index: int
    atoms: tuple[int, ...]
    h_count: int
    shift: float
    uncertainty: float
    multiplicity: str
    couplings: tuple[Coupling, ...]
    exchangeable: bool
    diastereotopic: bool
    label: str
    derivation: tuple[str, ...]
    kind: str = ""  # shift class: sp3, alkene, aromatic, heteroaromatic, aldehyde, alkyne, XH, other

    def to_json(self) -> dict[str, Any]:
        out = _json(asdict(self))
        out["partners"] = out.pop("couplings")
        return out


@dataclass(frozen=True)
class CarbonShift(_JsonMixin):
    """Predicted 13C shift of a set of equivalent carbons."""

    atoms: tuple[int, ...]
    attached_h: int
    shift: float
    uncertainty: float
    derivation: tuple[str, ...] = ()


@dataclass(frozen=True)
class Prediction(_JsonMixin):
    """Predicted 1H (and 13C) spectrum of one structure."""

    smiles: str
    environments: tuple[Environment, ...]
    carbons: tuple[CarbonShift, ...] = ()
    warnings: tuple[str, ...] = ()

    def to_json(self) -> dict[str, Any]:
        return {
            "smiles": self.smiles,
            "environments": [e.to_json() for e in self.environments],
            "carbons": [c.to_json() for c in self.carbons],
            "warnings": list(self.warnings),
        }


@dataclass(frozen=True)
class Assignment(_JsonMixin):
    """One predicted environment matched to one observed signal
    (``signal`` is the index into ``Problem.h1``; ``None`` = not observed)."""

    environment: int
    signal: int | None
    h_count: int
    predicted: float
    observed: float | None
    deviation: float | None
    multiplicity_predicted: str
    multiplicity_observed: str | None
    cost: float = 0.0


@dataclass(frozen=True)
class CheckRow(_JsonMixin):
    """How one candidate meets one item of evidence (one 2D cross peak).

    ``status`` is ``"met"``, ``"met (4 bonds)"`` (a 4J COSY/HMBC peak),
    ``"met (long-range)"`` (only in the widened reading: overlapped signals,
    any carbon) or ``"not met"``; ``atoms`` are
    witness heavy atoms in the candidate's SMILES order (COSY: the two
    H-bearing atoms; HMBC: the H-bearing atom, then the carbon; HSQC: the
    carbon), empty when not met; ``reason`` says why not.
    """

    kind: str
    label: str
    status: str
    atoms: tuple[int, ...] = ()
    reason: str = ""


@dataclass(frozen=True)
class C13Assignment(_JsonMixin):
    """One predicted carbon class matched to one observed 13C line.

    ``line`` is the index into ``Problem.c13`` (``None``: the class has no
    line, e.g. a weak quaternary carbon not seen); ``atoms`` are the
    equivalent carbons of the class (``()``: an observed line that no class
    explains).  ``carbons`` is how many of the class's carbons sit on this
    line (one of a pair that shows as two lines, e.g. the diastereotopic
    methyls of an isopropyl group next to a stereocentre).  ``h_observed``
    comes from the DEPT label of the line, if given.  ``deviation`` is
    δ predicted − δ observed; ``cost`` is this row's share of the 13C cost in
    typical errors (per carbon, summed over its carbons).
    """

    line: int | None
    atoms: tuple[int, ...]
    carbons: int
    predicted: float | None
    observed: float | None
    deviation: float | None
    h_predicted: int | None
    h_observed: int | None
    uncertainty: float | None = None
    cost: float = 0.0


@dataclass(frozen=True)
class Candidate(_JsonMixin):
    """A structure consistent with the hard constraints, with its evidence."""

    rank: int
    smiles: str
    score: float
    verdict: str  # "consistent" | "poor fit"
    assignments: tuple[Assignment, ...]
    notes: tuple[str, ...] = ()
    prediction: Prediction | None = None
    c13_assignments: tuple[C13Assignment, ...] = ()
    checks: tuple[CheckRow, ...] = ()  # per 2D cross peak: met / not met on this structure

    def to_json(self) -> dict[str, Any]:
        return {
            "rank": self.rank,
            "smiles": self.smiles,
            "score": round(self.score, 4),
            "verdict": self.verdict,
            "assignments": [a.to_json() for a in self.assignments],
            "c13_assignments": [a.to_json() for a in self.c13_assignments],
            "correlations": [c.to_json() for c in self.checks],
            "notes": list(self.notes),
            "prediction": self.prediction.to_json() if self.prediction else None,
        }


@dataclass(frozen=True)
class Rejection(_JsonMixin):
    """A structure left out, with the reasons in a chemist's words."""

    smiles: str
    reasons: tuple[str, ...]


@dataclass(frozen=True)
class NextMeasurement(_JsonMixin):
    """One observation that would tell close candidates apart (see
    :mod:`elucidate.advise`).

    ``ranks`` are the candidates compared and ``predicted`` the value each
    predicts, in the same order.  ``discrimination`` is the smallest, over
    the pairs of compared candidates, of the predicted difference divided by
    the prediction's typical error (``basis`` says how); ``separated`` is the
    number of pairs it tells apart (figure of at least 2) out of ``pairs``;
    ``top_pair`` the figure for the best two candidates alone.
    """

    experiment: str  # "13C", "DEPT", "COSY", "HMBC", "1H coupling", "D2O shake"
    observation: str
    ranks: tuple[int, ...]
    predicted: tuple[str, ...]
    discrimination: float
    separated: int
    pairs: int
    basis: str = ""
    top_pair: float = 0.0

    def figure_text(self) -> str:
        """The discrimination as shown in the reports: the figure, and with
        more than two candidates the pairs told apart and the best two's own.

        Examples
        --------
        >>> NextMeasurement("COSY", "a/b", (1, 2, 3), ("yes", "no", "yes"), 0.0, 2, 3, top_pair=3.0).figure_text()
        '0.0 (2/3 pairs; 1 vs 2: 3.0)'
        """
        if self.pairs <= 1:
            return f"{self.discrimination:.1f}"
        first, second = self.ranks[:2]
        return f"{self.discrimination:.1f} ({self.separated}/{self.pairs} pairs; {first} vs {second}: {self.top_pair:.1f})"


@dataclass(frozen=True)
class SolveResult(_JsonMixin):
    """Everything ``solve`` found for one problem."""

    problem: Problem
    complete: bool
    candidates: tuple[Candidate, ...]
    rejected: tuple[Rejection, ...] = ()
    rejected_counts: tuple[tuple[str, int], ...] = ()
    relaxed: tuple[str, ...] = ()
    counts: tuple[tuple[str, int], ...] = ()
    elapsed_s: float = 0.0  # not in JSON: output is byte-for-byte deterministic
    warnings: tuple[str, ...] = ()
    stopped_by: str | None = None
    not_searched: tuple[str, ...] = ()  # hypotheses / levels a limit left unsearched
    evidence: tuple[str, ...] = ()  # the hard evidence constraints, in words
    next_measurements: tuple[NextMeasurement, ...] = ()  # what would tell the top candidates apart

    def to_json(self) -> dict[str, Any]:
        out = self.problem.formula.to_json()
        out.update(
            {
                "complete": self.complete,
                "stopped_by": self.stopped_by,
                "not_searched": list(self.not_searched),
                "evidence": list(self.evidence),
                "relaxed": list(self.relaxed),
                "counts": dict(self.counts),
                "candidates": [c.to_json() for c in self.candidates],
                "rejected": {
                    "counts": dict(self.rejected_counts),
                    "examples": [r.to_json() for r in self.rejected],
                },
                "input": self.problem.to_json(),
                "warnings": list(self.warnings),
                "next_measurements": [m.to_json() for m in self.next_measurements],
            }
        )
        return out



@dataclass(frozen=True)
class Explanation(_JsonMixin):
    """Where one structure the chemist has in mind stands (``explain``).

    ``verdict`` is ``consistent``, ``poor fit`` or ``rejected``; ``rank`` is
    its place among the candidates the search generated (None if the hard
    constraints exclude it), out of ``total``; ``reasons`` are sentences.
    """

    problem: Problem
    smiles: str
    verdict: str
    rank: int | None
    total: int
    candidate: Candidate | None
    rejection: Rejection | None
    reasons: tuple[str, ...]
    complete: bool
    warnings: tuple[str, ...] = ()

    def to_json(self) -> dict[str, Any]:
        out = self.problem.formula.to_json()
        out.update(
            {
                "smiles": self.smiles,
                "verdict": self.verdict,
                "rank": self.rank,
                "total": self.total,
                "complete": self.complete,
                "reasons": list(self.reasons),
                "candidate": self.candidate.to_json() if self.candidate else None,
                "rejection": self.rejection.to_json() if self.rejection else None,
                "input": self.problem.to_json(),
                "warnings": list(self.warnings),
            }
        )
        return out
