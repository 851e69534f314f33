"""A process pool for one solve: generator parts and CP-SAT assignments.

``solve(..., workers=N)`` with N > 1 hands two kinds of work to N local
processes and puts the answers back in the order a single process would
have produced them, so the result is the same, byte for byte, for any N
(time limits aside: where a search stops on the clock depends on the
machine in any case).

* **Structures**: a relaxation level with at least two specs per process
  runs each spec's search as one task (:meth:`SolvePool.plan`, started
  ahead of the solver's loop); otherwise each search splits into disjoint
  contiguous parts (``generate(..., part=(i, n))``) whose concatenation is
  the unsplit stream (each part enumerates the skeletons in full, so parts
  cost more in all than one search).  A task also predicts each structure
  and gives it its cheap bound (the costly, per-structure work).  The
  parent reads the tasks in order.  When a structure cap falls inside a
  task, the parent runs that task's prefix again itself, so the counters
  (partial structures visited, structures turned down while building) are
  those of the single-process run.
* **Assignments**: the full CP-SAT assignment of the pending structures, in
  the order :func:`elucidate.solve._score_pool` takes them, is computed a
  few chunks ahead by the workers; the parent applies its stopping rule to
  the answers in order exactly as without workers and drops the rest.

N processes work: the parent and N - 1 workers.  The workers are forked
from the parent once it has loaded the libraries and the data tables, so
they start at once with everything loaded; if the parent runs other
threads (a fork of a threaded process can deadlock) they are started by
``forkserver`` instead and load for themselves (about a second; a program
using spawned workers needs the ``if __name__ == "__main__":`` guard, see
:mod:`multiprocessing`).  The parent never waits idle: while
the task it needs next is running elsewhere it takes the last task that no
worker has started, and it does a task itself when no worker has taken it
yet (so a pool still starting up costs nothing).
"""

from __future__ import annotations

import pickle
import time
from collections import deque
from typing import Any, Callable, Iterable, Iterator, Sequence

from elucidate.errors import InputError, LimitReached

__all__ = ["SolvePool", "PARTS_PER_WORKER", "ASSIGN_CHUNK"]

#: A spec's search is cut into this many parts per worker (parts differ
#: widely in cost, so more parts than workers keep every worker busy).
PARTS_PER_WORKER = 8
#: Structures per assignment task, and tasks kept in flight per worker.
ASSIGN_CHUNK = 4
ASSIGN_AHEAD = 3


def _quiet_child(parent: int) -> None:
    """Pool initializer: Ctrl-C is the parent's to handle (it stops the
    workers; a worker would otherwise print a traceback of its own), and a
    worker ends within a second of a parent that died without stopping it
    (killed), so no orphan keeps computing."""
    import signal
    import threading

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    threading.Thread(target=_watch_parent, args=(parent,), daemon=True).start()


def _watch_parent(pid: int) -> None:
    import os

    ppid = os.getppid()  # the parent itself, or the forkserver
    while True:
        time.sleep(0.5)
        if os.getppid() != ppid:  # reparented: the parent died (perhaps not yet reaped)
            os._exit(1)
        try:
            os.kill(pid, 0)
        except (ProcessLookupError, PermissionError):  # gone (or the pid is someone else's now)
            os._exit(1)


def _warm_child(parent: int) -> None:
    _quiet_child(parent)
    _warm()


def _warm() -> None:
    """Load the libraries and the data tables once."""
    from elucidate._ortools import load_cp_model
    from elucidate.predict import predict

    load_cp_model()
    predict("CCOC(C)=O")


def _start_method() -> str:
    """``fork`` when this process runs no other thread (a fork of a threaded
    process can deadlock), else ``forkserver`` (or ``spawn`` where neither
    exists)."""
    import multiprocessing as mp
    import threading

    methods = mp.get_all_start_methods()
    if "fork" in methods and threading.active_count() == 1:
        return "fork"
    return "forkserver" if "forkserver" in methods else "spawn"


def _tallies(spec: Any) -> list[dict]:
    """The distinct ``tally`` dicts of the spec's checks (the counters of
    structures each check turned down), in a fixed order."""
    out: list[dict] = []
    for check in spec.checks:
        tally = getattr(check, "tally", None)
        if isinstance(tally, dict) and not any(t is tally for t in out):
            out.append(tally)
    return out


