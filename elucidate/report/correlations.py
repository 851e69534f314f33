"""2D cross peaks in the reports: per-candidate status, drawings, tables.

The status of each cross peak on each candidate comes with the candidate
(:attr:`~elucidate.model.Candidate.checks`, computed by the solver from the
correlation constraint).  This module only formats it:

* :func:`correlation_lines` - the terminal block (status per cross peak for
  the best candidates, and the cross peaks no candidate meets);
* :func:`unmet_by_all` - cross peaks met by none of the candidates (a wrong
  or misread peak shows up here);
* :func:`draw_correlations` - the structure with the COSY peaks as bold
  bonds and the HMBC peaks as arrows from the H-bearing atom to the carbon;
* :func:`correlation_matrix_html` / :func:`correlation_card_html` - the HTML
  table of every cross peak against every shown candidate, and the
  per-candidate panel.
"""

from __future__ import annotations

from html import escape
from typing import Sequence

from elucidate.model import Candidate, CheckRow, Problem, SolveResult

__all__ = [
    "COSY_COLOUR",
    "HMBC_COLOUR",
    "unmet_by_all",
    "correlation_lines",
    "draw_correlations",
    "correlation_matrix_html",
    "correlation_card_html",
]

#: Bold bonds of COSY peaks (our own choice of colour).
COSY_COLOUR = "#1f5fbf"
#: Arrows of HMBC peaks, H-bearing atom -> carbon.
HMBC_COLOUR = "#c2501a"
_SHORT = {"met": "met", "met (4 bonds)": "met, 4 bonds", "met (long-range)": "met, long-range", "not met": "NOT MET"}


def unmet_by_all(result: SolveResult) -> list[str]:
    """Labels of the cross peaks that no candidate meets, in input order.

    >>> from elucidate.model import Candidate, CheckRow, Problem, SolveResult
    >>> from elucidate.parse import parse_formula
    >>> c = Candidate(1, "CCO", 0.0, "consistent", (), checks=(CheckRow("COSY", "COSY 3.7/1.2", "not met"),))
    >>> unmet_by_all(SolveResult(Problem(parse_formula("C2H6O"), ()), True, (c,)))
    ['COSY 3.7/1.2']
    """
    cands = [c for c in result.candidates if c.checks]
    if not cands:
        return []
    labels = [r.label for r in cands[0].checks]
    return [lab for lab in labels
            if all(any(r.label == lab and r.status == "not met" for r in c.checks) for c in cands)]


def _row_of(cand: Candidate, label: str) -> CheckRow | None:
    return next((r for r in cand.checks if r.label == label), None)


def correlation_lines(result: SolveResult, *, top: int = 3) -> list[str]:
    """Terminal lines: each 2D cross peak with its status on the best
    ``top`` candidates, and the peaks met by no candidate (empty without
    2D data)."""
    shown = [c for c in result.candidates[:top] if c.checks]
    if not shown:
        return _unused_lines(result.problem)
    labels = [r.label for r in shown[0].checks]
    head = ["cross peak", *[f"#{c.rank}" for c in shown]]
    rows = [head]
    for lab in labels:
        cells = [lab]
        for c in shown:
            r = _row_of(c, lab)
            cells.append(_SHORT.get(r.status, r.status) if r else "-")
        rows.append(cells)
    widths = [max(len(r[i]) for r in rows) for i in range(len(head))]
    out = ["", "2D cross peaks on the best candidates"]
    out += ["  ".join(cell.ljust(widths[i]) for i, cell in enumerate(r)).rstrip() for r in rows]
    for c in shown[:1]:
        for r in c.checks:
            if r.status == "not met" and r.reason:
                out.append(f"#{c.rank}: {r.reason}")
    checked = sum(1 for c in result.candidates if c.checks)
    among = "" if checked == len(result.candidates) else f" (of the {checked} best, the ones checked)"
    for lab in unmet_by_all(result):
        out.append(f"no candidate{among} meets {lab}: check this cross peak (misread, or an artefact)")
    return out + _unused_lines(result.problem)


