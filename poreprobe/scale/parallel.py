"""Where the work runs: MDAnalysis backends, locally or on a dask.distributed cluster.

poreprobe does no scheduling of its own. Trajectory frames are split into blocks
by MDAnalysis's parallel analysis (``AnalysisBase.run(backend=...)``) and files of
a batch are mapped one per task; both hand their tasks to an MDAnalysis backend
object (``MDAnalysis.analysis.backends.BackendBase``), whose ``apply(func,
tasks)`` returns the results in task order.

* :class:`DaskClientBackend` maps the tasks onto a given
  ``dask.distributed.Client``: a cluster you started yourself (``dask scheduler``
  plus ``dask worker`` on other machines, a job-queue or Kubernetes cluster), or
  a ``LocalCluster``. MDAnalysis's built-in ``"dask"`` backend always starts
  local processes and takes no client, so this is the way onto a cluster.
* :func:`open_backend` turns a backend name into a ready backend for the
  command line: ``"serial"``, ``"multiprocessing"`` (a local process pool), or
  ``"dask"`` (a client of the scheduler at ``scheduler``, or else a local
  cluster of worker processes that is shut down afterwards). Each shows a
  progress bar on a terminal unless ``quiet``.
* :func:`run_blocks` runs ``func(shared, block)`` for every block on any of
  these backends (ensemble members, files of a batch).

What is shipped, and how often (why the dask path was slower than serial)
-------------------------------------------------------------------------
Every backend here ships the task function (and what it carries: for a
trajectory the analysis object with its ``Universe``; for an ensemble the atoms)
**once per worker**, not once per task: the process pool hands it, pickled
once, to each worker process when it starts (the pool initializer), and the
dask backend scatters it to every worker once (``Client.scatter(...,
broadcast=True)``) and passes the future to each task. Either way each worker
unpickles its own copy, so it opens its own trajectory file (a forked worker
that used the parent's open file would share its file offset with the
others: "XTC read error"). Tasks then send back only their results
(:class:`BlockResult` for a trajectory block, not the analysis object with
its ``Universe``). Local worker processes are forked
where the platform allows (``"fork"`` on Linux): spawned processes start a new
interpreter and import numpy, scipy, MDAnalysis and poreprobe again, seconds
per worker on a small machine, while forked ones inherit the parent's imports
(dask: ``distributed.worker.multiprocessing-method``). Tasks that share a
shipped object on one worker run one at a time (a per-process lock), so a
worker with several threads never has two tasks seek in one trajectory.
"""

from __future__ import annotations

import contextlib
import logging
import multiprocessing
import sys
import threading
from collections.abc import Callable, Iterator
from dataclasses import dataclass

from MDAnalysis.analysis.backends import BackendBase, BackendMultiprocessing, BackendSerial

from poreprobe._progress import progress
from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe.errors import InputError

BACKENDS = ("serial", "multiprocessing", "dask")
START_METHODS = ("fork", "spawn", "forkserver")


def default_start_method() -> str:
    """How local worker processes start: ``"fork"`` on Linux, else ``"spawn"``.

    Forked workers inherit the parent's imported modules (a fraction of a second
    to start); spawned ones import everything again (seconds each). macOS and
    Windows default to spawn for good reasons (system frameworks are not
    fork-safe there), so we keep their default.
    """
    ok = sys.platform.startswith("linux") and "fork" in multiprocessing.get_all_start_methods()
    return "fork" if ok else "spawn"


#: Serialises tasks that share one shipped object inside a worker process.
_SHARED_LOCK = threading.Lock()
#: What the process-pool initializer installed in a worker process.
_INSTALLED: dict = {}


@dataclass(frozen=True)
class BlockResult:
    """What a trajectory block sends back: its frames, times and results, not the analysis.

    MDAnalysis's parallel ``run`` reads only ``frames``, ``times`` and ``results``
    of what each task returns, so a block returns these three instead of the
    whole analysis object (which would carry its ``Universe`` back each time).
    """

    frames: object
    times: object
    results: object


def _call_shared(func: Callable, task):
    """Run ``func(task)`` where ``func`` is shared by the tasks of this process."""
    with _SHARED_LOCK:
        return func(task)