def _generate_part(task: tuple) -> tuple[list[tuple[str, Any]], Any, list[dict]]:  # type: ignore[type-arg]
    """Worker: the structures of one part, each with its prediction and bound."""
    from elucidate.generate import Limits, Stats, generate
    from elucidate.solve import _prepare

    spec, part, max_structures, wall_deadline, problem, weights = task
    tallies = _tallies(spec)
    for tally in tallies:
        tally.clear()  # the pickled copy holds the parent's counts so far
    stats = Stats()
    items: list[tuple[str, Any]] = []
    left = None if wall_deadline is None else wall_deadline - time.time()
    if left is not None and left <= 0:
        stats.stopped_by = "time_limit"
        return items, stats, [dict(t) for t in tallies]
    try:
        for smi in generate(spec, limits=Limits(max_structures, left), part=part, stats=stats):
            items.append((smi, _prepare(problem, weights, smi)))
    except LimitReached:
        pass
    return items, stats, [dict(t) for t in tallies]


def _assign_chunk(task: tuple) -> list[Any]:  # type: ignore[type-arg]
    """Worker: full CP-SAT assignments of a few predictions."""
    from elucidate.score.assign import assign

    problem, weights, predictions = task
    return [assign(problem, p, weights=weights) for p in predictions]


class _Task:
    """One task of an ordered stream: run by a worker (``future``) or here."""

    __slots__ = ("args", "future", "value", "local")

    def __init__(self, args: Any, future: Any) -> None:
        self.args = args
        self.future = future
        self.value: Any = None
        self.local = False