def _unused_lines(problem: Problem) -> list[str]:
    out = []
    for c in problem.correlations:
        if c.kind == "NOESY":
            out.append(f"{c.label}: through space, shown only (not a constraint)")
        elif not c.matched:
            out.append(f"{c.label}: not used (matches no 1D signal or several)")
    return ([""] if out else []) + out


# ------------------------------------------------------------------ drawing


def draw_correlations(smiles: str, rows: Sequence[CheckRow], *, size: tuple[int, int] = (340, 260),
                      label: str = "2D correlations") -> str:
    """The structure with its cross peaks drawn on it, as an inline ``<svg>``.

    COSY peaks: the bonds between the two witness atoms, bold in
    :data:`COSY_COLOUR` (every bond of the shortest path for a 4-bond
    coupling).  HMBC peaks: an arrow from the H-bearing atom to the
    correlated carbon in :data:`HMBC_COLOUR`.  HSQC peaks: the carbon
    ringed lightly.  Peaks the structure does not meet are not drawn.
    """
    from rdkit import Chem
    from rdkit.Chem.Draw import rdMolDraw2D
    from rdkit.Geometry import Point2D

    from elucidate.report.html import _inline_svg

    mol = Chem.MolFromSmiles(smiles)
    if mol is None:
        raise ValueError(f"SMILES {smiles!r} does not parse")
    n = mol.GetNumAtoms()
    bonds: dict[int, tuple[int, int]] = {}
    arrows: list[tuple[int, int]] = []
    ringed: set[int] = set()
    for r in rows:
        if r.status == "not met" or not r.atoms or any(not 0 <= a < n for a in r.atoms):
            continue
        if r.kind == "COSY" and len(r.atoms) == 2 and r.atoms[0] != r.atoms[1]:
            path = Chem.GetShortestPath(mol, r.atoms[0], r.atoms[1])
            for u, v in zip(path, path[1:]):
                bonds[mol.GetBondBetweenAtoms(u, v).GetIdx()] = (min(u, v), max(u, v))
        elif r.kind == "HMBC" and len(r.atoms) == 2 and r.atoms[0] != r.atoms[1]:
            if r.atoms not in arrows:
                arrows.append(r.atoms)  # type: ignore[arg-type]
        elif r.kind == "HSQC":
            ringed.add(r.atoms[0])
    width, height = size
    drawer = rdMolDraw2D.MolDraw2DSVG(width, height)
    opts = drawer.drawOptions()
    opts.padding = 0.12
    opts.bondLineWidth = 1.6
    opts.fillHighlights = True
    opts.fixedBondLength = max(18.0, min(width, height) / 7)
    opts.maxFontSize = 18
    prepared = rdMolDraw2D.PrepareMolForDrawing(mol)
    drawer.DrawMolecule(
        prepared,
        highlightAtoms=sorted(ringed),
        highlightAtomColors={a: (0.55, 0.55, 0.55) for a in ringed},
        highlightAtomRadii={a: 0.3 for a in ringed},
        highlightBonds=[],
    )
    drawer.SetColour(_rgb(COSY_COLOUR))
    drawer.SetLineWidth(6)
    for b in sorted(bonds):
        u, v = bonds[b]
        drawer.DrawLine(drawer.GetDrawCoords(u), drawer.GetDrawCoords(v), True)
    drawer.SetLineWidth(2)
    for h, c in sorted(arrows):
        p1, p2 = drawer.GetDrawCoords(h), drawer.GetDrawCoords(c)
        # start a little off the H-bearing atom and stop short of the carbon, so labels stay readable
        a = Point2D(p1.x + 0.15 * (p2.x - p1.x), p1.y + 0.15 * (p2.y - p1.y))
        b = Point2D(p1.x + 0.85 * (p2.x - p1.x), p1.y + 0.85 * (p2.y - p1.y))
        drawer.DrawArrow(a, b, True, 0.15, 0.4, _rgb(HMBC_COLOUR), True)
    drawer.FinishDrawing()
    return _inline_svg(drawer.GetDrawingText(), label)


