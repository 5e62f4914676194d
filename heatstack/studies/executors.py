"""Where study cases run: in this process, on a local process pool, or on a Dask cluster.

Every executor has one interface: :meth:`StudyExecutor.start`, :meth:`~StudyExecutor.submit`
(one call, returns a future), :meth:`~StudyExecutor.as_completed` (futures in the order
they finish), :meth:`~StudyExecutor.map_unordered` (results as they complete) and
:meth:`~StudyExecutor.close`; executors are context managers. The function and its
argument must be picklable (a module-level function).

* :class:`SerialExecutor` runs each call in this process when its result is asked for
  (debugging, tiny studies, tests).
* :class:`LocalExecutor` is a :class:`concurrent.futures.ProcessPoolExecutor` (the
  ``forkserver`` start method where available, so that a parent holding threads is safe
  to start workers from).
* :class:`DaskExecutor` submits to a ``dask.distributed`` scheduler; an address that
  cannot be reached within ``timeout`` raises :class:`~heatstack.errors.InputError`. A
  cluster that fails under a running study (no worker left for ``timeout`` seconds, the
  scheduler gone, a case that killed its worker each time it was tried) stops the study
  with :class:`~heatstack.errors.ExecutorError`; the cases already finished stay in the
  store and a rerun resumes.
"""

from __future__ import annotations

import concurrent.futures as cf
import logging
import multiprocessing
import os
import threading
import time
from collections.abc import Callable, Iterable, Iterator
from typing import Any

from ..errors import ExecutorError, HeatstackError, InputError

__all__ = ["StudyExecutor", "SerialExecutor", "LocalExecutor", "DaskExecutor", "ExecutorError"]

log = logging.getLogger(__name__)


class StudyExecutor:
    """The interface every executor offers.

    Attributes
    ----------
    workers : int
        Number of calls that can run at once (known after :meth:`start`).
    """

    workers: int = 1

    def start(self) -> StudyExecutor:
        """Acquire the workers (idempotent).

        Returns
        -------
        StudyExecutor
            ``self``.
        """
        return self

    def close(self) -> None:
        """Release the workers; calls not yet started are cancelled."""

    def submit(self, fn: Callable[[Any], Any], arg: Any) -> Any:
        """Schedule ``fn(arg)``.

        Parameters
        ----------
        fn : callable
            A picklable function of one argument.
        arg : object
            Its argument.

        Returns
        -------
        future
            A future of the call.
        """
        raise NotImplementedError

    def as_completed(self, futures: list[Any]) -> Iterator[Any]:
        """Yield ``futures`` as they finish.

        Parameters
        ----------
        futures : list of future
            Futures from :meth:`submit`.

        Yields
        ------
        future
            Each finished future.
        """
        raise NotImplementedError

    def result(self, future: Any) -> Any:
        """The value of a finished future (re-raising the call's exception).

        Parameters
        ----------
        future : future
            A future from :meth:`submit`.

        Returns
        -------
        object
            The call's return value.
        """
        return future.result()

    def cancel(self, futures: list[Any]) -> None:
        """Cancel futures that have not finished.

        Parameters
        ----------
        futures : list of future
            Futures from :meth:`submit`.
        """
        for future in futures:
            future.cancel()

    def map_unordered(self, fn: Callable[[Any], Any], args: Iterable[Any]) -> Iterator[Any]:
        """Run ``fn`` on every argument; yield the results as they complete.

        Parameters
        ----------
        fn : callable
            A picklable function of one argument.
        args : iterable
            The arguments.

        Yields
        ------
        object
            Each call's return value, in completion order.

        Raises
        ------
        ExecutorError
            If the executor fails (not if ``fn`` raises: that exception is re-raised).
        """
        self.start()
        futures = [self.submit(fn, arg) for arg in args]
        try:
            for future in self.as_completed(futures):
                yield self.result(future)
        finally:
            self.cancel(futures)

    def __enter__(self) -> StudyExecutor:
        return self.start()

    def __exit__(self, *exc: object) -> None:
        self.close()

    def describe(self) -> str:
        """A short text naming the executor and its workers.

        Returns
        -------
        str
            E.g. ``"LocalExecutor(workers=2)"``.
        """
        return f"{type(self).__name__}(workers={self.workers})"


