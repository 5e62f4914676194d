"""Study cases on a ``dask.distributed`` cluster, with the interface of every study executor.

:class:`DaskExecutor` submits to a ``dask.distributed`` scheduler; an address that
cannot be reached within ``timeout`` raises :class:`~heatstack.errors.InputError`. A
cluster that fails under a running study (no worker left for ``timeout`` seconds, the
scheduler gone, a case that killed its worker each time it was tried) stops the study
with :class:`~heatstack.errors.ExecutorError`; the cases already finished stay in the
store and a rerun resumes. The interface is :class:`heatstack.studies.executors.StudyExecutor`.
"""

from __future__ import annotations

import logging
import time
from collections.abc import Callable, Iterable, Iterator
from typing import Any

from ..errors import ExecutorError, HeatstackError, InputError
from .executors import StudyExecutor

__all__ = ["DaskExecutor"]

log = logging.getLogger(__name__)


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
