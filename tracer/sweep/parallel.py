"""Independent tasks on a local process pool or a Dask cluster, behind one interface.

Sweep points, tolerance trials and the ray ranges of one large trace do not depend on
each other: the work is a map (and, for ray ranges, a sum). A :class:`Backend` maps a
top-level function over a list of picklable tasks and returns the results **in task
order**, whatever order they finished in:

* :class:`SerialBackend` -- in this process (``workers=1``, the default);
* :class:`ProcessBackend` -- a local pool of ``workers`` processes
  (:class:`concurrent.futures.ProcessPoolExecutor`, ``spawn`` start method by
  default, ``fork`` or ``forkserver`` on request);
* :class:`DaskBackend` -- the standard Dask distributed client, connected to a
  running scheduler (``address="tcp://host:8786"``) or handed an existing
  ``distributed.Client`` (e.g. of a ``LocalCluster``). Every worker needs ``tracer``
  installed (``pip install 'tracer[dask]'``). The package imports without Dask; the
  backend raises a clear error only when it is used.

Reproducibility: every random draw a task makes comes from its own seed,
:func:`task_seed` ``(seed, index)`` -- the ``index``-th child of
``numpy.random.SeedSequence(seed)`` (the same as ``SeedSequence(seed).spawn(n)[index]``),
so a result depends on the scene seed and the task number only, not on how many
workers ran the tasks or on which backend.

Progress: :class:`Progress` draws a bar on stderr when stderr is a terminal (or when
forced), and nothing otherwise.

>>> SerialBackend().map(abs, [-1, 2, -3])
[1, 2, 3]
>>> task_seed(7, 0) == task_seed(7, 0) != task_seed(7, 1)
True
"""

from __future__ import annotations

import multiprocessing
import os
import sys
import time
from collections.abc import Callable, Sequence
from typing import Any, Protocol

import numpy as np

from ..errors import TracerError

__all__ = [
    "ParallelError",
    "Backend",
    "SerialBackend",
    "ProcessBackend",
    "DaskBackend",
    "get_backend",
    "parallel_map",
    "task_seed",
    "task_rng",
    "split_range",
    "Progress",
]

START_METHODS = ("spawn", "fork", "forkserver")


class ParallelError(TracerError):
    """Bad parallel settings (worker count, scheduler address) or a missing backend."""


class Backend(Protocol):
    """What every backend provides."""

    #: Number of tasks that run at the same time.
    workers: int

    def map(self, fn: Callable[[Any], Any], tasks: Sequence, *, label: str = "",
            progress: bool | None = None) -> list:
        """``[fn(t) for t in tasks]``, in task order."""

    def close(self) -> None:
        """Release pools and connections the backend opened itself."""


# ---------------------------------------------------------------------------
# seeds
# ---------------------------------------------------------------------------


def task_seed(seed: int, index: int) -> int:
    """A 63-bit seed for task ``index`` of a run with seed ``seed``.

    The ``index``-th child of ``numpy.random.SeedSequence(seed)`` (spawn key
    ``(index,)``), reduced to one integer. Independent streams per task (O'Neill,
    "PCG: a family of simple fast space-efficient statistically good algorithms for
    random number generation", 2014, and NumPy's SeedSequence documentation).

    Parameters
    ----------
    seed : int
        The scene seed (non-negative).
    index : int
        Task number (non-negative).

    >>> ss = np.random.SeedSequence(3).spawn(2)[1]
    >>> task_seed(3, 1) == int(ss.generate_state(1, np.uint64)[0] >> np.uint64(1))
    True
    """
    ss = np.random.SeedSequence(int(seed), spawn_key=(int(index),))
    return int(ss.generate_state(1, np.uint64)[0] >> np.uint64(1))


def task_rng(seed: int, index: int) -> np.random.Generator:
    """``numpy.random.default_rng`` of the ``index``-th child of ``SeedSequence(seed)``."""
    return np.random.default_rng(np.random.SeedSequence(int(seed), spawn_key=(int(index),)))


def split_range(total: int, parts: int) -> list[tuple[int, int]]:
    """``parts`` contiguous ranges ``[start, stop)`` covering ``range(total)``, sizes within 1.

    >>> split_range(10, 3)
    [(0, 4), (4, 7), (7, 10)]
    """
    total, parts = int(total), max(1, int(parts))
    # larger parts first, as np.array_split does
    q, r = divmod(total, parts)
    edges = [0]
    for k in range(parts):
        edges.append(edges[-1] + q + (1 if k < r else 0))
    return [(edges[k], edges[k + 1]) for k in range(parts)]


# ---------------------------------------------------------------------------
# progress
# ---------------------------------------------------------------------------