class _Deferred:
    """A future of :class:`SerialExecutor`: the call runs when its result is asked for."""

    def __init__(self, fn: Callable[[Any], Any], arg: Any):
        self.fn, self.arg, self.cancelled = fn, arg, False

    def result(self) -> Any:
        return self.fn(self.arg)

    def cancel(self) -> bool:
        self.cancelled = True
        return True


class SerialExecutor(StudyExecutor):
    """Runs every call in this process, one after the other (no parallelism)."""

    workers = 1

    def submit(self, fn: Callable[[Any], Any], arg: Any) -> _Deferred:
        """Defer ``fn(arg)``: the call runs when its result is asked for.

        Parameters
        ----------
        fn : callable
            A function of one argument.
        arg : object
            Its argument.

        Returns
        -------
        future
            The deferred call.
        """
        return _Deferred(fn, arg)

    def as_completed(self, futures: list[_Deferred]) -> Iterator[_Deferred]:
        """Yield the futures not cancelled, in submission order.

        Parameters
        ----------
        futures : list of future
            Deferred calls from :meth:`submit`.

        Yields
        ------
        future
            Each deferred call not cancelled.
        """
        for future in futures:
            if not future.cancelled:
                yield future


def _default_context() -> multiprocessing.context.BaseContext:
    methods = multiprocessing.get_all_start_methods()
    if "forkserver" in methods:
        context = multiprocessing.get_context("forkserver")
        # workers fork from a server that has imported heatstack once
        context.set_forkserver_preload(["heatstack.studies.runner"])
        return context
    return multiprocessing.get_context("spawn")


def _watch_study_process(study_pid: int, interval: float = 2.0) -> None:
    """Worker initializer: end this worker when the study process is gone.

    A study killed outright (SIGKILL) cannot shut its pool down; its workers would
    otherwise live on. A daemon thread polls the study's pid and exits the worker.
    """

    def watch() -> None:
        while True:
            time.sleep(interval)
            try:
                os.kill(study_pid, 0)
            except ProcessLookupError:
                os._exit(1)
            except PermissionError:  # the pid now belongs to another user's process
                os._exit(1)

    threading.Thread(target=watch, name="heatstack-study-watch", daemon=True).start()


