"""Command-line interface: typer commands only — parse arguments, call, print.

Every command takes ``--json``.  Expected failures (bad input) end with one
line on stderr and exit code 2; a search stopped by a limit exits with
:data:`EXIT_LIMIT`.  Heavy modules (RDKit, OR-Tools, data tables) are
imported inside the commands so that ``elucidate --help`` starts fast.
"""

from __future__ import annotations

import functools
import json
import sys
from pathlib import Path
from typing import Annotated, Any, Callable, Optional, TypeVar

import typer

from elucidate import CAUTION, __version__
from elucidate._cliparams import install as _plain_values
from elucidate.errors import InputError

_plain_values()  # plain option values without importing pydantic (see _cliparams)

__all__ = ["app", "main", "EXIT_INPUT", "EXIT_LIMIT", "EXIT_CASES_FAILED"]

#: Exit code for bad user input.
EXIT_INPUT = 2
#: Exit code when a user-set limit (time, structure count) stopped a search.
EXIT_LIMIT = 3

app = typer.Typer(
    name="elucidate",
    help=(
        "Candidate structures from a molecular formula and 1H/13C NMR peak lists.\n\n"
        + CAUTION
    ),
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)

F = TypeVar("F", bound=Callable[..., Any])


def fail(message: str, code: int = EXIT_INPUT) -> typer.Exit:
    """Print one line on stderr and return the Exit to raise."""
    typer.echo(f"error: {' '.join(message.split())}", err=True)
    return typer.Exit(code)


def warn(message: str) -> None:
    """One warning line on stderr."""
    typer.echo(f"warning: {' '.join(message.split())}", err=True)


def user_errors(func: F) -> F:
    """Turn :class:`InputError` raised inside a command into one stderr line
    and exit code 2 — never a traceback."""

    @functools.wraps(func)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        try:
            return func(*args, **kwargs)
        except InputError as err:
            raise fail(str(err)) from None

    return wrapper  # type: ignore[return-value]


def emit_json(document: Any) -> None:
    """Write one JSON document to stdout (stable key order, same bytes each run)."""
    typer.echo(json.dumps(document, indent=2, ensure_ascii=False))


# Options shared by the commands that read an unknown (read, solve, explain).
CaseArg = Annotated[
    Optional[Path],
    typer.Argument(
        help="TOML case file (see README, 'Case files'). Options below override its keys.",
        dir_okay=False,
        show_default=False,
    ),
]
FormulaOpt = Annotated[Optional[str], typer.Option("--formula", help="Molecular formula, e.g. C9H10O2.")]
H1Opt = Annotated[
    Optional[str],
    typer.Option("--h1", help="1H peak list as written in a paper, or @FILE (CSV/TSV table or JCAMP-DX)."),
]
C13Opt = Annotated[
    Optional[str],
    typer.Option("--c13", help="13C shifts, e.g. '171.1, 60.4 (CH2), 21.0', or @FILE."),
]
SolventOpt = Annotated[Optional[str], typer.Option("--solvent", help="NMR solvent, e.g. CDCl3.")]
FieldOpt = Annotated[Optional[float], typer.Option("--field", help="Spectrometer 1H frequency in MHz.")]
RequireOpt = Annotated[
    Optional[list[str]],
    typer.Option("--require", help="SMARTS every candidate must contain (repeatable)."),
]
ForbidOpt = Annotated[
    Optional[list[str]],
    typer.Option("--forbid", help="SMARTS no candidate may contain (repeatable)."),
]
C13CompleteOpt = Annotated[
    Optional[bool],
    typer.Option(
        "--c13-complete/--no-c13-complete",
        help="The 13C list is complete: every distinct carbon has its own line (no accidental overlap).",
        show_default=False,
    ),
]
HsqcOpt = Annotated[
    Optional[str],
    typer.Option("--hsqc", help="HSQC cross peaks dH/dC, e.g. '3.67/51.5, 2.32/27.5', or @FILE (CSV: dH, dC)."),
]
CosyOpt = Annotated[
    Optional[str],
    typer.Option("--cosy", help="COSY cross peaks dH/dH, e.g. '4.12/1.26', or @FILE (CSV: H1, H2)."),
]
HmbcOpt = Annotated[
    Optional[str],
    typer.Option("--hmbc", help="HMBC cross peaks dH/dC (2-3 bonds H to C), e.g. '3.67/174.8', or @FILE."),
]
NoesyOpt = Annotated[
    Optional[str],
    typer.Option("--noesy", help="NOESY cross peaks dH/dH (shown only: through space, not a constraint)."),
]
JsonOpt = Annotated[bool, typer.Option("--json", help="Write one JSON document to stdout.")]


