"""Where study cases run on this machine: in this process or on a local process pool.

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

The Dask executor, with the same interface, is :class:`heatstack.studies.dask_executor.DaskExecutor`.
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

from ..errors import ExecutorError, InputError

__all__ = ["StudyExecutor", "SerialExecutor", "LocalExecutor"]

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
