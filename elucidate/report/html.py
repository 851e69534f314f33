"""One self-contained HTML page per result: drawings, spectra, evidence.

The page needs nothing but itself: styles are inline, drawings and spectra
are inline SVG, there is no script, no font file and no link to anywhere, so
it opens offline, can be mailed or filed with a notebook, and prints.  The
bytes depend only on the result (no dates, no timings), so the same input
gives the same file.

Per candidate the page shows a 2D drawing (RDKit's SVG drawer) with each
H-bearing atom tinted in the colour of the observed signal it explains and
labelled with that signal's letter; observed vs predicted stick spectra on a
ppm axis that decreases to the right; each signal's first-order multiplet
(n+1 rule from the J values, observed above, predicted below, in Hz); and the
assignment table, with the derivation of every predicted shift in a
``<details>`` element.  When 13C lines were given, a 13C panel follows:
the carbons tinted and numbered by the observed line they are assigned to,
observed lines up and predicted carbon classes down on a 0–220 ppm axis
(DEPT labels where given), and the 13C assignment table.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from html import escape
from pathlib import Path
from typing import Any

from elucidate import CAUTION, __version__
from elucidate.errors import InputError
from elucidate.model import Assignment, Candidate, Environment, H1Signal, Problem, Rejection, SolveResult
from elucidate.report.common import (
    C13_HEAD,
    c13_colour,
    c13_label,
    c13_rows,
    dept_name,
    fmt_c13,
    write_text,
    UNASSIGNED_COLOUR,
    environment_by_index,
    fmt_count,
    fmt_delta,
    fmt_ppm,
    largest_deviation,
    observed_lines,
    predicted_lines,
    readback,
    search_summary,
    signal_colour,
    table_rows,
    signal_letter,
    tint,
)
from elucidate.report.correlations import correlation_card_html, correlation_matrix_html

__all__ = [
    "write_html",
    "render_html",
    "write_explain_html",
    "render_explain_html",
    "draw_molecule",
    "spectrum_svg",
    "c13_spectrum_svg",
    "multiplet_svg",
]

#: At most this many rejected structures are drawn as examples.
MAX_REJECTION_EXAMPLES = 12


def write_html(result: SolveResult, path: str | Path, *, title: str | None = None, top: int | None = None) -> Path:
    """Write the report of ``result`` to ``path`` (UTF-8, ``\\n`` line ends).

    Parameters
    ----------
    result : SolveResult
    path : str or Path
        The HTML file to write; its directory must exist.
    title : str, optional
        Page heading (default: the problem's name or its formula).
    top : int, optional
        Show only the first ``top`` candidates in full.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        If the file cannot be written.
    """
    if not isinstance(result, SolveResult):
        raise TypeError(f"expected a SolveResult, got {type(result).__name__}")
    return write_text(Path(path), render_html(result, title=title, top=top), "--report")


def render_html(result: SolveResult, *, title: str | None = None, top: int | None = None) -> str:
    """The report of ``result`` as one HTML document (a string)."""
    if not isinstance(result, SolveResult):
        raise TypeError(f"expected a SolveResult, got {type(result).__name__}")
    if top is not None and top < 0:
        raise ValueError(f"top must be >= 0, got {top}")
    return _page(result, title, top)


def render_explain_html(explanation: Any, problem: Problem | None = None, *, title: str | None = None) -> str:
    """The page for ``explain``: one structure, as a candidate with its
    evidence or as a rejection with its reasons.

    ``explanation`` needs ``smiles`` and ``verdict`` and one of ``candidate``
    (a :class:`Candidate`) or ``rejection`` (a :class:`Rejection`); ``rank``
    and ``problem`` are used when present (``problem`` may also be passed).
    """
    problem = problem if problem is not None else getattr(explanation, "problem", None)
    if not isinstance(problem, Problem):
        raise TypeError("render_explain_html needs the Problem the structure was explained against")
    cand = getattr(explanation, "candidate", None)
    rej = getattr(explanation, "rejection", None)
    smiles = getattr(explanation, "smiles", None) or (cand.smiles if cand else rej.smiles if rej else "?")
    verdict = getattr(explanation, "verdict", None) or (cand.verdict if cand else "rejected")
    rank = getattr(explanation, "rank", None)
    total = getattr(explanation, "total", None)
    reasons = tuple(getattr(explanation, "reasons", ()) or (rej.reasons if rej is not None else ()))
    result = SolveResult(
        problem=problem,
        complete=bool(getattr(explanation, "complete", True)),
        candidates=(cand,) if cand is not None else (),
        # the reasons are listed in the verdict box; the rejection section shows the drawing
        rejected=(rej,) if rej is not None and cand is None else (),
    )
    heading = title or f"{problem.name + ': ' if problem.name else ''}{smiles}"
    summary = f"<b>Verdict for {escape(smiles)}:</b> {escape(verdict)}"
    if rank:
        summary += f", rank {rank}" + (f" of {total}" if total is not None else "")
    elif total is not None:
        summary += f", not among the {total} structures ranked under the hard constraints"
    if not result.complete:
        summary += ". <b>Search incomplete:</b> the rank is among the structures seen"
    if reasons and cand is not None:  # a rejection lists them under its drawing
        summary += "<ul>" + "".join(f"<li>{escape(r)}</li>" for r in reasons) + "</ul>"
    cls = "status" if verdict == "consistent" else "status incomplete"
    return _page(result, heading, None, explain=f'<div class="{cls}">{summary}</div>', shown_notes=reasons)


def write_explain_html(explanation: Any, path: str | Path, problem: Problem | None = None, *, title: str | None = None) -> Path:
    """Write :func:`render_explain_html` to ``path``; :class:`InputError` if it cannot."""
    return write_text(Path(path), render_explain_html(explanation, problem, title=title), "--report")




# ------------------------------------------------------------------ page


_CSS = """
:root{--ink:#1e2b33;--muted:#5d6b73;--paper:#f7f5f0;--card:#ffffff;--line:#d9d4c7;
--accent:#0d5c63;--warn:#a3361f;--warnbg:#fbeee6;--ok:#2e6b34}
*{box-sizing:border-box}
body{margin:0;background:var(--paper);color:var(--ink);
font:15px/1.45 "DejaVu Sans","Liberation Sans","Segoe UI",Helvetica,Arial,sans-serif}
header{background:var(--accent);color:#fff;padding:18px 28px 14px}
header h1{margin:0;font-size:22px;font-weight:600;letter-spacing:.2px}
header .readback{margin-top:4px;font-size:16px;opacity:.95}
header .tool{float:right;font-size:12px;opacity:.8}
main{max-width:1180px;margin:0 auto;padding:16px 24px 40px}
h2{font-size:18px;margin:26px 0 8px;color:var(--accent);border-bottom:2px solid var(--line);padding-bottom:3px}
h3{margin:0;font-size:17px}
.caution{background:var(--warnbg);border-left:5px solid var(--warn);padding:9px 14px;margin:14px 0;font-size:14px}
.caution b{color:var(--warn)}
.status{padding:8px 14px;border-radius:4px;background:#e8f0ec;border:1px solid #c6dacd;margin:10px 0}
.status.incomplete{background:var(--warnbg);border-color:#e4b9a6}
table{border-collapse:collapse;margin:6px 0 10px}
th,td{padding:4px 10px;border-bottom:1px solid var(--line);text-align:left;vertical-align:top}
th{font-size:13px;color:var(--muted);font-weight:600;background:#efece4}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
.smiles{font-family:"DejaVu Sans Mono","Liberation Mono",Consolas,monospace;font-size:13px;word-break:break-all}
.card{background:var(--card);border:1px solid var(--line);border-radius:6px;margin:18px 0;padding:14px 18px;
break-inside:avoid}
.card-head{display:flex;gap:14px;align-items:baseline;flex-wrap:wrap;margin-bottom:8px}
.rank{background:var(--accent);color:#fff;border-radius:14px;padding:1px 11px;font-weight:700}
.verdict{font-size:13px;padding:1px 8px;border-radius:10px;border:1px solid}
.verdict.consistent{color:var(--ok);border-color:#9cc4a2;background:#eef6ef}
.verdict.poor{color:var(--warn);border-color:#e4b9a6;background:var(--warnbg)}
.fit{color:var(--muted);font-size:14px}
.row{display:flex;gap:18px;flex-wrap:wrap;align-items:flex-start}
.drawing{flex:0 0 auto}
.drawing svg{display:block;border:1px solid #ece8de;border-radius:4px;background:#fff}
.legend{list-style:none;padding:0;margin:6px 0 0;font-size:13px;max-width:340px}
.legend li{display:inline-block;margin:0 12px 3px 0;white-space:nowrap}
.chip{display:inline-block;min-width:18px;padding:0 4px;border-radius:3px;color:#fff;font-weight:700;
text-align:center;font-size:12px;line-height:17px}
.spectra{flex:1 1 560px;min-width:0}
.spectra svg{display:block;max-width:100%;height:auto}
.multiplets{display:flex;flex-wrap:wrap;gap:8px;margin-top:6px}
.multiplets figure{margin:0;border:1px solid #ece8de;border-radius:4px;background:#fcfbf8}
.multiplets figcaption{font-size:11.5px;padding:0 6px 4px;color:var(--muted);max-width:170px}
.off{color:var(--warn);font-weight:700}
details{font-size:13px}
details summary{cursor:pointer;color:var(--accent)}
details ul{margin:4px 0 2px 16px;padding:0}
.notes{font-size:14px;color:var(--muted);margin:4px 0}
.examples{display:flex;flex-wrap:wrap;gap:10px}
.example{background:var(--card);border:1px solid var(--line);border-radius:5px;padding:6px;width:212px;font-size:12.5px}
.example svg{display:block;margin:0 auto}
.example ul{margin:4px 0 0 14px;padding:0}
.input td{font-size:14px}
h4.c13{margin:14px 0 4px;font-size:15px;color:var(--accent)}
td.met{color:var(--ok)}td.unmet,li.unmet{color:var(--warn);font-weight:600}td.muted{color:var(--muted)}
.unmet{color:var(--warn)}.xlist{font-size:13px;margin:4px 0 0 16px;padding:0}.xcard{margin-top:10px}
footer{color:var(--muted);font-size:12px;border-top:1px solid var(--line);padding-top:8px;margin-top:30px}
@media print{header{background:#fff;color:var(--ink);border-bottom:3px solid var(--accent)}
.card{break-inside:avoid}details{display:block}}
"""


def _page(
    result: SolveResult,
    title: str | None,
    top: int | None,
    *,
    explain: str | None = None,
    shown_notes: Sequence[str] = (),
) -> str:
    problem = result.problem
    heading = title or problem.name or f"Unknown {problem.formula.hill}"
    shown = result.candidates if top is None else result.candidates[:top]
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en">',
        "<head>",
        '<meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{escape(heading)} — structure hypotheses</title>",
        f"<style>{_CSS}</style>",
        "</head>",
        "<body>",
        "<header>",
        f'<div class="tool">elucidate {escape(__version__)}</div>',
        f"<h1>{escape(heading)}</h1>",
        f'<div class="readback">{escape(readback(problem))}</div>',
        "</header>",
        "<main>",
        _caution(),
    ]
    if explain is None:
        parts += [_status(result), _overview(result, shown), correlation_matrix_html(result, shown),
                  _next_measurements(result)]
    else:
        parts.append(explain)
    for cand in shown:
        parts.append(_candidate_card(problem, cand, shown_notes))
    parts.append(_rejections(result, explain is not None))
    parts.append(_input_echo(problem))
    parts.append(_caution())
    parts.append(
        f"<footer>Written by elucidate {escape(__version__)}. Predicted shifts come from additive "
        "increment rules; each derivation is listed under its table row. "
        "Δ = δ predicted − δ observed.</footer>"
    )
    parts += ["</main>", "</body>", "</html>", ""]
    return "\n".join(parts)


def _caution() -> str:
    return f'<div class="caution"><b>Caution.</b> {escape(CAUTION)}</div>'


def _status(result: SolveResult) -> str:
    summary = escape(search_summary(result)) + "."
    if result.complete:
        text = "<b>Search complete:</b> " + summary
    else:
        text = "<b>Search incomplete:</b> " + summary
        if result.stopped_by:
            text += f" Stopped by the {escape(result.stopped_by)}: the answer may be missing."
    extra = []
    for r in result.relaxed:
        extra.append(f"<li>Constraint relaxed: {escape(r)}</li>")
    warnings = list(result.problem.warnings) + [w for w in result.warnings if w not in result.problem.warnings]
    for w in warnings:
        extra.append(f"<li>Warning: {escape(w)}</li>")
    cls = "status" if result.complete else "status incomplete"
    body = f'<div class="{cls}">{text}'
    if extra:
        body += "<ul>" + "".join(extra) + "</ul>"
    return body + "</div>"


def _overview(result: SolveResult, shown: Sequence[Candidate]) -> str:
    if not result.candidates:
        return "<h2>Candidates</h2><p><b>No candidate is consistent with the data.</b></p>"
    rows = []
    for c in shown:
        worst = largest_deviation(c)
        dev = "–"
        if worst is not None and worst.observed is not None:
            dev = fmt_delta(worst.predicted - worst.observed) + " ppm"
            if worst.signal is not None:
                dev += f" ({signal_letter(worst.signal)})"
        rows.append(
            f'<tr><td class="num"><a href="#candidate-{c.rank}">{c.rank}</a></td>'
            f'<td class="smiles">{escape(c.smiles)}</td><td class="num">{c.score:.2f}</td>'
            f"<td>{escape(c.verdict)}</td><td>{escape(dev)}</td></tr>"
        )
    more = ""
    if len(shown) < len(result.candidates):
        more = f"<p>{len(result.candidates) - len(shown)} more candidates are not shown.</p>"
    return (
        "<h2>Candidates</h2>"
        "<table><thead><tr><th class=\"num\">rank</th><th>SMILES</th>"
        "<th class=\"num\" title=\"lower is better\">fit</th><th>verdict</th><th>largest Δ</th></tr></thead>"
        "<tbody>" + "".join(rows) + "</tbody></table>" + more
    )


def _next_measurements(result: SolveResult) -> str:
    """The "What to measure next" panel ('' when the top candidates are told apart)."""
    found = result.next_measurements
    if not found:
        return ""
    ranks = found[0].ranks
    head = "".join(f'<th>candidate <a href="#candidate-{r}">{r}</a></th>' for r in ranks)
    rows = []
    for m in found:
        cells = "".join(f"<td>{escape(v)}</td>" for v in m.predicted)
        figure = m.figure_text()
        rows.append(
            f"<tr><td>{escape(m.experiment)}</td><td>{escape(m.observation)}</td>{cells}"
            f'<td class="num" title="{escape(m.basis)}">{escape(figure)}</td></tr>'
        )
    return (
        '<section id="next-measurements"><h2>What to measure next</h2>'
        f"<p>Candidates {', '.join(str(r) for r in ranks)} fit about equally well. These observations "
        "would tell them apart; figure = predicted difference / typical error of the prediction.</p>"
        f"<table><thead><tr><th>experiment</th><th>observation</th>{head}"
        '<th class="num">figure</th></tr></thead><tbody>' + "".join(rows) + "</tbody></table></section>"
    )


# ------------------------------------------------------------- candidate


def _candidate_card(problem: Problem, cand: Candidate, shown_notes: Sequence[str] = ()) -> str:
    envs = environment_by_index(cand)
    atom_signals: dict[int, list[int]] = {}
    for a in cand.assignments:
        env = envs.get(a.environment)
        if env is None or a.signal is None:
            continue
        for atom in env.atoms:
            atom_signals.setdefault(atom, [])
            if a.signal not in atom_signals[atom]:
                atom_signals[atom].append(a.signal)
    smiles = cand.prediction.smiles if cand.prediction is not None else cand.smiles
    colours = {atom: signal_colour(sigs[0]) for atom, sigs in atom_signals.items()}
    notes = {atom: ",".join(signal_letter(s) for s in sorted(sigs)) for atom, sigs in atom_signals.items()}
    drawing = draw_molecule(smiles, colours, notes, size=(340, 260), label=f"candidate {cand.rank}")
    used = sorted({a.signal for a in cand.assignments if a.signal is not None})
    legend = "".join(
        f'<li>{_chip(i)} {fmt_ppm(problem.h1[i].shift)} {escape(problem.h1[i].multiplicity)}, '
        f"{fmt_count(problem.h1[i].h_count)}H</li>"
        for i in used
        if i < len(problem.h1)
    )
    unassigned = [a for a in cand.assignments if a.signal is None]
    if unassigned:
        legend += f'<li><span class="chip" style="background:{UNASSIGNED_COLOUR}">–</span> not observed</li>'
    verdict_cls = "consistent" if cand.verdict == "consistent" else "poor"
    notes_html = "".join(f'<p class="notes">{escape(n)}</p>' for n in cand.notes if n not in shown_notes)
    return (
        f'<section class="card" id="candidate-{cand.rank}">'
        f'<div class="card-head"><span class="rank">{"#" + str(cand.rank) if cand.rank else "not ranked"}</span>'
        f'<span class="smiles">{escape(cand.smiles)}</span>'
        f'<span class="verdict {verdict_cls}">{escape(cand.verdict)}</span>'
        f'<span class="fit">fit {cand.score:.2f} (lower is better)</span></div>'
        f"{notes_html}"
        '<div class="row">'
        f'<div class="drawing">{drawing}<ul class="legend">{legend}</ul></div>'
        f'<div class="spectra">{spectrum_svg(problem, cand)}'
        f'<div class="multiplets">{_multiplet_panels(problem, cand, envs)}</div></div>'
        "</div>"
        f"{_assignment_table(problem, cand, envs)}"
        f"{_c13_panel(problem, cand)}"
        f"{correlation_card_html(cand, smiles)}"
        "</section>"
    )


# ------------------------------------------------------------------- 13C


def _c13_chip(line: int | None) -> str:
    text = c13_label(line) if line is not None else "–"
    return f'<span class="chip" style="background:{c13_colour(line)}">{text}</span>'


def _c13_panel(problem: Problem, cand: Candidate) -> str:
    """The 13C part of a candidate card ('' when no 13C lines were given)."""
    if not problem.c13:
        return ""
    if not cand.c13_assignments:
        return '<h4 class="c13">13C</h4><p class="notes">No 13C assignment for this candidate.</p>'
    atom_lines: dict[int, list[int]] = {}
    for r in cand.c13_assignments:
        if r.line is None:
            continue
        for atom in r.atoms:
            atom_lines.setdefault(atom, [])
            if r.line not in atom_lines[atom]:
                atom_lines[atom].append(r.line)
    smiles = cand.prediction.smiles if cand.prediction is not None else cand.smiles
    colours = {atom: c13_colour(ls[0]) for atom, ls in atom_lines.items()}
    notes = {atom: ",".join(c13_label(x) for x in sorted(ls)) for atom, ls in atom_lines.items()}
    drawing = draw_molecule(smiles, colours, notes, size=(340, 260), label=f"candidate {cand.rank}, carbons by 13C line")
    # its own class: "svg.mol" is the candidate's structure drawing (one per card)
    drawing = drawing.replace('<svg class="mol"', '<svg class="c13-mol"', 1)
    return (
        '<h4 class="c13">13C: observed lines and predicted carbons</h4>'
        '<div class="row">'
        f'<div class="drawing">{drawing}</div>'
        f'<div class="spectra">{c13_spectrum_svg(problem, cand)}</div>'
        "</div>"
        f"{_c13_table(problem, cand)}"
    )


def _c13_table(problem: Problem, cand: Candidate) -> str:
    rows = []
    for r, cells in c13_rows(problem, cand):
        off = r.deviation is not None and r.uncertainty is not None and abs(r.deviation) > r.uncertainty + 1e-9
        h_off = r.h_observed is not None and r.atoms and r.h_predicted != r.h_observed
        h_cls = ' class="off"' if h_off else ""
        pred = cells[2] + (f" ± {r.uncertainty:.1f}" if r.uncertainty is not None and r.predicted is not None else "")
        rows.append(
            "<tr>"
            f"<td>{_c13_chip(r.line)}</td>"
            f'<td class="num">{escape(cells[1])}</td>'
            f'<td class="num">{escape(pred)}</td>'
            f'<td class="num{" off" if off else ""}">{escape(cells[3])}</td>'
            f"<td{h_cls}>{escape(cells[4])}</td>"
            f"<td>{escape(cells[5])}</td>"
            f'<td class="num">{r.cost:.2f}</td>'
            "</tr>"
        )
    attrs = {1: ' class="num"', 2: ' class="num"', 3: ' class="num" title="δ predicted − δ observed"'}
    head = "".join(f"<th{attrs.get(i, '')}>{escape(h)}</th>" for i, h in enumerate(C13_HEAD))
    return (
        f'<table class="assign c13"><thead><tr>{head}'
        '<th class="num" title="typical errors, summed over the carbons">cost</th></tr></thead>'
        "<tbody>" + "".join(rows) + "</tbody></table>"
        '<p class="notes">carbons: atom indices in the SMILES order, from 0; '
        "H obs from the DEPT label of the line (– if not given).</p>"
    )


def c13_spectrum_svg(problem: Problem, cand: Candidate | None = None, *, width: int = 720) -> str:
    """Observed (up) vs predicted (down) 13C stick spectrum as an inline ``<svg>``.

    The axis runs from 220 to 0 ppm (wider if a shift lies outside), left to
    right.  Stick heights follow the number of carbons (a line's ``(2C)``
    count; a class's carbons on that line).  Each predicted stick takes the
    colour of the line it is assigned to and a dotted line joins the two;
    carbons without a line and lines without a carbon are grey.  Observed
    lines are labelled with their number and DEPT label where given.
    """
    recs = list(cand.c13_assignments) if cand is not None else []
    preds = [r for r in recs if r.atoms and r.predicted is not None]
    shifts = [c.shift for c in problem.c13] + [r.predicted for r in preds]  # type: ignore[misc]
    lo = min([0.0] + [v - 5.0 for v in shifts])
    hi = max([220.0] + [v + 5.0 for v in shifts])
    lo, hi = float(int(lo // 10 * 10)), float(-int(-hi // 10) * 10)
    left, right = 78, 16
    plot_w = width - left - right

    def x(ppm: float) -> float:
        return left + (hi - ppm) / (hi - lo) * plot_w

    explained = {r.line for r in recs if r.atoms and r.line is not None}
    obs_labels = []
    for i, c in enumerate(problem.c13):
        col = c13_colour(i) if (cand is None or i in explained) else c13_colour(None)
        text = c13_label(i) + ("" if c.attached_h is None else " " + dept_name(c.attached_h))
        obs_labels.append((x(c.shift), text, col))
    pred_labels = [(x(r.predicted), fmt_c13(r.predicted), c13_colour(r.line)) for r in preds]  # type: ignore[arg-type]
    obs_rows = _stack(obs_labels)
    pred_rows = _stack(pred_labels)
    n_obs = max([row for *_, row in obs_rows] + [-1]) + 1
    n_pred = max([row for *_, row in pred_rows] + [-1]) + 1
    top = 14 + 12 * n_obs
    stick_up, stick_down = 60, 44
    base = top + stick_up + 4
    axis_y = base + stick_down + 8 + 12 * n_pred
    height = axis_y + 34
    max_c = max([c.carbons for c in problem.c13] + [r.carbons for r in preds] + [1])
    out = [
        f'<svg class="c13-lines" role="img" aria-label="observed and predicted 13C stick spectrum" '
        f'width="{width}" height="{height}" viewBox="0 0 {width} {height}">',
        f'<rect x="0" y="0" width="{width}" height="{height}" fill="#fff"/>',
        f'<text x="6" y="{_f(base - stick_up / 2)}" font-size="11" fill="#5d6b73">observed</text>',
        f'<text x="6" y="{_f(base + stick_down / 2 + 8)}" font-size="11" fill="#5d6b73">predicted</text>',
        f'<line x1="{left}" y1="{_f(base)}" x2="{width - right}" y2="{_f(base)}" stroke="#b9b3a5" stroke-width="1"/>',
        f'<line x1="{left}" y1="{_f(axis_y)}" x2="{width - right}" y2="{_f(axis_y)}" stroke="#1e2b33" stroke-width="1"/>',
    ]
    v = lo
    while v <= hi + 1e-9:
        if int(round(v)) % 20 == 0:
            xv = x(v)
            out.append(f'<line x1="{_f(xv)}" y1="{_f(axis_y)}" x2="{_f(xv)}" y2="{_f(axis_y + 5)}" stroke="#1e2b33"/>')
            out.append(
                f'<text x="{_f(xv)}" y="{_f(axis_y + 17)}" font-size="11" text-anchor="middle" fill="#1e2b33">{v:g}</text>'
            )
        v += 10.0
    out.append(
        f'<text x="{width - right}" y="{_f(height - 4)}" font-size="11" text-anchor="end" fill="#5d6b73">δ(13C) / ppm</text>'
    )
    for r in preds:
        if r.line is None or r.observed is None:
            continue
        out.append(
            f'<line x1="{_f(x(r.predicted))}" y1="{_f(base + 3)}" x2="{_f(x(r.observed))}" y2="{_f(base - 3)}" '  # type: ignore[arg-type]
            f'stroke="{c13_colour(r.line)}" stroke-width="1" stroke-dasharray="2 2"/>'
        )
    for i, c in enumerate(problem.c13):
        col = c13_colour(i) if (cand is None or i in explained) else c13_colour(None)
        h = stick_up * c.carbons / max_c
        out.append(
            f'<line x1="{_f(x(c.shift))}" y1="{_f(base)}" x2="{_f(x(c.shift))}" y2="{_f(base - h)}" '
            f'stroke="{col}" stroke-width="2.2"><title>{escape(f"line {c13_label(i)}: {fmt_c13(c.shift)} ppm")}</title></line>'
        )
    for r in preds:
        col = c13_colour(r.line)
        h = stick_down * r.carbons / max_c
        xp = x(r.predicted)  # type: ignore[arg-type]
        out.append(
            f'<line x1="{_f(xp)}" y1="{_f(base)}" x2="{_f(xp)}" y2="{_f(base + h)}" '
            f'stroke="{col}" stroke-width="2.2" stroke-opacity="0.75"/>'
        )
    for xpos, text, col, row in obs_rows:
        out.append(
            f'<text x="{_f(xpos)}" y="{_f(top - 4 - 12 * (n_obs - 1 - row))}" font-size="10.5" text-anchor="middle" '
            f'fill="{col}">{escape(text)}</text>'
        )
    for xpos, text, col, row in pred_rows:
        out.append(
            f'<text x="{_f(xpos)}" y="{_f(base + stick_down + 14 + 12 * row)}" font-size="10.5" text-anchor="middle" '
            f'fill="{col}">{escape(text)}</text>'
        )
    out.append("</svg>")
    return "".join(out)


def _stack(labels: Sequence[tuple[float, str, str]]) -> list[tuple[float, str, str, int]]:
    """Labels at x positions with the row each goes to so none collide."""
    rows_end: list[float] = []
    out = []
    for xpos, text, col in sorted(labels, key=lambda t: (t[0], t[1])):
        half = 3.3 * len(text)
        row = 0
        while row < len(rows_end) and rows_end[row] > xpos - half:
            row += 1
        if row == len(rows_end):
            rows_end.append(xpos + half + 3)
        else:
            rows_end[row] = xpos + half + 3
        out.append((xpos, text, col, row))
    return out


def _chip(signal: int | None) -> str:
    text = signal_letter(signal) if signal is not None else "–"
    return f'<span class="chip" style="background:{signal_colour(signal)}">{text}</span>'


def _assignment_table(problem: Problem, cand: Candidate, envs: dict[int, Environment]) -> str:
    rows = []
    order = table_rows(cand)
    for a in order:
        env = envs.get(a.environment)
        delta = None if a.observed is None else a.predicted - a.observed
        unc = env.uncertainty if env is not None else None
        off = delta is not None and unc is not None and abs(delta) > unc + 1e-9
        pred = fmt_ppm(a.predicted) + (f" ± {unc:.2f}" if unc is not None else "")
        deriv = ""
        if env is not None and env.derivation:
            items = "".join(f"<li>{escape(t)}</li>" for t in env.derivation)
            deriv = f"<details><summary>how</summary><ul>{items}</ul></details>"
        label = escape(env.label) if env is not None and env.label else ""
        flags = []
        if env is not None and env.exchangeable:
            flags.append("exchangeable")
        if env is not None and env.diastereotopic:
            flags.append("diastereotopic")
        if flags:
            label += f' <i>({", ".join(flags)})</i>'
        rows.append(
            "<tr>"
            f"<td>{_chip(a.signal)}</td>"
            f'<td class="num">{fmt_ppm(a.observed)}</td>'
            f'<td class="num">{pred}</td>'
            f'<td class="num{" off" if off else ""}">{fmt_delta(delta)}</td>'
            f"<td>{escape(a.multiplicity_observed or '–')} / {escape(a.multiplicity_predicted)}</td>"
            f'<td class="num">{a.h_count}</td>'
            f"<td>{label}</td><td>{deriv}</td>"
            "</tr>"
        )
    return (
        "<table class=\"assign\"><thead><tr><th>signal</th><th class=\"num\">δ obs</th>"
        "<th class=\"num\">δ pred</th><th class=\"num\" title=\"δ predicted − δ observed\">Δ</th>"
        "<th>multiplicity obs / pred</th><th class=\"num\">nH</th><th>group</th>"
        "<th>derivation</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table>"
    )


# --------------------------------------------------------------- drawing


def draw_molecule(
    smiles: str,
    colours: dict[int, str] | None = None,
    notes: dict[int, str] | None = None,
    *,
    size: tuple[int, int] = (340, 260),
    label: str = "structure",
) -> str:
    """A 2D drawing of ``smiles`` as an inline ``<svg>`` element.

    Parameters
    ----------
    smiles : str
        The structure; atom indices in ``colours`` and ``notes`` follow its order.
    colours : dict, optional
        Atom index → hex colour; those atoms are tinted (a light version of
        the colour, so element letters stay readable).
    notes : dict, optional
        Atom index → short text drawn beside the atom (the signal letters).
    size : (int, int)
        Width and height in pixels.
    label : str
        Accessible name of the drawing.

    Raises
    ------
    InputError
        If RDKit cannot read ``smiles``.
    """
    from rdkit import Chem, RDLogger
    from rdkit.Chem.Draw import rdMolDraw2D

    RDLogger.DisableLog("rdApp.*")
    try:
        mol = Chem.MolFromSmiles(smiles)
    finally:
        RDLogger.EnableLog("rdApp.*")
    if mol is None:
        raise InputError(f"structure '{smiles}': not a valid SMILES")
    colours = colours or {}
    notes = notes or {}
    for idx, text in notes.items():
        if 0 <= idx < mol.GetNumAtoms():
            mol.GetAtomWithIdx(idx).SetProp("atomNote", text)
    width, height = size
    drawer = rdMolDraw2D.MolDraw2DSVG(width, height)
    opts = drawer.drawOptions()
    opts.padding = 0.12
    opts.annotationFontScale = 0.75
    opts.bondLineWidth = 1.6
    opts.fillHighlights = True
    # one scale for every drawing on the page (RDKit shrinks only what would not fit)
    opts.fixedBondLength = max(18.0, min(width, height) / 7)
    opts.maxFontSize = 18
    atoms = [i for i in sorted(colours) if 0 <= i < mol.GetNumAtoms()]
    atom_cols = {i: tint(colours[i], 0.45) for i in atoms}
    bonds = []
    bond_cols = {}
    for bond in mol.GetBonds():
        i, j = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        if i in atom_cols and j in atom_cols and colours[i] == colours[j]:
            bonds.append(bond.GetIdx())
            bond_cols[bond.GetIdx()] = atom_cols[i]
    prepared = rdMolDraw2D.PrepareMolForDrawing(mol)
    drawer.DrawMolecule(
        prepared,
        highlightAtoms=atoms,
        highlightAtomColors=atom_cols,
        highlightAtomRadii={i: 0.42 for i in atoms},
        highlightBonds=bonds,
        highlightBondColors=bond_cols,
    )
    drawer.FinishDrawing()
    return _inline_svg(drawer.GetDrawingText(), label)


_XML_DECL = re.compile(r"<\?xml[^>]*\?>\s*")
_XMLNS = re.compile(r"\s+xmlns(:\w+)?=(['\"])[^'\"]*\2")


def _inline_svg(svg: str, label: str) -> str:
    """RDKit's SVG made fit to sit inside HTML: no XML declaration, no
    namespace URIs (HTML places <svg> in the SVG namespace by itself)."""
    svg = _XML_DECL.sub("", svg)
    svg = _XMLNS.sub("", svg)
    svg = svg.replace("<svg", f'<svg class="mol" role="img" aria-label="{escape(label)}"', 1)
    return svg.strip()


# -------------------------------------------------------------- spectrum


def _axis_range(shifts: Iterable[float]) -> tuple[float, float]:
    values = list(shifts) or [0.0]
    lo = min(0.0, float(int(min(values) - 0.5) - (1 if min(values) - 0.5 < 0 else 0)))
    hi = max(float(int(max(values) + 0.8) + 1), 5.0)
    return lo, hi


def _tick_step(span: float) -> float:
    for step in (0.5, 1.0, 2.0, 5.0, 10.0, 20.0):
        if span / step <= 14:
            return step
    return 50.0


def _f(x: float) -> str:
    """Coordinates with one decimal: short and stable."""
    text = f"{x:.1f}"
    return "0" if text in ("0.0", "-0.0") else text.rstrip("0").rstrip(".")


def spectrum_svg(problem: Problem, cand: Candidate | None = None, *, width: int = 720, height: int = 250) -> str:
    """Observed (up) vs predicted (down) 1H stick spectrum as an inline ``<svg>``.

    Stick heights are proportional to the number of H; the ppm axis decreases
    to the right.  Each predicted stick takes the colour of the signal it is
    assigned to and a dotted line joins the two.
    """
    envs = environment_by_index(cand) if cand is not None else {}
    preds: list[tuple[Assignment, float]] = []
    if cand is not None:
        preds = [(a, a.predicted) for a in table_rows(cand)]
    shifts = [s.shift_low for s in problem.h1] + [s.shift_high for s in problem.h1] + [p for _, p in preds]
    lo, hi = _axis_range(shifts)
    left, right, top, bottom = 78, 16, 30, 42
    plot_w = width - left - right
    base = top + (height - top - bottom) * 0.52
    up = base - top - 16
    down = height - bottom - base - 16
    max_h = max([s.h_count for s in problem.h1] + [a.h_count for a, _ in preds] + [1])

    def x(ppm: float) -> float:
        return left + (hi - ppm) / (hi - lo) * plot_w

    out = [
        f'<svg class="spectrum" role="img" aria-label="observed and predicted 1H stick spectrum" '
        f'width="{width}" height="{height}" viewBox="0 0 {width} {height}">',
        f'<rect x="0" y="0" width="{width}" height="{height}" fill="#fff"/>',
        f'<text x="6" y="{_f(base - up / 2)}" font-size="11" fill="#5d6b73">observed</text>',
        f'<text x="6" y="{_f(base + down / 2 + 8)}" font-size="11" fill="#5d6b73">predicted</text>',
        f'<line x1="{left}" y1="{_f(base)}" x2="{width - right}" y2="{_f(base)}" stroke="#b9b3a5" stroke-width="1"/>',
    ]
    # axis
    axis_y = height - bottom + 8
    out.append(f'<line x1="{left}" y1="{axis_y}" x2="{width - right}" y2="{axis_y}" stroke="#1e2b33" stroke-width="1"/>')
    step = _tick_step(hi - lo)
    k = int(lo / step)
    while k * step <= hi + 1e-9:
        v = k * step
        if v >= lo - 1e-9:
            xv = x(v)
            out.append(f'<line x1="{_f(xv)}" y1="{axis_y}" x2="{_f(xv)}" y2="{axis_y + 5}" stroke="#1e2b33"/>')
            out.append(
                f'<text x="{_f(xv)}" y="{axis_y + 17}" font-size="11" text-anchor="middle" fill="#1e2b33">{v:g}</text>'
            )
        k += 1
    out.append(
        f'<text x="{width - right}" y="{height - 4}" font-size="11" text-anchor="end" fill="#5d6b73">δ / ppm</text>'
    )
    # links first, so sticks draw over them
    for a, p in preds:
        if a.signal is None or a.observed is None:
            continue
        out.append(
            f'<line x1="{_f(x(p))}" y1="{_f(base + 3)}" x2="{_f(x(a.observed))}" y2="{_f(base - 3)}" '
            f'stroke="{signal_colour(a.signal)}" stroke-width="1" stroke-dasharray="2 2"/>'
        )
    # observed sticks
    labels: list[tuple[float, str, str]] = []
    for i, s in enumerate(problem.h1):
        col = signal_colour(i)
        h = up * s.h_count / max_h
        if s.shift_high - s.shift_low > 1e-6:
            x1, x2 = x(s.shift_high), x(s.shift_low)
            out.append(
                f'<rect x="{_f(x1)}" y="{_f(base - h)}" width="{_f(max(x2 - x1, 1.0))}" height="{_f(h)}" '
                f'fill="{col}" fill-opacity="0.18"/>'
            )
        out.append(
            f'<line x1="{_f(x(s.shift))}" y1="{_f(base)}" x2="{_f(x(s.shift))}" y2="{_f(base - h)}" '
            f'stroke="{col}" stroke-width="2.2"/>'
        )
        labels.append((x(s.shift), f"{signal_letter(i)} {fmt_ppm(s.shift)}", col))
    out += _stacked_labels(labels, base - up - 4, -12)
    # predicted sticks
    plabels: list[tuple[float, str, str]] = []
    for a, p in preds:
        col = signal_colour(a.signal)
        h = down * a.h_count / max_h
        env = envs.get(a.environment)
        if env is not None and env.uncertainty > 0:
            x1, x2 = x(p + env.uncertainty), x(p - env.uncertainty)
            out.append(
                f'<rect x="{_f(x1)}" y="{_f(base + 1)}" width="{_f(x2 - x1)}" height="3" fill="{col}" fill-opacity="0.25"/>'
            )
        out.append(
            f'<line x1="{_f(x(p))}" y1="{_f(base)}" x2="{_f(x(p))}" y2="{_f(base + h)}" '
            f'stroke="{col}" stroke-width="2.2" stroke-opacity="0.75"/>'
        )
        plabels.append((x(p), fmt_ppm(p), col))
    out += _stacked_labels(plabels, base + down + 14, 12)
    out.append("</svg>")
    return "".join(out)


def _stacked_labels(labels: Sequence[tuple[float, str, str]], y0: float, dy: float) -> list[str]:
    """Text labels at x positions, moved to further rows where they would collide."""
    rows_end: list[float] = []
    out = []
    for xpos, text, col in sorted(labels, key=lambda t: (t[0], t[1])):
        half = 3.3 * len(text)
        row = 0
        while row < len(rows_end) and rows_end[row] > xpos - half:
            row += 1
        if row == len(rows_end):
            rows_end.append(xpos + half + 3)
        else:
            rows_end[row] = xpos + half + 3
        out.append(
            f'<text x="{_f(xpos)}" y="{_f(y0 + dy * row)}" font-size="10.5" text-anchor="middle" '
            f'fill="{col}">{escape(text)}</text>'
        )
    return out


# ------------------------------------------------------------- multiplets


def _multiplet_panels(problem: Problem, cand: Candidate, envs: dict[int, Environment]) -> str:
    panels = []
    for i, sig in enumerate(problem.h1):
        assigned = [envs[a.environment] for a in cand.assignments if a.signal == i and a.environment in envs]
        panels.append(multiplet_svg(sig, assigned, i))
    return "".join(panels)


def _describe_observed(sig: H1Signal) -> str:
    text = sig.multiplicity
    if sig.broad:
        text = "br " + text
    if sig.couplings:
        text += ", J " + ", ".join(f"{j:.1f}" for j in sig.couplings)
    return text


def _describe_env(env: Environment) -> str:
    text = env.multiplicity
    js = sorted({c.j_hz for c in env.couplings}, reverse=True)
    if js:
        text += ", J " + ", ".join(f"{j:.1f}" for j in js)
    return text


def multiplet_svg(signal: H1Signal, environments: Sequence[Environment], index: int, *, width: int = 170, height: int = 96) -> str:
    """One observed signal's first-order multiplet (top) against the predicted
    multiplets of the environments assigned to it (bottom), in Hz about each
    centre; higher frequency on the left as on the ppm axis.  Patterns that
    cannot be drawn (``m``, missing J) are shown as a shaded band."""
    col = signal_colour(index)
    obs = observed_lines(signal)
    preds = [(env, predicted_lines(env)) for env in environments]
    extent = 0.0
    for lines in [obs] + [p for _, p in preds]:
        if lines:
            extent = max(extent, max(abs(o) for o, _ in lines))
    half = max(extent + 6.0, 12.0)
    mid = height / 2
    cx = width / 2
    scale = (width / 2 - 8) / half

    def xs(hz: float) -> float:
        return cx - hz * scale  # higher Hz (downfield) to the left

    parts = [
        f'<svg width="{width}" height="{height}" viewBox="0 0 {width} {height}" role="img" '
        f'aria-label="multiplet of signal {signal_letter(index)}">',
        f'<line x1="4" y1="{_f(mid)}" x2="{width - 4}" y2="{_f(mid)}" stroke="#b9b3a5"/>',
        f'<text x="5" y="12" font-size="11" font-weight="700" fill="{col}">{signal_letter(index)}</text>',
    ]
    room = mid - 16
    if obs is None:
        parts.append(
            f'<rect x="{_f(cx - 30)}" y="{_f(mid - room * 0.5)}" width="60" height="{_f(room * 0.5)}" '
            f'fill="{col}" fill-opacity="0.25"/>'
        )
        parts.append(f'<text x="{_f(cx)}" y="{_f(mid - 4)}" font-size="10" text-anchor="middle" fill="{col}">{escape(signal.multiplicity)}</text>')
    else:
        peak = max(i for _, i in obs)
        for off, inten in obs:
            parts.append(
                f'<line x1="{_f(xs(off))}" y1="{_f(mid)}" x2="{_f(xs(off))}" y2="{_f(mid - room * inten / peak)}" '
                f'stroke="{col}" stroke-width="1.8"/>'
            )
    all_pred = [(env, lines) for env, lines in preds if lines]
    if all_pred:
        peak = max(i * env.h_count for env, lines in all_pred for _, i in lines)
        for env, lines in all_pred:
            for off, inten in lines:
                parts.append(
                    f'<line x1="{_f(xs(off))}" y1="{_f(mid)}" x2="{_f(xs(off))}" '
                    f'y2="{_f(mid + room * inten * env.h_count / peak)}" stroke="{col}" stroke-width="1.8" stroke-opacity="0.6"/>'
                )
    elif preds:
        parts.append(
            f'<rect x="{_f(cx - 30)}" y="{_f(mid)}" width="60" height="{_f(room * 0.5)}" fill="{col}" fill-opacity="0.15"/>'
        )
    else:
        parts.append(f'<text x="{_f(cx)}" y="{_f(mid + 14)}" font-size="10" text-anchor="middle" fill="#9aa3a8">nothing assigned</text>')
    # 10 Hz scale bar
    bar = 10 * scale
    parts.append(
        f'<line x1="{_f(width - 6 - bar)}" y1="{height - 6}" x2="{width - 6}" y2="{height - 6}" stroke="#5d6b73" stroke-width="1.5"/>'
        f'<text x="{_f(width - 6 - bar / 2)}" y="{height - 9}" font-size="9" text-anchor="middle" fill="#5d6b73">10 Hz</text>'
    )
    parts.append("</svg>")
    caption = f"obs {fmt_ppm(signal.shift)} {_describe_observed(signal)}"
    if environments:
        caption += " · pred " + "; ".join(f"{fmt_ppm(e.shift)} {_describe_env(e)}" for e in environments)
    return f"<figure>{''.join(parts)}<figcaption>{escape(caption)}</figcaption></figure>"


# ------------------------------------------------------------ rejections


def _rejections(result: SolveResult, single: bool = False) -> str:
    if not result.rejected_counts and not result.rejected:
        return ""
    parts = ["<h2>Why it was rejected</h2>" if single else "<h2>Rejected structures</h2>"]
    if result.rejected_counts:
        total = sum(n for _, n in result.rejected_counts)
        rows = "".join(
            f'<tr><td class="num">{n}</td><td>{escape(reason)}</td></tr>' for reason, n in result.rejected_counts
        )
        parts.append(
            f"<p>{total} structure{'s' if total != 1 else ''} built from the formula failed a hard constraint:</p>"
            f'<table><thead><tr><th class="num">count</th><th>reason</th></tr></thead><tbody>{rows}</tbody></table>'
        )
    examples = result.rejected[:MAX_REJECTION_EXAMPLES]
    if examples:
        parts.append("" if single else "<p>Examples:</p>")
        parts.append('<div class="examples">')
        for rej in examples:
            parts.append(_rejection_example(rej))
        parts.append("</div>")
        if len(result.rejected) > len(examples):
            parts.append(f"<p>… and {len(result.rejected) - len(examples)} more examples in the JSON output.</p>")
    return "".join(parts)


def _rejection_example(rej: Rejection) -> str:
    try:
        drawing = draw_molecule(rej.smiles, size=(200, 150), label=f"rejected {rej.smiles}")
    except InputError:
        drawing = ""
    reasons = "".join(f"<li>{escape(r)}</li>" for r in rej.reasons)
    return f'<div class="example">{drawing}<div class="smiles">{escape(rej.smiles)}</div><ul>{reasons}</ul></div>'


# ------------------------------------------------------------ input echo


def _input_echo(problem: Problem) -> str:
    facts = [("formula", problem.formula.hill), ("DoU", f"{problem.formula.dou:g}")]
    if problem.solvent:
        facts.append(("solvent", problem.solvent))
    if problem.field_mhz:
        facts.append(("field", f"{problem.field_mhz:g} MHz"))
    if problem.description:
        facts.append(("description", problem.description))
    for s in problem.require:
        facts.append(("required substructure", s))
    for s in problem.forbid:
        facts.append(("forbidden substructure", s))
    fact_rows = "".join(f"<tr><th>{escape(k)}</th><td>{escape(v)}</td></tr>" for k, v in facts)
    sig_rows = "".join(
        "<tr>"
        f"<td>{_chip(i)}</td>"
        f'<td class="num">{fmt_ppm(s.shift)}'
        + (f" ({fmt_ppm(s.shift_low)}–{fmt_ppm(s.shift_high)})" if s.shift_high - s.shift_low > 1e-6 else "")
        + "</td>"
        f"<td>{escape(('br ' if s.broad else '') + s.multiplicity)}</td>"
        f"<td>{escape(', '.join(f'{j:.1f}' for j in s.couplings)) or '–'}</td>"
        f'<td class="num">{fmt_count(s.h_count)}</td>'
        f"<td>{escape(s.text)}</td>"
        "</tr>"
        for i, s in enumerate(problem.h1)
    )
    parts = [
        "<h2>Input</h2>",
        f'<table class="input"><tbody>{fact_rows}</tbody></table>',
        '<table class="input"><thead><tr><th>signal</th><th class="num">δ / ppm</th><th>multiplicity</th>'
        f'<th>J / Hz</th><th class="num">nH</th><th>as given</th></tr></thead><tbody>{sig_rows}</tbody></table>',
    ]
    if problem.c13:
        c_rows = "".join(
            f'<tr><td class="num">{c.shift:.1f}</td><td class="num">{c.carbons}</td>'
            f"<td>{'–' if c.attached_h is None else ('C', 'CH', 'CH2', 'CH3')[c.attached_h]}</td></tr>"
            for c in problem.c13
        )
        parts.append(
            '<table class="input"><thead><tr><th class="num">13C δ / ppm</th><th class="num">carbons</th>'
            f"<th>DEPT</th></tr></thead><tbody>{c_rows}</tbody></table>"
        )
        if problem.c13_complete:
            parts.append("<p>13C list stated complete: every distinct carbon has its own line.</p>")
    if problem.set_aside:
        parts.append(
            "<p>Set aside (annotated as solvent, water or an impurity; not signals of the compound):</p><ul>"
            + "".join(f"<li>{escape(a.nucleus)} {escape(a.text)}: {escape(a.reason)}</li>" for a in problem.set_aside)
            + "</ul>"
        )
    if problem.warnings:
        parts.append("<ul>" + "".join(f"<li>Warning: {escape(w)}</li>" for w in problem.warnings) + "</ul>")
    return "".join(parts)