def _install(payload: bytes) -> None:
    # unpickled in each worker, never inherited as it is: a forked worker would share
    # the parent's open trajectory files (one file offset for all processes)
    import pickle

    _INSTALLED["func"] = pickle.loads(payload)


def _call_installed(task):
    return _INSTALLED["func"](task)


class _WithShared:
    """``block -> func(shared, block)``: the one callable a backend ships per worker."""

    def __init__(self, func: Callable, shared):
        self.func = func
        self.shared = shared

    def __call__(self, block):
        return self.func(self.shared, block)


class DaskClientBackend(BackendBase):
    """An MDAnalysis backend that runs tasks on a ``dask.distributed`` cluster.

    Parameters
    ----------
    client : dask.distributed.Client
        A connected client, e.g. ``Client("tcp://scheduler:8786")``.
    n_workers : int, optional
        Worker count MDAnalysis uses to split a run (``n_parts`` defaults to it).
        Default: the number of workers the scheduler knows now (at least 1).
    quiet : bool
        No progress bar (default). Otherwise a bar on stderr counts finished tasks.
    desc : str
        Label of the progress bar.

    Notes
    -----
    ``apply`` submits every task with ``client.map`` (``pure=False``, so equal
    tasks are not merged), waits for them and gathers the results in task
    order; a failed task raises its exception here. The function and the
    objects it carries (for a trajectory: the analysis object with its
    ``Universe``) are serialised to the workers, so files must be reachable
    under the same path on every worker.

    Examples
    --------
    >>> from dask.distributed import Client                        # doctest: +SKIP
    >>> with Client("tcp://10.0.0.5:8786") as client:              # doctest: +SKIP
    ...     ana.run(backend=DaskClientBackend(client), unsupported_backend=True)
    """

    def __init__(
        self, client, n_workers: int | None = None, *, quiet: bool = True, desc: str = "tasks"
    ):
        self.client = client
        self.quiet = quiet
        self.desc = desc
        if n_workers is None:
            n_workers = max(_count_workers(client), 1)
        super().__init__(n_workers)

    def _get_checks(self):
        from distributed import Client

        checks = super()._get_checks()
        checks[isinstance(self.client, Client)] = (
            f"client must be a dask.distributed.Client, got {type(self.client).__name__}"
        )
        return checks

    def apply(self, func: Callable, computations: list) -> list:
        """Run ``func`` on every task on the cluster; results in task order."""
        from distributed import as_completed

        computations = list(computations)
        if not computations:
            return []
        # the function and what it carries go to every worker once, not with every task
        shipped = self.client.scatter(func, broadcast=True, hash=False)
        futures = self.client.map(
            _call_shared, [shipped] * len(computations), computations, pure=False
        )
        try:
            with progress(total=len(futures), desc=self.desc, quiet=self.quiet) as bar:
                for _ in as_completed(futures):
                    bar.update(1)
            return self.client.gather(futures)
        finally:
            self.client.cancel([*futures, shipped])


class SerialBackend(BackendSerial):
    """MDAnalysis's serial backend with a progress bar over tasks (unless ``quiet``)."""

    def __init__(self, n_workers: int = 1, *, quiet: bool = True, desc: str = "tasks"):
        self.quiet = quiet
        self.desc = desc
        super().__init__(n_workers)

    def apply(self, func: Callable, computations: list) -> list:
        return [
            func(task)
            for task in progress(
                computations, total=len(computations), desc=self.desc, quiet=self.quiet
            )
        ]