def _rgb(hex_colour: str) -> tuple[float, float, float]:
    h = hex_colour.lstrip("#")
    return tuple(round(int(h[i:i + 2], 16) / 255, 4) for i in (0, 2, 4))  # type: ignore[return-value]


# --------------------------------------------------------------------- HTML


def correlation_matrix_html(result: SolveResult, shown: Sequence[Candidate]) -> str:
    """Every cross peak (rows) against every shown candidate (columns):
    met / not met, with the reason as a tooltip.  Empty without 2D data."""
    problem = result.problem
    if not problem.correlations:
        return ""
    cands = [c for c in shown if c.checks]
    head = "".join(f'<th class="num"><a href="#candidate-{c.rank}">#{c.rank}</a></th>' for c in cands)
    body = []
    for peak in problem.correlations:
        cells = []
        if peak.kind == "NOESY":
            cells = [f'<td colspan="{max(1, len(cands))}" class="muted">through space: shown only</td>']
        elif not peak.matched:
            cells = [f'<td colspan="{max(1, len(cands))}" class="muted">not used: matches no 1D signal or several</td>']
        else:
            for c in cands:
                r = _row_of(c, peak.label)
                if r is None:
                    cells.append("<td>–</td>")
                    continue
                cls = "met" if r.status.startswith("met") else "unmet"
                tip = f' title="{escape(r.reason)}"' if r.reason else ""
                cells.append(f'<td class="{cls}"{tip}>{escape(_SHORT.get(r.status, r.status))}</td>')
        note = f" ({escape(peak.note)})" if peak.note else ""
        body.append(f"<tr><td>{escape(peak.label)}{note}</td>{''.join(cells)}</tr>")
    unmet = unmet_by_all(result)
    warn = "".join(f'<p class="unmet"><b>No candidate meets {escape(lab)}</b>: check this cross peak '
                   f"(misread, an artefact, or a 4J peak beyond the relaxation).</p>" for lab in unmet)
    return (
        "<h2>2D cross peaks</h2>"
        '<p class="notes">Each cross peak against each candidate: met in the 2-3-bond reading, met only '
        "four bonds away or in the widened reading (overlapped signals), or not met. COSY peaks are drawn "
        "as bold bonds and HMBC peaks as arrows H → C on each candidate's structure.</p>"
        f'<table class="xpeaks"><thead><tr><th>cross peak</th>{head}</tr></thead><tbody>'
        + "".join(body) + "</tbody></table>" + warn
    )


def correlation_card_html(cand: Candidate, smiles: str) -> str:
    """The per-candidate panel: the drawing with the correlations and the
    status list (empty when the candidate has no checks)."""
    if not cand.checks:
        return ""
    drawing = draw_correlations(smiles, cand.checks, label=f"2D correlations on candidate {cand.rank}")
    met = sum(1 for r in cand.checks if r.status.startswith("met"))
    items = "".join(
        f'<li class="{"met" if r.status.startswith("met") else "unmet"}">{escape(r.label)}: '
        f"{escape(r.status)}{(' — ' + escape(r.reason)) if r.reason else ''}</li>"
        for r in cand.checks
    )
    return (
        '<div class="row xcard"><div class="drawing">' + drawing
        + f'<p class="notes"><span style="color:{COSY_COLOUR}">▬ COSY</span> '
        f'<span style="color:{HMBC_COLOUR}">→ HMBC (H → C)</span> ○ HSQC carbon</p></div>'
        f'<div><h4 class="c13">2D cross peaks: {met} of {len(cand.checks)} met</h4><ul class="xlist">{items}</ul></div></div>'
    )
