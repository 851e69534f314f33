"""Progress on stderr for long searches, through a plain callback.

The stages never import this module.  They accept an optional callable
(:data:`ProgressCallback`) and call it as work advances::

    def solve(problem, *, progress: ProgressCallback | None = None): ...
        for i, smiles in enumerate(stream, 1):
            if progress:
                progress("generating", i, None)      # total unknown
        for i, s in enumerate(structures, 1):
            if progress:
                progress("scoring", i, len(structures))

A phase is named by its first argument; calling with a new name starts a
new phase (the previous one counts as finished).  The CLI creates the
callable with :func:`stderr_progress`, which draws a bar (rich.progress) on
stderr only once a phase has run for over a second, only on a terminal, and
removes it when done, so short runs and redirected output stay clean.
Calls are cheap: the display is refreshed at most ten times a second.
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TextIO

__all__ = ["ProgressCallback", "StderrProgress", "stderr_progress", "no_progress"]

#: ``progress(phase, done, total)``: ``phase`` a short label ("generating",
#: "scoring"), ``done`` the items finished so far, ``total`` the number
#: expected or ``None`` when unknown.
ProgressCallback = Callable[[str, int, "int | None"], None]


def no_progress(phase: str, done: int, total: int | None) -> None:
    """A :data:`ProgressCallback` that shows nothing."""


class StderrProgress:
    """A :data:`ProgressCallback` drawing rich progress bars on a stream.

    Parameters
    ----------
    stream : text stream, optional
        Where to draw (default ``sys.stderr``).
    delay_s : float
        A phase is shown only after it has run this long.
    clock : callable, optional
        Monotonic clock in seconds (tests pass a fake one).
    """

    def __init__(
        self,
        stream: TextIO | None = None,
        *,
        delay_s: float = 1.0,
        clock: Callable[[], float] = time.monotonic,
    ) -> None:
        if delay_s < 0:
            raise ValueError(f"delay_s must be >= 0, got {delay_s}")
        self._stream = stream if stream is not None else sys.stderr
        self._delay = delay_s
        self._clock = clock
        self._phase: str | None = None
        self._phase_start = 0.0
        self._last_draw = 0.0
        self._bar: Any = None  # rich.progress.Progress, created on first need
        self._task: Any = None
        #: Phases that were drawn (for tests and for the caller's curiosity).
        self.shown: list[str] = []

    def __call__(self, phase: str, done: int, total: int | None) -> None:
        now = self._clock()
        if phase != self._phase:
            self._end_phase()
            self._phase = phase
            self._phase_start = now
            self._last_draw = 0.0
        if now - self._phase_start < self._delay or now - self._last_draw < 0.1:
            return
        self._last_draw = now
        if self._task is None:
            self._start_bar(phase, total)
        self._bar.update(self._task, completed=done, total=total)

    def _start_bar(self, phase: str, total: int | None) -> None:
        from rich.console import Console
        from rich.progress import (
            BarColumn,
            MofNCompleteColumn,
            Progress,
            SpinnerColumn,
            TextColumn,
            TimeElapsedColumn,
        )

        if self._bar is None:
            console = Console(file=self._stream, stderr=self._stream is sys.stderr)
            self._bar = Progress(
                SpinnerColumn(),
                TextColumn("{task.description}"),
                BarColumn(),
                MofNCompleteColumn(),
                TimeElapsedColumn(),
                console=console,
                transient=True,
            )
            self._bar.start()
        self._task = self._bar.add_task(phase, total=total)
        self.shown.append(phase)

    def _end_phase(self) -> None:
        if self._task is not None:
            self._bar.remove_task(self._task)
            self._task = None

    def close(self) -> None:
        """Remove any bar from the screen."""
        self._end_phase()
        if self._bar is not None:
            self._bar.stop()
            self._bar = None
        self._phase = None


@contextmanager
def stderr_progress(enabled: bool = True, *, delay_s: float = 1.0) -> Iterator[ProgressCallback]:
    """Context manager giving a progress callback for a CLI command.

    Draws on stderr only when ``enabled`` and stderr is a terminal; otherwise
    yields :func:`no_progress`.  The bar is removed on exit, error or not.
    """
    if not enabled or not _is_terminal(sys.stderr):
        yield no_progress
        return
    bar = StderrProgress(delay_s=delay_s)
    try:
        yield bar
    finally:
        bar.close()


def _is_terminal(stream: TextIO) -> bool:
    isatty = getattr(stream, "isatty", None)
    return bool(isatty and isatty())