class Progress:
    """A one-line progress bar on stderr (terminal only, unless ``enabled=True``).

    Parameters
    ----------
    total : int
        Number of steps.
    label : str
        Text before the bar.
    enabled : bool or None
        ``None``: only when stderr is a terminal.
    stream : file, optional
        Where to draw (default ``sys.stderr``).
    """

    def __init__(self, total: int, label: str = "", *, enabled: bool | None = None, stream=None):
        self.stream = stream if stream is not None else sys.stderr
        if enabled is None:
            enabled = bool(getattr(self.stream, "isatty", lambda: False)())
        self.enabled = bool(enabled) and total > 0
        self.total = int(total)
        self.label = label or "working"
        self.done = 0
        self._start = time.perf_counter()
        self._last = 0.0

    def update(self, steps: int = 1) -> None:
        self.done += steps
        if not self.enabled:
            return
        now = time.perf_counter()
        if now - self._last < 0.2 and self.done < self.total:
            return
        self._last = now
        frac = self.done / self.total
        bar = "#" * int(30 * frac)
        el = now - self._start
        eta = el / frac - el if frac > 0 else 0.0
        self.stream.write(f"\r{self.label} [{bar:<30}] {self.done}/{self.total} "
                          f"{el:6.1f} s (left {eta:5.0f} s)")
        if self.done >= self.total:
            self.stream.write("\n")
        self.stream.flush()


# ---------------------------------------------------------------------------
# backends
# ---------------------------------------------------------------------------


class SerialBackend:
    """Tasks one after the other in this process."""

    workers = 1

    def map(self, fn, tasks, *, label="", progress=None):
        bar = Progress(len(tasks), label, enabled=progress)
        out = []
        for t in tasks:
            out.append(fn(t))
            bar.update()
        return out

    def close(self):
        pass

    def __repr__(self):
        return "SerialBackend()"


class ProcessBackend:
    """A local pool of worker processes.

    Parameters
    ----------
    workers : int
        Number of processes (>= 1).
    start_method : "spawn", "fork" or "forkserver"
        How workers start. ``spawn`` (default) is safe everywhere; ``fork`` starts
        faster on Linux but must not be used from a process that runs threads.
    """

    def __init__(self, workers: int, *, start_method: str = "spawn"):
        if isinstance(workers, bool) or int(workers) != workers or workers < 1:
            raise ParallelError(f"workers={workers!r}: expected a positive integer")
        if start_method not in START_METHODS:
            raise ParallelError(f"start_method={start_method!r}: expected one of "
                                f"{', '.join(START_METHODS)}")
        self.workers = int(workers)
        self.start_method = start_method
        self._pool = None

    def _executor(self):
        if self._pool is None:
            from concurrent.futures import ProcessPoolExecutor

            ctx = multiprocessing.get_context(self.start_method)
            self._pool = ProcessPoolExecutor(max_workers=self.workers, mp_context=ctx,
                                             initializer=_start_worker)
        return self._pool

    def map(self, fn, tasks, *, label="", progress=None):
        from concurrent.futures import as_completed

        tasks = list(tasks)
        if not tasks:
            return []
        pool = self._executor()
        futures = {pool.submit(fn, t): i for i, t in enumerate(tasks)}
        bar = Progress(len(tasks), label, enabled=progress)
        out = [None] * len(tasks)
        from concurrent.futures.process import BrokenProcessPool

        try:
            for fut in as_completed(futures):
                out[futures[fut]] = fut.result()
                bar.update()
        except BrokenProcessPool as exc:
            self.close()
            raise ParallelError(
                "a worker process ended abruptly (out of memory, or, with the spawn start "
                "method, a script that starts work at import: guard it with "
                "if __name__ == '__main__':)") from exc
        except KeyboardInterrupt:
            self._stop_now()
            raise
        except BaseException:
            for fut in futures:
                fut.cancel()
            raise
        return out

    def close(self):
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None

    def _stop_now(self):
        """After Ctrl-C: drop every task and end the workers at once (a task may be long).

        The pool's manager thread, finding its workers gone, fails on the cancelled tasks;
        its exceptions are silenced, and the queue feeder is not joined at exit (its reader
        is gone, so the join could block for ever: seen as a hang after Ctrl-C under load).
        """
        pool, self._pool = self._pool, None
        if pool is None:
            return
        manager = getattr(pool, "_executor_manager_thread", None)
        if manager is not None:
            _silence_thread(manager)
        for fut in list(getattr(pool, "_pending_work_items", {}).values()):
            fut.future.cancel()
        queue = getattr(pool, "_call_queue", None)
        if queue is not None:
            try:
                queue.cancel_join_thread()
            except Exception:  # noqa: BLE001 - a queue of another implementation
                pass
        for proc in list((getattr(pool, "_processes", None) or {}).values()):
            try:
                proc.terminate()
            except Exception:  # noqa: BLE001 - already ended
                pass
        pool.shutdown(wait=False, cancel_futures=True)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def __repr__(self):
        return f"ProcessBackend(workers={self.workers}, start_method={self.start_method!r})"