class LocalExecutor(StudyExecutor):
    """A pool of worker processes on this machine.

    Parameters
    ----------
    workers : int, optional
        Number of processes; ``os.cpu_count()`` by default.
    start_method : {"forkserver", "spawn", "fork"}, optional
        How workers are started; ``forkserver`` where available, else ``spawn``.

    Notes
    -----
    As with any process pool, a script that starts a study must guard its top level
    with ``if __name__ == "__main__":`` (workers import the main module).
    """

    def __init__(self, workers: int | None = None, start_method: str | None = None):
        count = (os.cpu_count() or 1) if workers is None else workers
        if isinstance(count, bool) or not isinstance(count, int) or count < 1:
            raise InputError(f"executor workers: expected a whole number >= 1, got {workers!r}")
        if start_method is not None and start_method not in multiprocessing.get_all_start_methods():
            raise InputError(
                f"executor start_method: {start_method!r} is not available here "
                f"(one of {', '.join(multiprocessing.get_all_start_methods())})"
            )
        self.workers = count
        self.start_method = start_method
        self._pool: cf.ProcessPoolExecutor | None = None

    def start(self) -> LocalExecutor:
        """Start the process pool if it is not running (idempotent).

        Returns
        -------
        LocalExecutor
            ``self``.
        """
        if self._pool is None:
            context = (
                _default_context() if self.start_method is None else multiprocessing.get_context(self.start_method)
            )
            self._pool = cf.ProcessPoolExecutor(
                max_workers=self.workers,
                mp_context=context,
                initializer=_watch_study_process,
                initargs=(os.getpid(),),
            )
            log.debug("started a pool of %d worker processes (%s)", self.workers, context.get_start_method())
        return self

    def close(self) -> None:
        """Shut the pool down, cancelling calls not yet started, and wait for it."""
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None

    def submit(self, fn: Callable[[Any], Any], arg: Any) -> cf.Future:
        """Schedule ``fn(arg)`` on the pool, starting it if needed.

        Parameters
        ----------
        fn : callable
            A picklable function of one argument.
        arg : object
            Its (picklable) argument.

        Returns
        -------
        concurrent.futures.Future
            The future of the call.
        """
        if self._pool is None:
            self.start()
        return self._pool.submit(fn, arg)

    def as_completed(self, futures: list[cf.Future]) -> Iterator[cf.Future]:
        """Iterate over ``futures`` as they finish (:func:`concurrent.futures.as_completed`).

        Parameters
        ----------
        futures : list of concurrent.futures.Future
            Futures from :meth:`submit`.

        Returns
        -------
        iterator of concurrent.futures.Future
            The futures in completion order.
        """
        return cf.as_completed(futures)

    def result(self, future: cf.Future) -> Any:
        """The value of a finished future (re-raising the call's exception).

        Parameters
        ----------
        future : concurrent.futures.Future
            A future from :meth:`submit`.

        Returns
        -------
        object
            The call's return value.

        Raises
        ------
        ExecutorError
            If a worker process died.
        """
        try:
            return future.result()
        except cf.process.BrokenProcessPool as exc:
            raise ExecutorError(
                f"a worker process died ({exc}); finished cases are kept, run again to resume"
            ) from None


