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
from elucidate.errors import InputError

__all__ = ["app", "main", "EXIT_INPUT", "EXIT_LIMIT"]

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
    )
    for message in problem.warnings:
        warn(message)
    if json_out:
        emit_json(readback_json(problem))
    else:
        typer.echo(readback_text(problem))


# ------------------------------------------------------- isomers (generate)


# ---------------------------------------------------------- predict (predict)


# ------------------------------------------------------ solve, explain (score)


def main() -> None:
    """Console-script entry point."""
    try:
        app()
    except InputError as err:  # a command without @user_errors: still one line
        typer.echo(f"error: {err}", err=True)
        sys.exit(EXIT_INPUT)
