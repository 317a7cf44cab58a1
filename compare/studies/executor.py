"""Where independent tasks run: this process, worker processes, or a dask cluster.

FE work always goes to processes, never threads: gmsh is not thread-safe,
and fem2d opens and closes its gmsh session inside each meshing call, so a
worker process holds at most one gmsh session at a time. Worker processes
are started with the "spawn" method (no fork of a process that may hold
BLAS threads or a gmsh session).

Results come back in task order whatever the executor, and a task's result
depends on the task alone, so the executor and the number of workers do not
change them.
"""

from __future__ import annotations

import logging
import os
import sys
import time
from dataclasses import dataclass
from typing import Any, Callable, Sequence

__all__ = ["ExecInfo", "run_tasks", "default_workers", "scheduler_address", "Progress",
           "SCHEDULER_ENV"]

log = logging.getLogger(__name__)

SCHEDULER_ENV = "DASK_SCHEDULER_ADDRESS"
"""The environment variable dask itself reads for the scheduler address."""

CONNECT_TIMEOUT = 5.0
"""Seconds to reach a dask scheduler (loopback or LAN) before giving up."""


@dataclass(frozen=True)
class ExecInfo:
    """How a batch ran: ``kind`` is "serial", "processes" or "dask"."""

    kind: str
    workers: int
    seconds: float


MIN_TASKS_FOR_PROCESSES = 4
"""Below this many tasks the default is one worker in this process.

Each worker process is a fresh interpreter that imports numpy, scipy,
scikit-fem and gmsh (about 2 s here) before its first task; a 13-point
sweep (two tasks) measured 14.4/16.9 s on one worker against 16.8/17.0 s
on two on a 2-core machine, and 6.8 against 8.3 s in an earlier run."""


def default_workers(tasks: int | None = None) -> int:
    """Workers to use for ``tasks`` tasks: one per core this process may use,
    but one (no worker processes) when there are fewer than
    MIN_TASKS_FOR_PROCESSES tasks."""
    if tasks is not None and tasks < MIN_TASKS_FOR_PROCESSES:
        return 1
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - not Linux
        return max(1, os.cpu_count() or 1)


def scheduler_address(explicit: str | None) -> str | None:
    """The dask scheduler to use: the explicit address, else $DASK_SCHEDULER_ADDRESS."""
    return explicit or os.environ.get(SCHEDULER_ENV) or None


def run_tasks(fn: Callable[[Any], Any], tasks: Sequence[Any], *, workers: int | None = None,
              scheduler: str | None = None,
              on_done: Callable[[int, int], None] | None = None) -> tuple[list, ExecInfo]:
    """Run ``fn`` on every task; results in task order.

    Parameters
    ----------
    fn : picklable top-level function
    workers : int, optional
        Worker processes; default one per core; 1 runs in this process.
    scheduler : str, optional
        dask.distributed scheduler address (else ``$DASK_SCHEDULER_ADDRESS``);
        when set, tasks go to that cluster and ``workers`` is ignored.
    on_done : callable (done, total), optional
        Progress callback, called in this process as tasks finish.
    """
    t0 = time.perf_counter()
    total = len(tasks)
    address = scheduler_address(scheduler)
    if address:
        results, n = _run_dask(fn, tasks, address, on_done)
        return results, ExecInfo("dask", n, time.perf_counter() - t0)
    n = default_workers(total) if workers is None else int(workers)
    n = max(1, min(n, total)) if total else 1
    if n == 1:
        results = []
        for i, t in enumerate(tasks):
            results.append(fn(t))
            if on_done:
                on_done(i + 1, total)
        return results, ExecInfo("serial", 1, time.perf_counter() - t0)
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor, as_completed

    results = [None] * total
    pool = ProcessPoolExecutor(max_workers=n, mp_context=mp.get_context("spawn"))
    try:
        futures = {pool.submit(_WithWarnings(fn), t): i for i, t in enumerate(tasks)}
        for done, fut in enumerate(as_completed(futures), start=1):
            results[futures[fut]], said = fut.result()
            for item in said:
                _reemit(*item)
            if on_done:
                on_done(done, total)
    except BaseException:
        # Ctrl-C or a failed task: no worker outlives the run.
        _terminate(pool)
        raise
    pool.shutdown(wait=True)
    return results, ExecInfo("processes", n, time.perf_counter() - t0)