class ProcessPoolBackend(BackendMultiprocessing):
    """MDAnalysis's multiprocessing backend with a progress bar over finished tasks.

    Uses ``multiprocessing.Pool.imap`` (results in task order, as ``Pool.map``).
    The task function goes to each worker once, pickled once and unpickled by
    the pool's initializer in each worker (so each worker reopens the files the
    function's objects hold: a forked worker must not share the parent's open
    trajectory file); the tasks carry only their own arguments.

    Parameters
    ----------
    n_workers : int
    quiet : bool
    desc : str
    start_method : {"fork", "spawn", "forkserver"}, optional
        How the worker processes start (default :func:`default_start_method`).
    """

    def __init__(
        self,
        n_workers: int,
        *,
        quiet: bool = True,
        desc: str = "tasks",
        start_method: str | None = None,
    ):
        self.quiet = quiet
        self.desc = desc
        self.start_method = check_choice(
            start_method or default_start_method(), "start_method", START_METHODS
        )
        super().__init__(n_workers)

    def apply(self, func: Callable, computations: list) -> list:
        computations = list(computations)
        if not computations:
            return []
        import pickle

        # workers ignore Ctrl-C: the parent stops them (Pool.__exit__ terminates the pool)
        context = multiprocessing.get_context(self.start_method)
        processes = min(self.n_workers, len(computations))
        payload = pickle.dumps(func, protocol=pickle.HIGHEST_PROTOCOL)
        with context.Pool(
            processes=processes, initializer=_start_worker, initargs=(payload,)
        ) as pool:
            return list(
                progress(
                    pool.imap(_call_installed, computations),
                    total=len(computations),
                    desc=self.desc,
                    quiet=self.quiet,
                )
            )


def _start_worker(payload: bytes) -> None:
    """Pool worker start-up: Ctrl-C left to the parent, the task function installed."""
    _ignore_sigint()
    _install(payload)


