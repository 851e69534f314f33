"""Ranked candidates as an SD file, for a notebook, a registration system or
any drawing program.

Each record is one candidate with 2D coordinates and these SD properties:
``rank``, ``score`` (lower is better), ``verdict``, ``smiles``, ``formula``,
``largest_deviation_ppm``, ``deviations`` (one line per observed signal:
letter, δ observed, δ predicted, Δ, multiplicities, nH), ``notes`` and
``caution`` (:data:`elucidate.CAUTION`).  Written with RDKit's SDWriter; the
bytes depend only on the result.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

from elucidate import CAUTION
from elucidate.errors import InputError
from elucidate.model import Candidate, Problem, SolveResult
from elucidate.report.common import fmt_ppm, largest_deviation, signal_letter, table_rows, write_text

__all__ = ["write_sdf", "sdf_text", "deviation_lines", "explain_sdf_text", "write_explain_sdf"]


def deviation_lines(problem: Problem, candidate: Candidate) -> list[str]:
    """One line per assignment, observed signals first, e.g.
    ``a 4.12 obs 4.00 pred dev -0.12 q/q 2H`` (ASCII only: SD readers
    differ in what they make of other bytes)."""
    out = []
    for a in table_rows(candidate):
        letter = signal_letter(a.signal) if a.signal is not None else "-"
        delta = None if a.observed is None else a.predicted - a.observed
        out.append(
            f"{letter} {_ascii_ppm(a.observed)} obs {fmt_ppm(a.predicted)} pred "
            f"dev {_ascii_delta(delta)} {a.multiplicity_observed or '-'}/{a.multiplicity_predicted} {a.h_count}H"
        )
    return out


def _ascii_ppm(value: float | None) -> str:
    return "-" if value is None else fmt_ppm(value)


def _ascii_delta(value: float | None) -> str:
    return "-" if value is None else f"{value:+.2f}".replace("-0.00", "+0.00")


def sdf_text(result: SolveResult, *, top: int | None = None) -> str:
    """The SD file of ``result``'s candidates as a string."""
    if not isinstance(result, SolveResult):
        raise TypeError(f"expected a SolveResult, got {type(result).__name__}")
    if top is not None and top < 0:
        raise ValueError(f"top must be >= 0, got {top}")
    return _sdf_text(result, top)


def _candidate_props(problem: Problem, cand: Candidate) -> list[tuple[str, str]]:
    worst = largest_deviation(cand)
    worst_text = "" if worst is None or worst.observed is None else f"{worst.predicted - worst.observed:+.3f}"
    return [
        ("rank", str(cand.rank) if cand.rank else ""),
        ("score", f"{cand.score:.4f}"),
        ("verdict", cand.verdict),
        ("smiles", cand.smiles),
        ("formula", problem.formula.hill),
        ("largest_deviation_ppm", worst_text),
        ("deviations", "\n".join(deviation_lines(problem, cand))),
        ("notes", "\n".join(cand.notes)),
    ]


def _records(records: list[tuple[str, str, list[tuple[str, str]]]]) -> str:
    """SD text of (smiles, title, properties) records; empty values are left out."""
    from rdkit import Chem, RDLogger
    from rdkit.Chem import rdDepictor

    buffer = io.StringIO()
    writer = Chem.SDWriter(buffer)
    writer.SetKekulize(True)
    try:
        for smiles, title, props in records:
            RDLogger.DisableLog("rdApp.*")
            try:
                mol = Chem.MolFromSmiles(smiles)
            finally:
                RDLogger.EnableLog("rdApp.*")
            if mol is None:
                raise InputError(f"structure '{smiles}': not a valid SMILES")
            rdDepictor.Compute2DCoords(mol)
            mol.SetProp("_Name", title)
            for key, value in [*props, ("caution", CAUTION)]:
                if value:
                    mol.SetProp(key, value)
            writer.write(mol)
    finally:
        writer.close()
    return buffer.getvalue()


def _title(problem: Problem, what: str) -> str:
    name = f"{problem.name} " if problem.name else ""
    return f"{name}{problem.formula.hill} {what}"


def _sdf_text(result: SolveResult, top: int | None) -> str:
    problem = result.problem
    shown = result.candidates if top is None else result.candidates[:top]
    return _records(
        [(c.smiles, _title(problem, f"candidate {c.rank}"), _candidate_props(problem, c)) for c in shown]
    )


def explain_sdf_text(explanation: Any) -> str:
    """One SD record for the structure ``explain`` was asked about: its
    verdict, rank (if ranked), score and deviations (if it could be
    assigned) and the reasons."""
    problem = getattr(explanation, "problem", None)
    if not isinstance(problem, Problem):
        raise TypeError("explain_sdf_text needs an Explanation with its problem")
    cand: Candidate | None = getattr(explanation, "candidate", None)
    props = _candidate_props(problem, cand) if cand is not None else [
        ("smiles", explanation.smiles),
        ("formula", problem.formula.hill),
    ]
    props = [(k, v) for k, v in props if k not in ("verdict", "rank")]
    rank = getattr(explanation, "rank", None)
    props = [("verdict", explanation.verdict), ("rank", str(rank) if rank else ""), *props]
    total = getattr(explanation, "total", None)
    if total is not None:
        props.append(("ranked_structures", str(total)))
    props.append(("reasons", "\n".join(getattr(explanation, "reasons", ()))))
    return _records([(explanation.smiles, _title(problem, f"explain {explanation.verdict}"), props)])


def write_explain_sdf(explanation: Any, path: str | Path) -> Path:
    """Write :func:`explain_sdf_text` to ``path``; :class:`InputError` if it cannot."""
    return write_text(Path(path), explain_sdf_text(explanation), "--sdf")




def write_sdf(result: SolveResult, path: str | Path, *, top: int | None = None) -> Path:
    """Write ``result``'s ranked candidates to the SD file ``path``.

    Raises
    ------
    InputError
        If the file cannot be written.
    """
    return write_text(Path(path), sdf_text(result, top=top), "--sdf")