class _WithWarnings:
    """A task run in a worker process with its warnings recorded and handed
    back (category, text, simple attributes), so the parent says them as it
    says its own: one line each, a B-H range warning once per material, not
    the worker's default two-line form with a source path."""

    def __init__(self, fn: Callable[[Any], Any]):
        self.fn = fn

    def __call__(self, task: Any) -> tuple[Any, list[tuple[type[Warning], str, dict]]]:
        import warnings

        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            out = self.fn(task)
        said = []
        for w in caught:
            attrs = {k: v for k, v in vars(w.message).items()
                     if isinstance(v, (str, int, float, bool))}
            said.append((w.category, str(w.message), attrs))
        return out, said


def _reemit(category: type[Warning], text: str, attrs: dict) -> None:
    """Warn in this process with a worker's warning (see `_WithWarnings`)."""
    w = Warning.__new__(category)
    Warning.__init__(w, text)
    w.__dict__.update(attrs)
    from ..errors import warn

    warn(w)  # at the caller's line outside magcheck


def _terminate(pool: Any) -> None:
    """Cancel the queued tasks and end the pool's worker processes now."""
    procs = list((getattr(pool, "_processes", None) or {}).values())
    pool.shutdown(wait=False, cancel_futures=True)
    for proc in procs:
        if proc.is_alive():
            proc.terminate()
    for proc in procs:
        proc.join(timeout=5)
        if proc.is_alive():
            proc.kill()
            proc.join(timeout=5)


def _probe_address(address: str) -> None:
    """Fail fast on a plain TCP scheduler address nothing listens on.

    dask's client retries a refused connection until its timeout runs out; a
    single socket connect answers at once when the port is closed. Other
    schemes (tls://, ...) and host names that do not resolve are left to dask.

    Raises
    ------
    CaseError
        When the connection is refused or times out.
    """
    import socket
    from urllib.parse import urlsplit

    from ..errors import CaseError

    text = address if "://" in address else f"tcp://{address}"
    try:
        parts = urlsplit(text)
        host, port = parts.hostname, parts.port
    except ValueError:
        return
    if parts.scheme != "tcp" or not host or port is None:
        return
    try:
        with socket.create_connection((host, port), timeout=CONNECT_TIMEOUT):
            pass
    except socket.gaierror:
        return
    except OSError as exc:
        raise CaseError("--scheduler", address,
                        f"cannot reach the dask scheduler ({exc})") from None


def _run_dask(fn, tasks, address, on_done) -> tuple[list, int]:
    try:
        from dask.distributed import Client
    except ImportError:  # pragma: no cover - dependency of the package
        from ..errors import CaseError

        raise CaseError("--scheduler", address, "dask.distributed is not installed") from None
    from ..errors import CaseError

    _probe_address(address)
    try:
        client = Client(address, timeout=CONNECT_TIMEOUT, set_as_default=False)
    except (OSError, TimeoutError) as exc:
        raise CaseError("--scheduler", address, f"cannot reach the dask scheduler ({exc})") from None
    try:
        nworkers = len(client.scheduler_info().get("workers", {}))
        # pure=False: every task runs, even two equal ones; ordered by index below.
        futures = client.map(fn, list(tasks), pure=False)
        results = []
        for done, fut in enumerate(futures, start=1):  # in task order
            results.append(fut.result())
            if on_done:
                on_done(done, len(futures))
        return results, nworkers
    finally:
        client.close()


class Progress:
    """A progress bar on stderr, only when stderr is a terminal and only once
    the run has taken ``delay`` seconds; silent otherwise. For the CLI layer.

    Use as ``with Progress("sweep") as p: run(..., on_done=p)``.
    """

    def __init__(self, label: str, *, delay: float = 3.0, stream=None):
        self.label = label
        self.delay = delay
        self.stream = stream if stream is not None else sys.stderr
        self.bar: Any = None
        self.enabled = bool(getattr(self.stream, "isatty", lambda: False)())
        self.t0 = time.perf_counter()

    def __enter__(self) -> "Progress":
        self.t0 = time.perf_counter()
        return self

    def __call__(self, done: int, total: int) -> None:
        if not self.enabled:
            return
        if self.bar is None:
            if time.perf_counter() - self.t0 < self.delay or done >= total:
                return  # a short run stays silent
            from tqdm import tqdm

            self.bar = tqdm(total=total, desc=self.label, file=self.stream, leave=False)
        self.bar.n = done
        self.bar.refresh()

    def __exit__(self, *exc) -> None:
        if self.bar is not None:
            self.bar.close()
