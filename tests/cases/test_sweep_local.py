"""The local runner keeps going when a worker crashes, is killed or runs too long."""

from __future__ import annotations

import os
import signal
import time

from whorl.cases.sweep.local import LocalRunner


def flaky(payload):
    """A worker target (module level, so a spawned worker can import it)."""
    if payload == "exit":
        os._exit(3)
    if payload == "kill":  # as the kernel does to a process that exhausts memory
        os.kill(os.getpid(), signal.SIGKILL)
    if payload == "hang":
        time.sleep(60)
    return {"ok": True, "value": payload, "pid": os.getpid()}


def _run_all(runner, payloads, limit=None):
    queue = list(enumerate(payloads))
    out = {}
    end = time.monotonic() + 60
    while (queue or runner.busy()) and time.monotonic() < end:
        while queue and runner.free():
            tag, payload = queue.pop(0)
            runner.submit(tag, payload, limit)
        for tag, outcome in runner.wait(0.2):
            out[tag] = outcome
    return out


def test_crashes_and_timeouts_cost_only_their_own_task():
    runner = LocalRunner(2, target=flaky)
    try:
        out = _run_all(runner, ["a", "exit", "b", "kill", "hang", "c"], limit=2.0)
    finally:
        runner.close()
    assert len(out) == 6
    assert [out[i]["value"] for i in (0, 2, 5)] == ["a", "b", "c"]
    assert not out[1]["ok"] and "exit code 3" in out[1]["error"]
    assert not out[3]["ok"] and "SIGKILL" in out[3]["error"]
    assert "out of memory" in out[3]["error"]
    assert not out[4]["ok"] and "timed out after 2 s" in out[4]["error"]
    assert runner.pool == []