class DaskExecutor(StudyExecutor):
    """Cases submitted to a ``dask.distributed`` scheduler.

    Parameters
    ----------
    address : str or distributed.Client or distributed.LocalCluster
        Scheduler address (``"tcp://10.0.0.5:8786"``), a cluster object, or a connected
        client (which :meth:`close` then leaves open).
    timeout : float
        Seconds to wait for the scheduler before giving up, and, during a study, the longest
        time without any worker (or for the scheduler to come back) before the study stops [s].
    client_options : mapping, optional
        Further keyword arguments of ``distributed.Client`` (e.g. ``security`` for a
        ``tls://`` address).

    Notes
    -----
    Workers must be able to import heatstack. Each worker process keeps its own cache
    of meshed models, so cases that share an assembly reuse one model per worker.

    Faults under a running study end it with :class:`ExecutorError` within ``timeout``
    seconds (plus one poll of the worker count, :data:`WORKER_POLL` [s]): when no worker
    is left, when the scheduler is gone (the client then cancels every future), and when
    one case killed a worker each time it was tried (dask's ``KilledWorker``, after
    ``distributed.scheduler.allowed-failures`` tries). The message names what happened
    and says to run the same command again to resume: finished cases are in the store.
    """

    #: Seconds between two looks at the cluster's worker count while waiting for results.
    WORKER_POLL = 1.0

    def __init__(self, address: Any, timeout: float = 10.0, client_options: dict | None = None):
        if isinstance(timeout, bool) or not isinstance(timeout, int | float) or not timeout > 0:
            raise InputError(f"executor timeout: expected a number of seconds > 0, got {timeout!r}")
        self.address, self.timeout = address, float(timeout)
        self.client_options = dict(client_options or {})
        self._client: Any = None
        self._owned = False

    def start(self) -> DaskExecutor:
        """Connect to the Dask scheduler (or adopt the given client); idempotent.

        Returns
        -------
        DaskExecutor
            ``self``, with ``workers`` the cluster's thread count.

        Raises
        ------
        InputError
            If dask.distributed is not installed, or the scheduler cannot be reached, is not a
            scheduler address, or cannot be connected to as configured.
        """
        if self._client is not None:
            return self
        try:
            import distributed
        except ImportError:
            raise InputError(
                "DaskExecutor needs dask.distributed, an optional dependency (pip install 'dask[distributed]')"
            ) from None
        if isinstance(self.address, distributed.Client):
            self._client, self._owned = self.address, False
        else:
            try:
                self._client = distributed.Client(
                    self.address, timeout=self.timeout, set_as_default=False, **self.client_options
                )
            except (OSError, TimeoutError) as exc:
                raise InputError(
                    f"executor address: the Dask scheduler {self._name()} cannot be reached within "
                    f"{self.timeout:g} s ({type(exc).__name__}: {exc})"
                ) from None
            except ValueError as exc:
                raise InputError(f"executor address: {self._name()} is not a scheduler address ({exc})") from None
            except TypeError as exc:  # e.g. tls:// without a security configuration
                raise InputError(
                    f"executor address: cannot connect to {self._name()} as configured "
                    f"({exc}); pass client_options such as security="
                ) from None
            self._owned = True
        self.workers = max(1, sum(self._client.nthreads().values()))
        log.debug("connected to the Dask scheduler %s (%d worker threads)", self._name(), self.workers)
        return self

    def _name(self) -> str:
        return repr(getattr(self.address, "scheduler_address", self.address))

    @property
    def client(self) -> Any:
        """The connected ``distributed.Client`` (after :meth:`start`)."""
        return self._client

    def close(self) -> None:
        """Close the client if this executor opened it (an adopted client stays open)."""
        if self._client is not None and self._owned:
            self._client.close()
        self._client = None

    def submit(self, fn: Callable[[Any], Any], arg: Any) -> Any:
        """Schedule ``fn(arg)`` on the cluster (impure; keyed by ``arg.key`` when it has one).

        Parameters
        ----------
        fn : callable
            A picklable function of one argument.
        arg : object
            Its (picklable) argument.

        Returns
        -------
        distributed.Future
            The future of the call.
        """
        if self._client is None:
            self.start()
        key = getattr(arg, "key", None)
        return self._client.submit(fn, arg, pure=False, key=key)

    def as_completed(self, futures: list[Any]) -> Iterator[Any]:
        """Iterate over ``futures`` as they finish (:func:`distributed.as_completed`).

        Parameters
        ----------
        futures : list of distributed.Future
            Futures from :meth:`submit`.

        Returns
        -------
        iterator of distributed.Future
            The futures in completion order.
        """
        import distributed

        return iter(distributed.as_completed(futures, loop=self._client.loop))

    def result(self, future: Any, watch: _ClusterWatch | None = None) -> Any:
        """The value of a finished future (re-raising the call's exception).

        Parameters
        ----------
        future : distributed.Future
            A future from :meth:`submit`.
        watch : _ClusterWatch, optional
            The study's watch, for the counts the error message gives.

        Returns
        -------
        object
            The call's return value.

        Raises
        ------
        ExecutorError
            If the cluster fails: the scheduler gone (the future cancelled), a call that
            killed its worker each time, a lost connection (a heatstack error of the call is
            re-raised as it is).
        """
        import concurrent.futures as futures_module

        from distributed import KilledWorker

        counts = watch.counts() if watch is not None else ""
        try:
            return future.result()
        except HeatstackError:
            raise
        except KilledWorker as exc:
            raise ExecutorError(
                f"the Dask study stopped: {_case_name(future.key)} killed its worker each time it was tried "
                f"({str(exc)[:120]}){counts}; fix the workers' memory or that case, then run the same command "
                "again to resume"
            ) from None
        except futures_module.CancelledError:
            raise ExecutorError(
                f"the Dask study stopped: the scheduler {self._name()} is gone (the client lost it and "
                f"cancelled the cases){counts}; start the scheduler and workers, then run the same command "
                "again to resume"
            ) from None
        except (OSError, TimeoutError) as exc:
            raise ExecutorError(
                f"the Dask study stopped: the cluster failed ({type(exc).__name__}: {str(exc)[:120]}){counts}; "
                "run the same command again to resume"
            ) from None

    def cancel(self, futures: list[Any]) -> None:
        """Cancel the futures not yet done.

        Parameters
        ----------
        futures : list of distributed.Future
            Futures from :meth:`submit`.
        """
        if self._client is not None and futures and self._client.status == "running":
            pending = [f for f in futures if not f.done()]
            if pending:
                try:
                    self._client.cancel(pending)
                except (OSError, TimeoutError, RuntimeError):  # the cluster is going away already
                    log.debug("could not cancel %d Dask futures", len(pending))

    def map_unordered(self, fn: Callable[[Any], Any], args: Iterable[Any]) -> Iterator[Any]:
        """Run ``fn`` on every argument on the cluster; yield the results as they complete.

        While waiting it watches the cluster: no worker for ``timeout`` seconds, or the
        scheduler gone, stops the iteration with :class:`ExecutorError`.

        Parameters
        ----------
        fn : callable
            A picklable function of one argument.
        args : iterable
            The arguments.

        Yields
        ------
        object
            Each call's return value, in completion order.

        Raises
        ------
        ExecutorError
            If no worker is left for ``timeout`` seconds, the scheduler is gone, or a call
            killed its worker each time it was tried (a heatstack error of a call is re-raised).
        """
        import distributed

        self.start()
        futures = [self.submit(fn, arg) for arg in args]
        waiting = distributed.as_completed(futures, loop=self._client.loop)
        watch = _ClusterWatch(self, len(futures))
        try:
            while not waiting.is_empty():
                if waiting.has_ready():
                    for future in waiting.next_batch(block=False):
                        value = self.result(future, watch)
                        watch.finished += 1
                        yield value
                    continue
                watch.check()
                time.sleep(0.05)
        finally:
            self.cancel(futures)