def _version(value: bool) -> None:
    if value:
        typer.echo(f"elucidate {__version__}")
        raise typer.Exit()


@app.callback()
def _root(
    version: Annotated[
        bool, typer.Option("--version", callback=_version, is_eager=True, help="Show the version.")
    ] = False,
) -> None:
    """Candidate structures from a molecular formula and NMR peak lists."""


# ---------------------------------------------------------------- read (parse)


@app.command("read")
@user_errors
def read_command(
    case: CaseArg = None,
    formula: FormulaOpt = None,
    h1: H1Opt = None,
    c13: C13Opt = None,
    solvent: SolventOpt = None,
    field: FieldOpt = None,
    require: RequireOpt = None,
    forbid: ForbidOpt = None,
    c13_complete: C13CompleteOpt = None,
    hsqc: HsqcOpt = None,
    cosy: CosyOpt = None,
    hmbc: HmbcOpt = None,
    noesy: NoesyOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Read an unknown and show what was understood: formula, DoU, the 1H and
    13C signals normalised, solvent, field, constraints and warnings."""
    from elucidate.parse import load_problem
    from elucidate.parse.readback import readback_json, readback_text

    problem = load_problem(
        case,
        formula=formula,
        h1=h1,
        c13=c13,
        solvent=solvent,
        field_mhz=field,
        require=tuple(require or ()),
        forbid=tuple(forbid or ()),
        c13_complete=c13_complete,
        hsqc=hsqc,
        cosy=cosy,
        hmbc=hmbc,
        noesy=noesy,
    )
    for message in problem.warnings:
        warn(message)
    if json_out:
        emit_json(readback_json(problem))
    else:
        typer.echo(readback_text(problem))


# ------------------------------------------------------- isomers (generate)


@app.command()
@user_errors
def isomers(
    formula: Annotated[str, typer.Argument(help="Molecular formula, e.g. C8H10.")],
    count_only: Annotated[bool, typer.Option("--count", help="Print only the number of structures.")] = False,
    require: RequireOpt = None,
    forbid: ForbidOpt = None,
    max_structures: Annotated[
        Optional[int], typer.Option("--max-structures", help="Stop after N structures.", min=1)
    ] = None,
    time_limit: Annotated[
        Optional[float], typer.Option("--time-limit", help="Stop after S seconds.", min=0.0)
    ] = None,
    workers: Annotated[int, typer.Option("--workers", help="Processes of a local pool.", min=1)] = 1,
    hypervalent_s: Annotated[bool, typer.Option("--hypervalent-s", help="Allow S(IV) and S(VI).")] = False,
    pentavalent_p: Annotated[bool, typer.Option("--pentavalent-p", help="Allow P(V).")] = False,
    charge_separated: Annotated[
        bool, typer.Option("--charge-separated", help="Allow nitro groups and N-oxides as N+-O-.")
    ] = False,
    no_small_rings: Annotated[bool, typer.Option("--no-small-rings", help="No 3- or 4-membered rings.")] = False,
    no_cumulenes: Annotated[
        bool, typer.Option("--no-cumulenes", help="No carbon with two double bonds (allenes, ketenes ...).")
    ] = False,
    no_hetero_hetero: Annotated[
        bool, typer.Option("--no-hetero-hetero", help="No single bond between two heteroatoms.")
    ] = False,
    min_ring_triple: Annotated[
        int, typer.Option("--min-ring-triple", help="Triple bonds only in rings of at least this size (0: any).", min=0)
    ] = 0,
    max_ring_size: Annotated[
        Optional[int], typer.Option("--max-ring-size", help="Largest ring size allowed.", min=3)
    ] = None,
    json_out: JsonOpt = False,
) -> None:
    """Every constitutional isomer of FORMULA, once each, as canonical SMILES (one per line).

    Connected, neutral, closed-shell constitutions without stereo; valences
    C 4, N 3, O 2, S 2, halogens 1, Si 4, P 3; bond orders 1-3. Kekulé forms
    of one aromatic compound are one structure.
    """
    import time

    from elucidate.errors import LimitReached
    from elucidate.generate import Limits, Options, Spec, Stats, count, generate
    from elucidate.generate.isomers import part_args, parts_smiles, validate_spec
    from elucidate.parse import parse_formula

    spec = Spec(
        formula=parse_formula(formula),
        require=tuple(require or ()),
        forbid=tuple(forbid or ()),
        options=Options(
            hypervalent_s=hypervalent_s,
            pentavalent_p=pentavalent_p,
            charge_separated=charge_separated,
            no_small_rings=no_small_rings,
            no_cumulenes=no_cumulenes,
            no_hetero_hetero=no_hetero_hetero,
            min_ring_triple=min_ring_triple,
            max_ring_size=max_ring_size,
        ),
    )
    validate_spec(spec)
    limits = Limits(max_structures=max_structures, time_limit_s=time_limit)
    stats = Stats()
    progress = _Progress()
    smiles: list[str] = []
    if count_only:
        n = count(spec, limits=limits, workers=workers, stats=stats)
    elif workers > 1:
        from concurrent.futures import ProcessPoolExecutor

        nparts = workers * 8
        n = 0
        with ProcessPoolExecutor(max_workers=workers) as pool:
            args = part_args(spec, limits, nparts)
            for part, st in pool.map(parts_smiles, args):
                stats.add(st)
                for s in part:
                    if max_structures is not None and n >= max_structures:
                        stats.stopped_by = "max_structures"
                        break
                    n += 1
                    if json_out:
                        smiles.append(s)
                    else:
                        typer.echo(s)
                    progress.tick(n)
    else:
        n = 0
        try:
            for s in generate(spec, limits=limits, stats=stats):
                n += 1
                if json_out:
                    smiles.append(s)
                else:
                    typer.echo(s)
                progress.tick(n)
        except LimitReached:
            pass
    progress.done()
    if json_out:
        doc: dict[str, Any] = {
            "formula": spec.formula.hill,
            "count": n,
            "complete": stats.stopped_by is None,
            "stopped_by": stats.stopped_by,
            "caution": CAUTION,
        }
        if not count_only:
            doc["smiles"] = smiles
        emit_json(doc)
    elif count_only:
        typer.echo(str(n))
    if stats.stopped_by:
        what = "structure limit" if stats.stopped_by == "max_structures" else "time limit"
        typer.echo(f"stopped: {what} reached after {n} structures; the list is incomplete", err=True)
        raise typer.Exit(EXIT_LIMIT)
    _ = time


class _Progress:
    """A structure counter on stderr, shown only for runs longer than a second."""

    def __init__(self) -> None:
        import time

        self._t0 = time.monotonic()
        self._shown = False
        self._next = 0.0
        self._tty = sys.stderr.isatty()

    def tick(self, n: int) -> None:
        if not self._tty or n % 1000:
            return
        import time

        now = time.monotonic() - self._t0
        if now > 1.0 and now > self._next:
            sys.stderr.write(f"\r{n} structures ...")
            sys.stderr.flush()
            self._shown = True
            self._next = now + 0.5

    def done(self) -> None:
        if self._shown:
            sys.stderr.write("\r" + " " * 40 + "\r")
            sys.stderr.flush()



# ---------------------------------------------------------- predict (predict)


@app.command("predict")
@user_errors
def predict_command(
    smiles: Annotated[str, typer.Argument(help="Structure as SMILES, e.g. 'CCOC(C)=O'.", show_default=False)],
    solvent: SolventOpt = None,
    field: FieldOpt = None,
    as_json: JsonOpt = False,
) -> None:
    """Predict the 1H spectrum of a structure, one row per H environment, each
    shift with its derivation (published additive increment methods), plus
    13C shifts."""
    from elucidate.predict import predict
    from elucidate.predict.format import render_prediction

    result = predict(smiles, solvent=solvent, field_mhz=field)
    for w in result.warnings:
        warn(w)
    if as_json:
        doc = result.to_json()
        doc["caution"] = CAUTION
        emit_json(doc)
        return
    typer.echo(render_prediction(result, field_mhz=field))
    typer.echo("")
    typer.echo(CAUTION)


# ------------------------------------------------------ solve, explain (score)


TopOpt = Annotated[int, typer.Option("--top", help="Number of ranked candidates to show.", min=1)]
#: Default wall-clock limit of solve/explain (seconds); --time-limit 0 for none.
DEFAULT_TIME_LIMIT_S = 60.0

TimeLimitOpt = Annotated[
    float,
    typer.Option(
        "--time-limit",
        help="Stop the search after this many seconds and show the best so far, flagged incomplete "
        "(0: no limit).",
        min=0.0,
    ),
]


def _time_limit(value: float) -> float | None:
    return None if value == 0 else value
MaxStructuresOpt = Annotated[
    Optional[int],
    typer.Option("--max-structures", help="Stop after generating this many structures.", min=1),
]
WorkersOpt = Annotated[
    int,
    typer.Option(
        "--workers",
        help="Local processes that build, predict and score the structures of this unknown "
        "(same result for any number; worth it for searches of more than a few seconds).",
        min=1,
    ),
]


ReportOpt = Annotated[
    Optional[Path],
    typer.Option(
        "--report",
        metavar="FILE.html",
        dir_okay=False,
        help="Also write one self-contained HTML page (drawings, spectra, evidence per signal) to this file.",
    ),
]
SdfOpt = Annotated[
    Optional[Path],
    typer.Option(
        "--sdf",
        metavar="FILE",
        dir_okay=False,
        help="Also write the ranked candidates (rank, score, deviations as SD properties) to this SD file.",
    ),
]


def _check_output(path: Path | None, option: str) -> None:
    """Fail before a long search if an output file cannot be written."""
    if path is None:
        return
    if path.is_dir():
        raise InputError(f"{option} {path}: is a directory, not a file")
    parent = path.parent if str(path.parent) else Path(".")
    if not parent.is_dir():
        raise InputError(f"{option} {path}: directory '{parent}' does not exist")


def _deliver(
    outcome: Any,
    report: Path | None,
    sdf: Path | None,
    json_out: bool,
    write_html: Callable[[Any, Path], None],
    write_sdf: Callable[[Any, Path], None],
    render: Callable[[Any], None],
) -> None:
    """Write the requested files, then JSON or the terminal view of a solve
    result or an explanation."""
    if report is not None:
        write_html(outcome, report)
        typer.echo(f"wrote {report}", err=True)
    if sdf is not None:
        write_sdf(outcome, sdf)
        typer.echo(f"wrote {sdf}", err=True)
    if json_out:
        doc = outcome.to_json()
        doc["caution"] = CAUTION
        emit_json(doc)
    else:
        render(outcome)


def _load(
    case: Any, formula: Any, h1: Any, c13: Any, solvent: Any, field: Any, require: Any, forbid: Any,
    c13_complete: bool | None = None,
    two_d: tuple[Any, Any, Any, Any] = (None, None, None, None),
) -> Any:
    from elucidate.parse import load_problem

    hsqc, cosy, hmbc, noesy = two_d
    problem = load_problem(
        case, formula=formula, h1=h1, c13=c13, solvent=solvent, field_mhz=field,
        require=tuple(require or ()), forbid=tuple(forbid or ()), c13_complete=c13_complete,
        hsqc=hsqc, cosy=cosy, hmbc=hmbc, noesy=noesy,
    )
    for message in problem.warnings:
        warn(message)
    return problem


@app.command("solve")
@user_errors
def solve_command(
    case: CaseArg = None,
    formula: FormulaOpt = None,
    h1: H1Opt = None,
    c13: C13Opt = None,
    solvent: SolventOpt = None,
    field: FieldOpt = None,
    require: RequireOpt = None,
    forbid: ForbidOpt = None,
    c13_complete: C13CompleteOpt = None,
    hsqc: HsqcOpt = None,
    cosy: CosyOpt = None,
    hmbc: HmbcOpt = None,
    noesy: NoesyOpt = None,
    top: TopOpt = 10,
    time_limit: TimeLimitOpt = DEFAULT_TIME_LIMIT_S,
    max_structures: MaxStructuresOpt = None,
    workers: WorkersOpt = 1,
    report: ReportOpt = None,
    sdf: SdfOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Rank every structure consistent with a formula and a 1H (13C) peak list.

    A search stopped by --time-limit or --max-structures still exits 0: the
    output says INCOMPLETE prominently and JSON has "complete": false.
    """
    from elucidate.report import render_solve, stderr_progress, write_html, write_sdf
    from elucidate.solve import solve

    _check_output(report, "--report")
    _check_output(sdf, "--sdf")
    problem = _load(case, formula, h1, c13, solvent, field, require, forbid, c13_complete,
                    (hsqc, cosy, hmbc, noesy))
    with stderr_progress() as progress:
        result = solve(
            problem, top=top, time_limit_s=_time_limit(time_limit), max_structures=max_structures,
            progress=progress, workers=workers,
        )
    if not result.complete:
        warn(f"incomplete search ({result.stopped_by or 'hypotheses capped'}): best so far shown")
    _deliver(result, report, sdf, json_out, write_html, write_sdf, render_solve)


@app.command("explain")
@user_errors
def explain_command(
    first: Annotated[
        str, typer.Argument(metavar="[CASE.toml] SMILES", help="The structure as SMILES, optionally after a TOML case file.",
                            show_default=False)
    ],
    second: Annotated[Optional[str], typer.Argument(hidden=True, metavar="[SMILES]", show_default=False)] = None,
    case: Annotated[
        Optional[Path],
        typer.Option("--case", help="TOML case file (options override its keys).", dir_okay=False),
    ] = None,
    formula: FormulaOpt = None,
    h1: H1Opt = None,
    c13: C13Opt = None,
    solvent: SolventOpt = None,
    field: FieldOpt = None,
    require: RequireOpt = None,
    forbid: ForbidOpt = None,
    c13_complete: C13CompleteOpt = None,
    hsqc: HsqcOpt = None,
    cosy: CosyOpt = None,
    hmbc: HmbcOpt = None,
    noesy: NoesyOpt = None,
    time_limit: TimeLimitOpt = DEFAULT_TIME_LIMIT_S,
    max_structures: MaxStructuresOpt = None,
    workers: WorkersOpt = 1,
    report: ReportOpt = None,
    sdf: SdfOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Say whether one structure fits the data (consistent / poor fit /
    rejected), with its assignment, the reasons, and its rank."""
    from elucidate.report import render_explain, stderr_progress, write_explain_html, write_explain_sdf
    from elucidate.solve import explain

    _check_output(report, "--report")
    _check_output(sdf, "--sdf")
    smiles = first
    if second is not None:
        if case is not None:
            raise InputError(f"explain: give the case file once (--case {case} and {first!r})")
        case, smiles = Path(first), second
    problem = _load(case, formula, h1, c13, solvent, field, require, forbid, c13_complete,
                    (hsqc, cosy, hmbc, noesy))
    with stderr_progress() as progress:
        explanation = explain(
            problem, smiles, time_limit_s=_time_limit(time_limit), max_structures=max_structures,
            progress=progress, workers=workers,
        )
    _deliver(explanation, report, sdf, json_out, write_explain_html, write_explain_sdf, render_explain)


# ------------------------------------------------------------------ batch

#: Exit code of ``batch`` when at least one case failed (the others are kept).
EXIT_CASES_FAILED = 1


@app.command("batch")
@user_errors
def batch_command(
    source: Annotated[
        Path,
        typer.Argument(
            metavar="INPUT",
            help="A folder of *.toml case files, one TOML file of [[case]] tables, or a CSV manifest "
            "(columns formula, h1, c13, solvent, name ...).",
            show_default=False,
        ),
    ],
    out: Annotated[
        Optional[Path],
        typer.Option("--out", metavar="DIR", help="Result folder (default: <input>-results beside the input).",
                     file_okay=False),
    ] = None,
    workers: Annotated[
        Optional[int], typer.Option("--workers", help="Local worker processes (default 1).", min=1)
    ] = None,
    time_limit: TimeLimitOpt = DEFAULT_TIME_LIMIT_S,
    top: TopOpt = 10,
    report: Annotated[
        bool, typer.Option("--report", help="Also write one HTML page per case and an index.html linking them.")
    ] = False,
    cluster: Annotated[
        Optional[str],
        typer.Option("--cluster", metavar="ADDRESS",
                     help="Run the cases on a Dask distributed scheduler, e.g. tcp://host:8786 "
                     "(needs the 'cluster' extra)."),
    ] = None,
    retry_failed: Annotated[
        bool, typer.Option("--retry-failed", help="Solve again the cases whose recorded result is an error.")
    ] = False,
) -> None:
    """Solve many unknowns: one JSON result per case and a summary.csv.

    Each result is written as soon as its case is done, so a run that is
    stopped resumes where it was: cases whose result exists for the same
    input and settings are skipped. A case that fails (bad input, crash,
    time-out) records its error and the batch goes on. Exit code 0 if every
    case succeeded, 1 if any failed, 2 for an unusable INPUT or option.
    """
    from elucidate.batch import BatchSettings, default_out_dir, read_cases, run_batch
    from elucidate.report.batch import BatchProgress

    if cluster is not None and workers is not None:
        raise InputError("give --workers (local processes) or --cluster (a Dask scheduler), not both")
    batch = read_cases(source)
    if batch.ignored_keys:
        warn(f"{source}: keys not used for solving, ignored: {', '.join(batch.ignored_keys)}")
    out_dir = out if out is not None else default_out_dir(source)
    settings = BatchSettings(top=top, time_limit_s=_time_limit(time_limit), report=report)
    result = run_batch(
        batch, out_dir, settings, workers=workers or 1, cluster=cluster, retry_failed=retry_failed,
        events=BatchProgress(),
    )
    typer.echo(
        f"{result.total} case(s): {result.solved} solved now, {result.skipped} already done, "
        f"{len(result.failed)} failed; results in {out_dir}",
        err=True,
    )
    if result.failed:
        shown = ", ".join(result.failed[:5]) + (f" and {len(result.failed) - 5} more" if len(result.failed) > 5 else "")
        typer.echo(f"failed: {shown} (see summary.csv)", err=True)
        raise typer.Exit(EXIT_CASES_FAILED)



def _click_exceptions() -> Any:
    """The click exception module typer uses (vendored in recent typer)."""
    try:
        from typer._click import exceptions
    except ImportError:  # older typer depends on click itself
        from click import exceptions
    return exceptions


def main() -> None:
    """Console-script entry point: every expected failure is one stderr line."""
    exceptions = _click_exceptions()
    try:
        code = app(standalone_mode=False)
    except exceptions.NoArgsIsHelpError as err:  # bare `elucidate`: show the help
        typer.echo(err.format_message())
        sys.exit(0)
    except exceptions.ClickException as err:  # bad option value, missing file, no such command …
        typer.echo(f"error: {' '.join(err.format_message().split())}", err=True)
        sys.exit(EXIT_INPUT)
    except exceptions.Abort:
        typer.echo("error: interrupted", err=True)
        sys.exit(130)
    except InputError as err:  # a command without @user_errors: still one line
        typer.echo(f"error: {err}", err=True)
        sys.exit(EXIT_INPUT)
    sys.exit(code if isinstance(code, int) else 0)