class SolvePool:
    """The parent and ``workers - 1`` local processes for one solve (see the
    module docstring).

    Parameters
    ----------
    workers : int
        Number of processes, the parent included; at least 2.

    Raises
    ------
    InputError
        ``workers`` below 2.
    """

    def __init__(self, workers: int) -> None:
        if workers < 2:
            raise InputError(f"--workers {workers}: a pool needs at least 2 (1 runs in this process)")
        import multiprocessing as mp
        from concurrent.futures import ProcessPoolExecutor

        method = _start_method()
        ctx = mp.get_context(method)
        if method == "fork":
            _warm()  # the workers inherit the loaded libraries and tables
            initializer = _quiet_child
        else:
            initializer = _warm_child
            if method == "forkserver":
                ctx.set_forkserver_preload(["elucidate.solve", "elucidate.predict", "elucidate.score.assign"])
        self.workers = workers
        self.start_method = method
        self._planned: deque[Any] = deque()  # specs whose whole searches are under way, in order
        self._plan_stream: Any = None
        import os

        self._pool = ProcessPoolExecutor(max_workers=workers - 1, mp_context=ctx, initializer=initializer,
                                         initargs=(os.getpid(),))
        # start the processes now: they load while the parent reads the peak list
        self._pool.submit(time.sleep, 0)

    def close(self) -> None:
        """Stop the workers once their running tasks end (pending ones are dropped)."""
        self._drop_plan()
        self._pool.shutdown(wait=True, cancel_futures=True)

    def abort(self) -> None:
        """Stop the workers now (after an error or Ctrl-C in the parent)."""
        self._drop_plan()
        processes = list((getattr(self._pool, "_processes", None) or {}).values())
        self._pool.shutdown(wait=False, cancel_futures=True)
        for process in processes:
            process.terminate()
        for process in processes:
            process.join(timeout=5)

    def __enter__(self) -> "SolvePool":
        return self

    def __exit__(self, kind: Any, *exc: Any) -> None:
        if kind is None:
            self.close()
        else:
            self.abort()

    # -------------------------------------------------------------- ordering

    def _ordered(self, fn: Callable[[Any], Any], tasks: Iterable[Any], ahead: int, copy: bool) -> Iterator[Any]:
        """``fn(task)`` for each task, in order; up to ``ahead`` tasks are
        handed to the workers at a time and the parent does its share (a
        task a worker has not started).  With ``copy`` the parent runs on a
        pickled copy of the task, as a worker would.  Closing the iterator
        drops the tasks not yet started."""
        source = iter(tasks)
        queue: deque[_Task] = deque()

        def refill() -> None:
            while len(queue) < ahead:
                args = next(source, None)
                if args is None:
                    return
                queue.append(_Task(args, self._pool.submit(fn, args)))

        def run_here(task: _Task) -> None:
            task.value = fn(pickle.loads(pickle.dumps(task.args)) if copy else task.args)
            task.local = True

        try:
            refill()
            while queue:
                first = queue[0]
                if not first.local:
                    if first.future.cancel():
                        run_here(first)
                    while not first.local and not first.future.done():
                        # from the far end: the workers go on taking tasks in order, so
                        # neighbouring searches (which often share a skeleton list) tend
                        # to stay in one process
                        later = next((t for t in reversed(list(queue)[1:]) if not t.local and t.future.cancel()),
                                     None)
                        if later is None:
                            first.future.result()  # wait: every task is started
                            break
                        run_here(later)
                queue.popleft()
                value = first.value if first.local else first.future.result()
                refill()
                yield value
        finally:
            for task in queue:
                if not task.local:
                    task.future.cancel()

    # ------------------------------------------------------------ structures

    def plan(self, specs: Sequence[Any], limits: Any, problem: Any, weights: Any) -> None:
        """Start the searches of a level's specs, one task each, when there
        are enough of them to keep every process busy (fewer: each search
        is split into parts when :meth:`structures` asks for it).

        :meth:`structures` must then be called for these specs in this
        order (a spec skipped is dropped with the ones before it).
        """
        self._drop_plan()
        if len(specs) < 2 * self.workers:
            return
        wall = None if limits.time_limit_s is None else time.time() + limits.time_limit_s
        tasks = [(spec, None, limits.max_structures, wall, problem, weights) for spec in specs]
        self._planned = deque(specs)
        self._plan_stream = self._ordered(_generate_part, tasks, len(tasks), copy=True)

    def _drop_plan(self) -> None:
        if self._plan_stream is not None:
            self._plan_stream.close()
        self._plan_stream = None
        self._planned.clear()

    def _planned_result(self, spec: Any) -> Any:
        """The whole-search result of a planned spec (None: not planned)."""
        if not any(planned is spec for planned in self._planned):
            return None
        while self._planned[0] is not spec:
            self._planned.popleft()
            next(self._plan_stream)  # a spec the solver did not ask for
        self._planned.popleft()
        return next(self._plan_stream)

    def structures(
        self, spec: Any, limits: Any, stats: Any, problem: Any, weights: Any
    ) -> Iterator[tuple[str, Any]]:
        """Stream ``(smiles, (prediction, bound, reason))`` for a spec in the
        order of an unsplit :func:`elucidate.generate.generate`.

        Adds the parts' counters to ``stats`` and their turned-down
        structures to the spec's check tallies; raises
        :class:`LimitReached` after the last structure when a limit stopped
        the search (as ``generate`` does).
        """
        cap = limits.max_structures
        wall = None if limits.time_limit_s is None else time.time() + limits.time_limit_s
        whole = self._planned_result(spec)
        if whole is not None:
            nparts = 1
            parts: Any = iter([whole])
        else:
            nparts = self.workers * PARTS_PER_WORKER
            tasks = [(spec, (i, nparts), cap, wall, problem, weights) for i in range(nparts)]
            parts = self._ordered(_generate_part, tasks, nparts, copy=True)
        tallies = _tallies(spec)
        emitted = 0
        try:
            for j, (items, st, part_tallies) in enumerate(parts):
                left = None if cap is None else cap - emitted
                if left is not None and len(items) > left:
                    # the cap falls inside this part: its prefix again, here,
                    # for the single-process counters
                    st = self._prefix(spec, (j, nparts) if nparts > 1 else None, left, wall)
                    stats.add(st)
                    yield from items[: st.emitted]
                    stats.stopped_by = stats.stopped_by or st.stopped_by or "max_structures"
                    break
                for mine, theirs in zip(tallies, part_tallies):
                    for key, k in theirs.items():
                        mine[key] = mine.get(key, 0) + k
                stats.add(st)
                emitted += len(items)
                yield from items
                if st.stopped_by:
                    break
        finally:
            if hasattr(parts, "close"):
                parts.close()
        if stats.stopped_by:
            what = stats.stopped_by.replace("_", " ")
            raise LimitReached(f"stopped by {what} after {stats.emitted} structures")

    @staticmethod
    def _prefix(spec: Any, part: tuple[int, int] | None, n: int, wall: float | None) -> Any:
        from elucidate.generate import Limits, Stats, generate

        st = Stats()
        left = None if wall is None else max(wall - time.time(), 1e-3)
        try:
            for _ in generate(spec, limits=Limits(n, left), part=part, stats=st):
                pass
        except LimitReached:
            pass
        return st

    # ----------------------------------------------------------- assignments

    def fits(self, problem: Any, weights: Any, predictions: Sequence[Any]) -> Iterator[Any]:
        """The full assignment of each prediction, in order, computed a few
        chunks ahead; closing the iterator drops the work not yet started."""
        chunks = (
            (problem, weights, list(predictions[i : i + ASSIGN_CHUNK]))
            for i in range(0, len(predictions), ASSIGN_CHUNK)
        )
        stream = self._ordered(_assign_chunk, chunks, self.workers * ASSIGN_AHEAD, copy=False)
        try:
            for fits in stream:
                yield from fits
        finally:
            stream.close()
