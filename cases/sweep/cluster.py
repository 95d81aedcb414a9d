"""The Dask runner: tasks on a running Dask distributed cluster.

``whorl sweep CASE --scheduler tcp://HOST:8786`` connects a client to the
scheduler and submits each task with :func:`whorl.cases.sweep.task.execute`;
outcomes come back to this process, which writes every file and the store, so
workers need whorl installed but no access to the sweep folder. At most as
many tasks are in flight as the cluster has worker threads, so a point's time
limit counts running time, not time in a queue. A task past its limit is
cancelled and recorded as failed (Dask cannot stop a running Python function:
the worker thread finishes it and the result is dropped). A worker that dies
is handled by Dask (the task is retried elsewhere up to the scheduler's
``allowed-failures``), after which the point is recorded as failed.

Dask is optional: ``pip install whorl[cluster]``.
"""

from __future__ import annotations

import itertools
import time

from whorl.cases.errors import CaseError
from whorl.cases.sweep.task import execute


def _distributed():
    try:
        import distributed
    except ImportError:
        raise CaseError("--scheduler", "sending a sweep to a Dask cluster needs Dask: "
                                       "pip install 'whorl[cluster]'") from None
    return distributed


class DaskRunner:
    """Run task payloads on the cluster whose scheduler is at ``address``.

    Parameters
    ----------
    address : str or distributed.Client
        Scheduler address (``tcp://host:8786``) or an existing client.
    connect_timeout : float
        Seconds to wait for the scheduler.
    """

    name = "dask"

    def __init__(self, address, connect_timeout: float = 30.0, target=execute):
        distributed = _distributed()
        self._wait = distributed.wait
        self.target = target
        if isinstance(address, distributed.Client):
            self.client, self.own = address, False
        else:
            try:
                self.client = distributed.Client(address, timeout=connect_timeout)
            except (OSError, TimeoutError) as exc:
                raise CaseError("--scheduler", f"cannot reach the Dask scheduler at "
                                               f"{address}: {exc}") from None
            self.own = True
        self.futures: dict = {}  # future -> (tag, deadline, limit)
        self._ids = itertools.count(1)
        self._threads, self._checked = 1, 0.0

    @property
    def size(self) -> int:
        """Worker threads of the cluster (checked at most every few seconds)."""
        if time.monotonic() - self._checked > 5:
            try:
                self._threads = max(1, sum(self.client.nthreads().values()))
            except Exception:  # scheduler briefly unreachable: keep the last count
                pass
            self._checked = time.monotonic()
        return self._threads

    def free(self) -> int:
        return max(0, self.size - len(self.futures))

    def busy(self) -> int:
        return len(self.futures)

    def submit(self, tag, payload, time_limit: float | None = None) -> str:
        future = self.client.submit(self.target, payload, pure=False,
                                    key=f"whorl-sweep-{next(self._ids)}-{tag}")
        deadline = None if time_limit is None else time.monotonic() + time_limit
        self.futures[future] = (tag, deadline, time_limit)
        return "dask"

    def wait(self, timeout: float) -> list[tuple[object, dict]]:
        """Outcomes that arrived within ``timeout`` seconds (maybe none)."""
        if not self.futures:
            time.sleep(min(timeout, 0.1))
            return []
        deadlines = [d for _, d, _ in self.futures.values() if d is not None]
        if deadlines:
            timeout = max(0.01, min(timeout, min(deadlines) - time.monotonic()))
        try:
            self._wait(list(self.futures), timeout=timeout, return_when="FIRST_COMPLETED")
        except TimeoutError:
            pass
        done = []
        now = time.monotonic()
        for future, (tag, deadline, limit) in list(self.futures.items()):
            if future.status == "finished":
                outcome = future.result()
            elif future.status in ("error", "cancelled"):
                exc = future.exception() if future.status == "error" else None
                outcome = {"ok": False, "error": f"the Dask task failed: "
                                                 f"{type(exc).__name__}: {exc}"}
            elif deadline is not None and now >= deadline:
                future.cancel()
                outcome = {"ok": False, "error": f"timed out after {limit:g} s "
                                                 "(--point-timeout); the point was cancelled"}
            else:
                continue
            del self.futures[future]
            outcome.setdefault("worker", "dask")
            done.append((tag, outcome))
        return done

    def close(self) -> None:
        for future in self.futures:
            future.cancel()
        self.futures = {}
        if self.own:
            self.client.close()
