"""The local runner: tasks in separate worker processes on this machine.

Each worker is a long-lived process started with the ``spawn`` method (no
state inherited from the parent) that runs one task at a time, so the cost of
importing the solver and warming it up is paid once per worker, not per
point. A worker that crashes or is killed for exhausting memory takes down
only its own task: the runner reports that task as failed, with the exit
code, and starts a fresh worker. A task that runs past its time limit is
stopped by killing its worker, and reported as failed the same way.

Workers ignore Ctrl-C (the sweep's process stops them) and exit when the
sweep's process goes away (their pipe closes).
"""

from __future__ import annotations

import multiprocessing
import signal
import time
from multiprocessing.connection import wait as wait_any

from whorl.cases.sweep.task import execute

_READY = "__ready__"


def _serve(conn, target) -> None:
    """Worker main loop: receive a payload, send back ``target(payload)``."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    try:
        conn.send(_READY)
        while True:
            payload = conn.recv()
            if payload is None:
                return
            conn.send(target(payload))
    except (EOFError, BrokenPipeError, ConnectionResetError, KeyboardInterrupt):
        return


class _Worker:
    def __init__(self, ctx, target):
        parent, child = ctx.Pipe()
        self.conn = parent
        self.process = ctx.Process(target=_serve, args=(child, target), daemon=True,
                                   name="whorl-sweep-worker")
        self.process.start()
        child.close()
        self.ready = False
        self.tag = None
        self.deadline = None
        self.limit = None

    @property
    def idle(self) -> bool:
        return self.ready and self.tag is None

    def stop(self, kill: bool = False) -> None:
        try:
            if kill or self.tag is not None:
                self.process.kill()
            else:
                self.conn.send(None)
        except (OSError, ValueError):
            pass
        self.process.join(5)
        if self.process.is_alive():
            self.process.kill()
            self.process.join(5)
        self.conn.close()


class LocalRunner:
    """Run task payloads in ``workers`` processes.

    Parameters
    ----------
    workers : int
        Number of worker processes.
    target : callable, optional
        Module-level function run on each payload in a worker (default
        :func:`whorl.cases.sweep.task.execute`); it returns a dict with ``ok``.
    method : str
        Start method: ``spawn`` (default) or ``forkserver``.
    """

    name = "local"

    def __init__(self, workers: int, target=execute, method: str = "spawn"):
        self.size = max(1, int(workers))
        self.target = target
        self.ctx = multiprocessing.get_context(method)
        self.pool = [_Worker(self.ctx, target) for _ in range(self.size)]
        self.start_failures = 0

    def free(self) -> int:
        """How many tasks can be submitted now (idle, started workers)."""
        return sum(w.idle for w in self.pool)

    def busy(self) -> int:
        return sum(w.tag is not None for w in self.pool)

    def submit(self, tag, payload, time_limit: float | None = None) -> str:
        """Send ``payload`` to an idle worker; returns the worker's name."""
        worker = next(w for w in self.pool if w.idle)
        try:
            worker.conn.send(payload)
        except (BrokenPipeError, OSError):
            pass  # the worker died: the next wait() reports the task as failed
        worker.tag = tag
        worker.limit = time_limit
        worker.deadline = None if time_limit is None else time.monotonic() + time_limit
        return f"local:{worker.process.pid}"

    def wait(self, timeout: float) -> list[tuple[object, dict]]:
        """Outcomes that arrived within ``timeout`` seconds (maybe none).

        Returns a list of ``(tag, outcome)``; a crashed or timed-out task
        gives ``{"ok": False, "error": ...}``.
        """
        now = time.monotonic()
        deadlines = [w.deadline for w in self.pool if w.tag is not None and w.deadline]
        if deadlines:
            timeout = max(0.0, min(timeout, min(deadlines) - now))
        handles = [w.conn for w in self.pool] + [w.process.sentinel for w in self.pool]
        ready = set(wait_any(handles, timeout))
        done = []
        for i, w in enumerate(list(self.pool)):
            outcome, ended = None, False
            if w.conn in ready:
                try:
                    outcome = w.conn.recv()
                except (EOFError, OSError):
                    ended = True
                if outcome == _READY:
                    w.ready = True
                    continue
            if outcome is None:
                if ended or not w.process.is_alive():
                    outcome = _crash_outcome(w)
                    self._check_start(w)
                    self.pool[i] = _Worker(self.ctx, self.target)
                elif w.tag is not None and w.deadline and time.monotonic() >= w.deadline:
                    outcome = {"ok": False, "error": f"timed out after {w.limit:g} s "
                                                     "(--point-timeout); the point was stopped"}
                    w.stop(kill=True)
                    self.pool[i] = _Worker(self.ctx, self.target)
            if outcome is not None and w.tag is not None:
                outcome.setdefault("worker", f"local:{w.process.pid}")
                done.append((w.tag, outcome))
            if outcome is not None:
                w.tag, w.deadline = None, None
        return done

    def _check_start(self, w: _Worker) -> None:
        if not w.ready:
            self.start_failures += 1
            if self.start_failures >= 3:
                raise RuntimeError("sweep worker processes fail to start: "
                                   + _crash_outcome(w)["error"])

    def close(self) -> None:
        """Stop every worker (a running task is killed)."""
        for w in self.pool:
            w.stop()
        self.pool = []


def _crash_outcome(w: _Worker) -> dict:
    """The outcome of a task whose worker process ended."""
    w.process.join(2)
    w.conn.close()
    code = w.process.exitcode
    if code is not None and code < 0:
        try:
            how = f"killed by signal {signal.Signals(-code).name}"
        except ValueError:
            how = f"killed by signal {-code}"
        if code == -signal.SIGKILL:
            how += " (out of memory, or killed from outside)"
    else:
        how = f"exit code {code}"
    return {"ok": False, "error": f"the worker process running this point ended: {how}"}
