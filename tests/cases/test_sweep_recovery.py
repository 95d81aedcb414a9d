"""Sweeps can always go on (issue 10, items 10-13): a damaged store is rebuilt from the
finished point folders, a damaged mesh-cache entry is a miss, the report and plots are
replaced whole, and a sweep killed at any moment (also while its report is written) and
then damaged resumes to every point exactly once with digits identical to an
uninterrupted run."""

from __future__ import annotations

import csv
import os
import shutil
import signal
import sqlite3
import subprocess
import sys
import time

import pytest
from test_sweep_points import tiny_case

from whorl.cases.cli import main
from whorl.cases.sweep import run_sweep
from whorl.cases.sweep.meshcache import MeshCache
from whorl.cases.sweep.recover import store_damage

SWEEP = 'gap = ["2 mm", "4 mm"]'
NUMBERS = ("point", "status", "gap", "frequency_hz", "total_loss_w", "loop.pickup.emf_re_v",
           "source.coil.impedance_re_ohm", "source.coil.impedance_im_ohm")


def _summary(folder):
    with open(folder / "summary.csv", newline="") as f:
        return [{k: row[k] for k in NUMBERS} for row in csv.DictReader(f)]


@pytest.fixture(scope="module")
def finished(tmp_path_factory):
    """One uninterrupted sweep of two points: its folder and summary (the reference)."""
    root = tmp_path_factory.mktemp("finished")
    path = tiny_case(root, SWEEP)
    outcome = run_sweep(path, workers=1)
    assert outcome.counts["done"] == 2
    return path, outcome.folder, _summary(outcome.folder)


def _copy(finished, tmp_path):
    path, folder, reference = finished
    target = tmp_path / "results" / "tiny-sweep" / "sweep"
    shutil.copytree(folder, target, ignore=shutil.ignore_patterns(".lock"))
    return tiny_case(tmp_path, SWEEP), target, reference


def _garbage(store):
    store.write_bytes(b"this is not a database, it was overwritten by mistake" * 100)


def _truncate(store):
    data = store.read_bytes()
    store.write_bytes(data[: len(data) // 3])


def _empty(store):
    store.write_bytes(b"")


@pytest.mark.parametrize("damage", [_garbage, _truncate, _empty])
def test_a_damaged_store_is_rebuilt_from_the_point_folders(finished, tmp_path, capsys, damage):
    path, folder, reference = _copy(finished, tmp_path)
    store = folder / "sweep.sqlite"
    for extra in ("sweep.sqlite-wal", "sweep.sqlite-shm"):
        (folder / extra).unlink(missing_ok=True)
    damage(store)
    assert store_damage(store) is not None
    assert main(["sweep", str(path), "--status"]) == 0
    out = capsys.readouterr().out
    assert "damaged" in out and "2 finished point folders" in out
    outcome = run_sweep(path, workers=1)
    assert outcome.repaired and "2 adopted" in outcome.repaired
    assert outcome.ran == 0 and outcome.counts["done"] == 2
    assert _summary(folder) == reference
    assert [p.name for p in folder.glob("sweep.sqlite.damaged-*")]  # set aside, not deleted
    assert store_damage(store) is None


def test_a_damaged_mesh_cache_entry_is_a_miss(finished, tmp_path):
    path, folder, reference = _copy(finished, tmp_path)
    entries = list((folder / "mesh-cache").glob("*.npz"))
    assert entries
    for entry in entries:
        entry.write_bytes(entry.read_bytes()[:100])
    assert all(MeshCache(folder / "mesh-cache").load(e.stem) is None for e in entries)
    for entry in entries:
        entry.write_bytes(b"")
    # point 2 to run again: its folder gone, its record pending
    shutil.rmtree(folder / "points" / "0002")
    db = sqlite3.connect(folder / "sweep.sqlite")
    with db:
        db.execute("UPDATE points SET status = 'pending' WHERE point = 2")
    db.close()
    outcome = run_sweep(path, workers=1)
    assert outcome.ran == 1 and outcome.meshed == 1 and outcome.counts["done"] == 2
    assert _summary(folder) == reference


def test_the_report_and_plots_are_replaced_whole(finished, tmp_path, monkeypatch):
    path, folder, reference = _copy(finished, tmp_path)
    before = (folder / "report.html").read_bytes()
    plots = {p.name: p.read_bytes() for p in (folder / "plots").glob("*.png")}
    assert plots

    def killed(src, dst):  # the process dies just before the rename
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "replace", killed)
    with pytest.raises(KeyboardInterrupt):
        run_sweep(path, workers=1)
    monkeypatch.undo()
    assert (folder / "report.html").read_bytes() == before
    for p in (folder / "plots").glob("*.png"):
        assert p.read_bytes() == plots[p.name]
    assert not [p for p in folder.rglob(".*tmp*")]


def _sweep(path, *extra):
    return [sys.executable, "-m", "whorl.cases.cli", "sweep", str(path), "-q", *extra]


def test_killed_while_the_report_is_written_then_damaged_resumes_exactly(finished, tmp_path):
    path, folder, reference = _copy(finished, tmp_path)
    shutil.rmtree(folder)
    proc = subprocess.Popen(_sweep(path, "--workers", "1"), stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL, start_new_session=True)
    try:  # kill as the final report is being made (plots appear), or at the end
        end = time.monotonic() + 120
        while (proc.poll() is None and not (folder / "plots").exists()
               and time.monotonic() < end):
            time.sleep(0.005)
        if proc.poll() is None:
            os.kill(proc.pid, signal.SIGKILL)
        proc.wait(10)
    finally:
        if proc.poll() is None:
            proc.kill()
    for extra in ("sweep.sqlite-wal", "sweep.sqlite-shm"):
        (folder / extra).unlink(missing_ok=True)
    _garbage(folder / "sweep.sqlite")
    for entry in (folder / "mesh-cache").glob("*.npz"):
        entry.write_bytes(b"")
    resumed = subprocess.run(_sweep(path, "--workers", "1"), capture_output=True, text=True,
                             timeout=180)
    assert resumed.returncode == 0, resumed.stderr
    assert "damaged" in resumed.stdout
    assert _summary(folder) == reference
    assert sorted(os.listdir(folder / "points")) == ["0001", "0002"]
    html = (folder / "report.html").read_text(encoding="utf-8")
    assert html.rstrip().endswith("</html>")
