"""report stage: what the chemist sees.

- :func:`render_solve`, :func:`render_explain` — terminal (rich on a
  terminal, plain text otherwise);
- :func:`write_html` — one self-contained HTML page with drawings, spectra
  and the evidence per signal;
- :func:`write_sdf` — ranked candidates as an SD file;
- :func:`stderr_progress` — progress bars on stderr for long searches,
  through the plain callback :data:`ProgressCallback`.

Submodules are imported on first use so that importing this package (and
starting the CLI) stays cheap; RDKit is loaded only when drawing or writing.
"""

from __future__ import annotations

from importlib import import_module
from typing import Any

__all__ = [
    "render_solve",
    "render_explain",
    "write_html",
    "render_html",
    "write_explain_html",
    "render_explain_html",
    "write_sdf",
    "sdf_text",
    "write_explain_sdf",
    "explain_sdf_text",
    "stderr_progress",
    "ProgressCallback",
    "StderrProgress",
    "no_progress",
]

_WHERE = {
    "render_solve": "terminal",
    "render_explain": "terminal",
    "write_html": "html",
    "render_html": "html",
    "write_explain_html": "html",
    "render_explain_html": "html",
    "write_sdf": "sdf",
    "sdf_text": "sdf",
    "write_explain_sdf": "sdf",
    "explain_sdf_text": "sdf",
    "stderr_progress": "progress",
    "ProgressCallback": "progress",
    "StderrProgress": "progress",
    "no_progress": "progress",
}


def __getattr__(name: str) -> Any:
    if name in _WHERE:
        return getattr(import_module(f"elucidate.report.{_WHERE[name]}"), name)
    raise AttributeError(f"module 'elucidate.report' has no attribute {name!r}")
