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
"""

from __future__ import annotations

import contextlib
import logging
from collections.abc import Callable, Iterator

from MDAnalysis.analysis.backends import BackendBase, BackendMultiprocessing, BackendSerial

from poreprobe._progress import progress
from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe.errors import InputError

BACKENDS = ("serial", "multiprocessing", "dask")


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

        futures = self.client.map(func, list(computations), pure=False)
        try:
            with progress(total=len(futures), desc=self.desc, quiet=self.quiet) as bar:
                for _ in as_completed(futures):
                    bar.update(1)
            return self.client.gather(futures)
        finally:
            self.client.cancel(futures)


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
    """

    def __init__(self, n_workers: int, *, quiet: bool = True, desc: str = "tasks"):
        self.quiet = quiet
        self.desc = desc
        super().__init__(n_workers)

    def apply(self, func: Callable, computations: list) -> list:
        from multiprocessing import Pool

        # workers ignore Ctrl-C: the parent stops them (Pool.__exit__ terminates the pool)
        with Pool(processes=self.n_workers, initializer=_ignore_sigint) as pool:
            return list(
                progress(
                    pool.imap(func, computations),
                    total=len(computations),
                    desc=self.desc,
                    quiet=self.quiet,
                )
            )


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
    if scheduler is not None and name != "dask":
        raise InputError(f"a dask scheduler address needs backend 'dask', got backend {name!r}")
    if name == "serial":
        yield SerialBackend(1, quiet=quiet, desc=desc)
        return
    if name == "multiprocessing":
        yield ProcessPoolBackend(n_workers or 1, quiet=quiet, desc=desc)
        return
    from distributed import Client, LocalCluster

    with _quiet_logger("distributed"):
        if scheduler is None:
            with (
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
