"""A sweep killed with SIGKILL resumes and ends with every point done exactly once."""

from __future__ import annotations

import csv
import os
import signal
import sqlite3
import subprocess
import sys
import time

from test_sweep_points import tiny_case


def _done(store) -> int:
    if not store.exists():
        return 0
    try:
        db = sqlite3.connect(f"file:{store}?mode=ro", uri=True, timeout=1)
        try:
            return db.execute("SELECT COUNT(*) FROM points WHERE status = 'done'").fetchone()[0]
        finally:
            db.close()
    except sqlite3.OperationalError:  # tables not made yet
        return 0


def _sweep(path, *extra):
    return [sys.executable, "-m", "whorl.cases.cli", "sweep", str(path), "-q", *extra]


def test_sigkill_after_first_point_then_resume(tmp_path):
    path = tiny_case(tmp_path, 'gap = ["2 mm", "3 mm", "4 mm", "5 mm"]')
    folder = tmp_path / "results" / "tiny-sweep" / "sweep"
    store = folder / "sweep.sqlite"
    proc = subprocess.Popen(_sweep(path, "--workers", "1"), stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        end = time.monotonic() + 60
        while _done(store) < 1 and proc.poll() is None and time.monotonic() < end:
            time.sleep(0.02)
        assert proc.poll() is None, "the sweep finished before it could be killed"
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(10)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == -signal.SIGKILL
    killed_at = _done(store)
    assert 1 <= killed_at < 4

    resumed = subprocess.run(_sweep(path, "--workers", "2"), capture_output=True, text=True,
                             timeout=120)
    assert resumed.returncode == 0, resumed.stderr
    assert f"({4 - killed_at} run now" in resumed.stdout

    db = sqlite3.connect(store)
    rows = db.execute("SELECT point, status FROM points ORDER BY point").fetchall()
    runs = db.execute("SELECT outcome FROM runs ORDER BY run").fetchall()
    db.close()
    assert rows == [(1, "done"), (2, "done"), (3, "done"), (4, "done")]
    assert runs == [(None,), ("finished",)]  # the killed run never recorded an end
    with open(folder / "summary.csv", newline="") as f:
        points = [r["point"] for r in csv.DictReader(f)]
    assert points == ["1", "2", "3", "4"]
    entries = sorted(os.listdir(folder / "points"))
    assert entries == ["0001", "0002", "0003", "0004"]  # no temporary or half-written folders
    for name in entries:
        files = set(os.listdir(folder / "points" / name))
        assert {"results.json", "regions.csv", "case.toml", "run.log"} <= files
