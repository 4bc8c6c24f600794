"""Where independent tasks (a campaign's injections, a catalog's events, the demo's events) run: in this process,
in local processes, or on Dask (a given scheduler, or Slurm/HTCondor jobs through dask-jobqueue). The windowed
submit-and-drain loop over them is :func:`memory_infer.common.drain.drain`."""
from __future__ import annotations

import concurrent.futures
import contextlib
import os

from .errors import MemoryInferError


class InlineExecutor:
    """Runs each task at submission, in this process (one worker)."""

    def submit(self, function, task):
        future = concurrent.futures.Future()
        try:
            future.set_result(function(task))
        except BaseException as error:  # pragma: no cover - run_injection catches its own errors
            future.set_exception(error)
        return future

    @staticmethod
    def as_completed(futures):
        return iter(list(futures))

    def close(self, now: bool = False):
        pass


PR_SET_PDEATHSIG = 1  # prctl(2): the signal a process gets when the thread that created it ends


WORKER_FLAG = "MEMORY_INFER_CAMPAIGN_WORKER"  # set in each worker: Ctrl-C is the campaign's, even inside bilby


def start_worker(campaign_pid: int, setup=None) -> None:
    """A worker's start, as the command line sets up its own process: the allocator tuning, the command's own
    ``setup`` (its log levels), Ctrl-C left to the campaign, and death with the campaign."""
    from .performance import tune_allocator

    tune_allocator()
    if setup is not None:
        setup()
    os.environ[WORKER_FLAG] = "1"
    die_with(campaign_pid)