def _silence_thread(thread) -> None:
    """Ignore uncaught exceptions of ``thread`` (others go to the previous hook)."""
    import threading

    previous = threading.excepthook

    def hook(args):
        if args.thread is not thread:
            previous(args)

    threading.excepthook = hook


def _import_distributed():
    try:
        import distributed
    except ImportError as exc:  # optional dependency
        raise ParallelError("the Dask backend needs the optional dependency dask[distributed]: "
                            "pip install 'tracer[dask]'") from exc
    return distributed


def _start_worker():
    """Worker start-up: ignore Ctrl-C (the parent handles it: one line, exit 130; a worker
    ends after its current task, with no traceback), then load the engine's compiled
    kernels once, before any task."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)
    from ..engine.warm import warm_up

    warm_up()


class DaskBackend:
    """Tasks on a Dask distributed cluster.

    Parameters
    ----------
    address : str, optional
        Scheduler address, e.g. ``"tcp://scheduler.example:8786"``; the backend opens (and
        :meth:`close` closes) its own client.
    client : distributed.Client, optional
        An existing client instead (it stays open).
    """

    def __init__(self, address: str | None = None, *, client=None):
        if (address is None) == (client is None):
            raise ParallelError("DaskBackend: give a scheduler address or a client (one of them)")
        self._own = client is None
        if client is None:
            distributed = _import_distributed()
            try:
                client = distributed.Client(address, timeout=30)
            except (OSError, TimeoutError) as exc:
                raise ParallelError(f"cannot reach the Dask scheduler at {address!r}: {exc}") from None
        self.client = client
        self.address = address

    @property
    def workers(self) -> int:
        try:
            info = self.client.scheduler_info()
            return max(1, sum(int(w.get("nthreads", 1)) for w in info["workers"].values()))
        except Exception:  # pragma: no cover - scheduler gone
            return 1

    def map(self, fn, tasks, *, label="", progress=None):
        distributed = _import_distributed()
        tasks = list(tasks)
        if not tasks:
            return []
        futures = self.client.map(fn, tasks, pure=False)
        index = {f.key: i for i, f in enumerate(futures)}
        bar = Progress(len(tasks), label, enabled=progress)
        out = [None] * len(tasks)
        try:
            for fut in distributed.as_completed(futures):
                out[index[fut.key]] = fut.result()
                bar.update()
        except BaseException:
            self.client.cancel(futures)
            raise
        return out

    def close(self):
        if self._own and self.client is not None:
            self.client.close()
            self.client = None

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def __repr__(self):
        return f"DaskBackend({self.address or self.client!r})"


def get_backend(workers: int | None = None, scheduler: str | None = None, *, client=None,
                start_method: str = "spawn") -> Backend:
    """The backend for ``--workers N`` / ``--scheduler ADDRESS`` (or a Dask ``client``).

    ``workers`` None or 1 without a scheduler: :class:`SerialBackend`; ``workers`` 0
    means one per CPU (``os.cpu_count()``).
    """
    if client is not None or scheduler:
        if workers not in (None, 1) and workers:
            raise ParallelError("give either --workers (local processes) or --scheduler "
                                "(a Dask cluster), not both")
        return DaskBackend(scheduler, client=client) if client is None else DaskBackend(client=client)
    if workers is None:
        return SerialBackend()
    if isinstance(workers, bool) or int(workers) != workers or workers < 0:
        raise ParallelError(f"workers={workers!r}: expected a positive integer (0: one per CPU)")
    n = int(workers) or (os.cpu_count() or 1)
    return SerialBackend() if n == 1 else ProcessBackend(n, start_method=start_method)


def parallel_map(fn, tasks, *, backend: Backend | None = None, workers: int | None = None,
                 scheduler: str | None = None, label: str = "", progress: bool | None = None) -> list:
    """``[fn(t) for t in tasks]`` on ``backend`` (or one made by :func:`get_backend`).

    A backend made here is closed before returning; one passed in is left open.

    >>> parallel_map(abs, [-2, 5])
    [2, 5]
    """
    own = backend is None
    if own:
        backend = get_backend(workers, scheduler)
    try:
        return backend.map(fn, list(tasks), label=label, progress=progress)
    finally:
        if own:
            backend.close()
