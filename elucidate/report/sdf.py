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

from elucidate import CAUTION
from elucidate.errors import InputError
from elucidate.model import Candidate, Problem, SolveResult
from elucidate.report.common import fmt_ppm, largest_deviation, signal_letter

__all__ = ["write_sdf", "sdf_text", "deviation_lines"]


def deviation_lines(problem: Problem, candidate: Candidate) -> list[str]:
    """One line per assignment, observed signals first, e.g.
    ``a 4.12 obs 4.00 pred dev -0.12 q/q 2H`` (ASCII only: SD readers
    differ in what they make of other bytes)."""
    out = []
    order = sorted(
        candidate.assignments,
        key=lambda a: (a.signal is None, a.signal if a.signal is not None else 0, a.environment),
    )
    for a in order:
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


def _sdf_text(result: SolveResult, top: int | None) -> str:
    from rdkit import Chem, RDLogger
    from rdkit.Chem import rdDepictor

    problem = result.problem
    buffer = io.StringIO()
    writer = Chem.SDWriter(buffer)
    writer.SetKekulize(True)
    shown = result.candidates if top is None else result.candidates[:top]
    try:
        for cand in shown:
            RDLogger.DisableLog("rdApp.*")
            try:
                mol = Chem.MolFromSmiles(cand.smiles)
            finally:
                RDLogger.EnableLog("rdApp.*")
            if mol is None:
                raise InputError(f"candidate {cand.rank} '{cand.smiles}': not a valid SMILES")
            rdDepictor.Compute2DCoords(mol)
            name = f"{problem.name} " if problem.name else ""
            mol.SetProp("_Name", f"{name}{problem.formula.hill} candidate {cand.rank}")
            worst = largest_deviation(cand)
            worst_text = "" if worst is None or worst.observed is None else f"{worst.predicted - worst.observed:+.3f}"
            props = [
                ("rank", str(cand.rank)),
                ("score", f"{cand.score:.4f}"),
                ("verdict", cand.verdict),
                ("smiles", cand.smiles),
                ("formula", problem.formula.hill),
                ("largest_deviation_ppm", worst_text),
                ("deviations", "\n".join(deviation_lines(problem, cand))),
                ("notes", "\n".join(cand.notes)),
                ("caution", CAUTION),
            ]
            for key, value in props:
                if value:
                    mol.SetProp(key, value)
            writer.write(mol)
    finally:
        writer.close()
    return buffer.getvalue()


def write_sdf(result: SolveResult, path: str | Path, *, top: int | None = None) -> Path:
    """Write ``result``'s ranked candidates to the SD file ``path``.

    Raises
    ------
    InputError
        If the file cannot be written.
    """
    text = sdf_text(result, top=top)
    target = Path(path)
    try:
        with open(target, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
    except OSError as err:
        raise InputError(f"--sdf {target}: cannot write the file ({err.strerror})") from err
    return target