def _case_name(key: Any) -> str:
    """``case N`` for the task key of a study case (``heatstack-case-N-...``), else the key quoted."""
    text = str(key)
    parts = text.split("-")
    if text.startswith("heatstack-case-") and len(parts) > 2 and parts[2].isdigit():
        return f"case {parts[2]}"
    return f"the call {text[:80]!r}"


class _ClusterWatch:
    """Watches a Dask cluster while a study waits for its results: workers present, scheduler there.

    ``check`` raises :class:`ExecutorError` once no worker has been seen for the executor's
    ``timeout`` seconds, or once the client has lost the scheduler for that long.
    """

    def __init__(self, executor: DaskExecutor, submitted: int) -> None:
        self.executor, self.submitted, self.finished = executor, submitted, 0
        self.last_worker = self.last_scheduler = self.last_poll = time.monotonic()

    def counts(self) -> str:
        """``"; N cases finished in this run are in the store, M not run"``."""
        return (
            f"; {self.finished} cases finished in this run are kept in the store, "
            f"{self.submitted - self.finished} not run"
        )

    def check(self) -> None:
        """Raise ExecutorError if the cluster has had no worker, or no scheduler, for too long."""
        now = time.monotonic()
        client, timeout = self.executor.client, self.executor.timeout
        if client is None or client.status != "running":
            if now - self.last_scheduler > timeout or client is None or client.status == "closed":
                raise ExecutorError(
                    f"the Dask study stopped: the scheduler {self.executor._name()} is gone "
                    f"(client {getattr(client, 'status', 'closed')}){self.counts()}; start the scheduler and "
                    "workers, then run the same command again to resume"
                )
            return
        self.last_scheduler = now
        if now - self.last_poll < self.executor.WORKER_POLL:
            return
        self.last_poll = now
        try:
            workers = len(client.nthreads())
        except (OSError, TimeoutError, RuntimeError):  # the scheduler is going: the next check says so
            return
        if workers:
            self.last_worker = now
        elif now - self.last_worker > timeout:
            raise ExecutorError(
                f"the Dask study stopped: no worker left for {timeout:g} s on the scheduler "
                f"{self.executor._name()}{self.counts()}; start workers, then run the same command again to resume"
            )