def _ignore_sigint() -> None:
    """Worker start-up: leave SIGINT (a terminal's Ctrl-C) to the parent process."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _count_workers(client) -> int:
    return len(client.scheduler_info(n_workers=-1).get("workers", {}))


@contextlib.contextmanager
def open_backend(
    name: str = "serial",
    *,
    n_workers: int | None = 1,
    scheduler: str | None = None,
    quiet: bool = True,
    desc: str = "tasks",
    connect_timeout_s: float = 10.0,
    start_method: str | None = None,
) -> Iterator[BackendBase]:
    """A ready MDAnalysis backend for ``name``; cleans up what it started.

    Parameters
    ----------
    name : {"serial", "multiprocessing", "dask"}
    n_workers : int, optional
        Local worker processes (default 1). With ``scheduler``, the number of
        workers to plan for (default: the cluster's current worker count).
    scheduler : str, optional
        Address of a running dask scheduler (``"tcp://host:8786"``); only with
        ``"dask"``. Without it, ``"dask"`` starts a ``LocalCluster`` of
        ``n_workers`` processes with one thread each, closed on exit.
    quiet : bool
        No progress bar.
    desc : str
        Label of the progress bar.
    connect_timeout_s : float
        How long to try to reach ``scheduler`` (s).
    start_method : {"fork", "spawn", "forkserver"}, optional
        How local worker processes start (multiprocessing and the local dask
        cluster); default :func:`default_start_method` (fork on Linux).

    Yields
    ------
    MDAnalysis.analysis.backends.BackendBase

    Raises
    ------
    InputError
        Unknown backend, bad worker count, ``scheduler`` without ``"dask"``, or
        a scheduler that cannot be reached.
    """
    name = check_choice(name, "backend", BACKENDS)
    if n_workers is not None:
        n_workers = check_int(n_workers, "n_workers", minimum=1)
    connect_timeout_s = check_positive(connect_timeout_s, "connect_timeout_s")
    start_method = check_choice(
        start_method or default_start_method(), "start_method", START_METHODS
    )
    if scheduler is not None and name != "dask":
        raise InputError(f"a dask scheduler address needs backend 'dask', got backend {name!r}")
    if name == "serial":
        yield SerialBackend(1, quiet=quiet, desc=desc)
        return
    if name == "multiprocessing":
        yield ProcessPoolBackend(n_workers or 1, quiet=quiet, desc=desc, start_method=start_method)
        return
    import dask
    from distributed import Client, LocalCluster

    with _quiet_logger("distributed"):
        if scheduler is None:
            with (
                dask.config.set({"distributed.worker.multiprocessing-method": start_method}),
                _local_cluster_quietly(
                    LocalCluster,
                    n_workers=n_workers or 1,
                    threads_per_worker=1,
                    processes=True,
                    dashboard_address=None,
                    scheduler_kwargs={"dashboard": False},
                    # workers' own log lines (heartbeats failing while a run is
                    # stopped) stay off the terminal; task errors reach us as exceptions
                    silence_logs=logging.CRITICAL,
                ) as cluster,
                Client(cluster) as client,
            ):
                yield DaskClientBackend(client, n_workers or 1, quiet=quiet, desc=desc)
            return
        if not isinstance(scheduler, str) or not scheduler.strip():
            raise InputError(
                f"scheduler must be an address such as tcp://host:8786, got {scheduler!r}"
            )
        try:
            client = Client(scheduler, timeout=f"{connect_timeout_s}s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(f"cannot connect to the dask scheduler at {scheduler}: {exc}") from exc
        try:
            yield DaskClientBackend(client, n_workers, quiet=quiet, desc=desc)
        finally:
            client.close()


def _local_cluster_quietly(factory, **kwargs):
    """Start a local dask cluster whose worker processes ignore Ctrl-C.

    The workers inherit SIGINT ignored (set while they are spawned), so a Ctrl-C
    on the terminal reaches only the parent, which closes the cluster; a busy
    default port is not worth a warning (the cluster has no dashboard).
    """
    import signal
    import threading
    import warnings

    _quiet_resource_tracker()
    main = threading.current_thread() is threading.main_thread()
    old = signal.signal(signal.SIGINT, signal.SIG_IGN) if main else None
    try:
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", message="Port .* is already in use")
            return factory(**kwargs)
    finally:
        if main:
            signal.signal(signal.SIGINT, old)


def _quiet_resource_tracker() -> None:
    """Start multiprocessing's resource tracker without its 'leaked semaphore' notice.

    After a stopped run the tracker unlinks what the workers left, and says so on the
    terminal; it still cleans up, but the notice is not ours to print. The tracker
    takes its warning filters from ``sys.warnoptions`` when it starts.
    """
    import sys
    from multiprocessing import resource_tracker

    saved = list(sys.warnoptions)
    sys.warnoptions.append("ignore:resource_tracker:UserWarning")
    try:
        resource_tracker.ensure_running()
    finally:
        sys.warnoptions[:] = saved


def run_blocks(
    backend: BackendBase, func: Callable, shared, blocks: list, *, desc: str | None = None
) -> list:
    """``[func(shared, block) for block in blocks]`` on a backend, ``shared`` shipped once.

    Parameters
    ----------
    backend : BackendBase
        From :func:`open_backend` (or any MDAnalysis backend object).
    func : callable
        A module-level function ``func(shared, block)`` (picklable by reference).
    shared : object
        What every block needs (e.g. the atoms of a model); sent to each worker
        once, not with every block. Must not be changed by ``func``.
    blocks : list
        One entry per task (e.g. member numbers); keep them coarse: a few per worker.
    desc : str, optional
        Progress-bar label (default: the backend's).

    Returns
    -------
    list
        One result per block, in block order.
    """
    if not callable(func):
        raise InputError(f"func must be callable, got {type(func).__name__}")
    if not hasattr(backend, "apply"):
        raise InputError(f"backend must be an MDAnalysis backend, got {type(backend).__name__}")
    blocks = list(blocks)
    old = getattr(backend, "desc", None)
    if desc is not None and old is not None:
        backend.desc = desc
    try:
        return backend.apply(_WithShared(func, shared), blocks)
    finally:
        if desc is not None and old is not None:
            backend.desc = old


def block_slices(n_items: int, n_blocks: int) -> list[range]:
    """Split ``range(n_items)`` into at most ``n_blocks`` contiguous, near-equal ranges."""
    n_items = check_int(n_items, "n_items", minimum=0)
    n_blocks = check_int(n_blocks, "n_blocks", minimum=1)
    n_blocks = max(min(n_blocks, n_items), 1)
    edges = [round(i * n_items / n_blocks) for i in range(n_blocks + 1)]
    return [range(a, b) for a, b in zip(edges[:-1], edges[1:], strict=True) if b > a]


@contextlib.contextmanager
def _quiet_logger(name: str, level: int = logging.ERROR) -> Iterator[None]:
    """Raise a logger's level for the duration (dask's own chatter on the terminal)."""
    logger = logging.getLogger(name)
    old = logger.level
    logger.setLevel(max(level, old))
    try:
        yield
    finally:
        logger.setLevel(old)