def die_with(campaign_pid: int) -> None:
    """In a worker: be killed (SIGKILL) as soon as the process that started it ends, however it ends.

    Linux's parent-death signal through ``prctl(2)`` (glibc via ctypes): the workers are started directly by the
    campaign's main thread, so a SIGKILLed campaign leaves no worker behind. A campaign already gone by the time
    this runs ends the worker at once."""
    import ctypes
    import signal
    import sys

    if sys.platform.startswith("linux"):
        try:
            ctypes.CDLL(None, use_errno=True).prctl(PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
        except (OSError, AttributeError):  # pragma: no cover - no prctl: the campaign check below remains
            pass
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the campaign's to handle, not each worker's
    if not _alive(campaign_pid):
        os._exit(1)


def _alive(pid: int) -> bool:
    """Whether ``pid`` runs (a zombie, ended but not yet reaped, counts as ended)."""
    try:
        with open(f"/proc/{pid}/stat") as handle:
            return handle.read().rsplit(")", 1)[1].split()[0] not in ("Z", "X")
    except OSError:
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            return False
        except PermissionError:
            return True
        return not os.path.isdir("/proc")


THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


@contextlib.contextmanager
def one_thread_each():
    """Processes started inside get one BLAS/OpenMP thread each, unless the caller chose a number.

    Workers are one per core. With OpenBLAS's default of one thread per core, one process evaluating the likelihood
    of configs/example_event.toml on the shared 2-core machine used 23 ms of CPU per call against 6 ms with one
    thread (its threads waiting for each other). The variables are read when a process loads its BLAS library, so
    they are set for the start of the workers only."""
    chosen = {name: os.environ.get(name) for name in THREAD_VARIABLES}
    for name, value in chosen.items():
        if value is None:
            os.environ[name] = "1"
    try:
        yield
    finally:
        for name, value in chosen.items():
            if value is None:
                os.environ.pop(name, None)


@contextlib.contextmanager
def ctrl_c_held():
    """Inside, SIGINT is blocked (held pending, not lost) in this thread, so that processes started inside inherit
    it blocked: a Ctrl-C while a worker still imports the package (before :func:`die_with` leaves Ctrl-C to the
    campaign) would otherwise end each worker with a long traceback of its import. On leaving, a Ctrl-C that
    came meanwhile reaches this process as usual."""
    import signal

    if not hasattr(signal, "pthread_sigmask"):  # pragma: no cover - not POSIX
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


class ProcessExecutor:
    """Local worker processes, each a fresh interpreter ("spawn"), started from the campaign's main thread: they
    inherit no pipes or locks from this threaded process (a forked worker could block for ever on a lock held by
    a thread that does not exist in it, or on a pipe a forked sibling keeps open), and each dies with the
    campaign (:func:`die_with`). Each worker imports the package once (a few seconds), then runs many injections.
    A forkserver would not do: every worker it starts holds the server's own keep-alive pipe, so the server
    outlives a killed campaign and the workers' parent-death signal never comes."""

    def __init__(self, workers: int, setup=None):
        """``setup``: a module-level function each worker runs first (the command's log levels)."""
        import multiprocessing

        context = multiprocessing.get_context("spawn")
        self.pool = concurrent.futures.ProcessPoolExecutor(max_workers=workers, mp_context=context,
                                                           initializer=start_worker, initargs=(os.getpid(), setup))
        with one_thread_each(), ctrl_c_held():  # every worker started now (one per submission while none is idle)
            for _ in range(workers):
                self.pool.submit(int)

    def submit(self, function, task):
        return self.pool.submit(function, task)

    @staticmethod
    def as_completed(futures):
        return concurrent.futures.as_completed(futures)

    def close(self, now: bool = False):
        """Wait for running injections (they are stored), or with ``now`` (an interrupted campaign) end them."""
        if now:  # SIGKILL: a worker's unfinished injection is simply run again when the campaign resumes
            for process in list((self.pool._processes or {}).values()):
                process.kill()
        self.pool.shutdown(wait=not now, cancel_futures=True)


class DaskExecutor:
    """A ``dask.distributed`` client: a given scheduler, or a dask-jobqueue Slurm/HTCondor cluster."""

    def __init__(self, client, cluster=None):
        self.client, self.cluster = client, cluster

    @classmethod
    def from_settings(cls, section, address: str | None = None, log_folder: str | None = None, setup=None):
        """Connect to ``address``, or start ``section.jobs`` batch jobs of one Dask worker each (``section``:
        :class:`memory_infer.inputs.settings.ClusterSettings`); every worker runs ``setup`` (a module-level
        function: the command's log levels) when it starts.

        Job logs go to ``section.job_logs`` or else ``log_folder`` (the batch system's default otherwise).
        """
        from dask.distributed import Client

        if address or section.kind == "address":
            target = address or section.scheduler_address
            if not target:
                raise MemoryInferError("a Dask cluster of kind 'address' needs 'scheduler_address'")
            return cls._started(Client(target), None, setup)
        import dask_jobqueue

        kind = {"slurm": dask_jobqueue.SLURMCluster, "htcondor": dask_jobqueue.HTCondorCluster}[section.kind]
        options = dict(cores=section.cores, memory=section.memory, walltime=section.walltime,
                       job_name="memory-infer")
        logs = section.job_logs or log_folder
        if logs:
            os.makedirs(logs, exist_ok=True)
            options["log_directory"] = logs
        if section.queue and section.kind == "slurm":
            options["queue"] = section.queue
        if section.kind == "htcondor":
            options.pop("walltime")
            options["disk"] = section.memory
        cluster = kind(**options)
        cluster.scale(jobs=section.jobs)
        return cls._started(Client(cluster), cluster, setup)

    @classmethod
    def _started(cls, client, cluster, setup):
        if setup is not None:
            client.register_worker_callbacks(setup=_WorkerStart(setup))
        return cls(client, cluster)

    def submit(self, function, task):
        return self.client.submit(function, task, pure=False)

    @staticmethod
    def as_completed(futures):
        from dask.distributed import as_completed

        return as_completed(futures)

    def close(self, now: bool = False):
        self.client.close()
        if self.cluster is not None:
            self.cluster.close()


class _WorkerStart:
    """A Dask worker-setup callback (called with the worker) that runs a module-level function without it."""

    def __init__(self, function):
        self.function = function

    def __call__(self, dask_worker=None):
        self.function()
