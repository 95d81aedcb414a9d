"""Sweeps on local worker processes: failures, resume, changed cases, mesh reuse,
summary, plots, report and --status."""

from __future__ import annotations

import csv
import json
import sqlite3

import pytest
from test_sweep_points import tiny_case

from whorl.cases.cli import main
from whorl.cases.errors import CaseError
from whorl.cases.sweep import SweepConflict, run_sweep

GRID_WITH_BAD_POINT = 'freq = ["200 Hz", "500 Hz"]\ngap = ["3 mm", "-20 mm"]'


def _summary(folder):
    with open(folder / "summary.csv", newline="") as f:
        return list(csv.DictReader(f))


def _store(folder, sql):
    db = sqlite3.connect(folder / "sweep.sqlite")
    try:
        return db.execute(sql).fetchall()
    finally:
        db.close()


@pytest.fixture(scope="module")
def bad_grid(tmp_path_factory):
    """A 2 x 2 grid whose gap = -20 mm points cannot be meshed, run once by the CLI."""
    root = tmp_path_factory.mktemp("grid")
    path = tiny_case(root, GRID_WITH_BAD_POINT)
    code = main(["sweep", str(path), "--workers", "2", "-q"])
    return path, root / "results" / "tiny-sweep" / "sweep", code


def test_failing_point_is_recorded_and_the_others_finish(bad_grid, capsys):
    path, folder, code = bad_grid
    assert code == 1
    rows = _summary(folder)
    assert [(r["point"], r["status"]) for r in rows] == [
        ("1", "done"), ("2", "failed"), ("3", "done"), ("4", "failed")]
    for r in rows:
        if r["status"] == "failed":
            assert "meshing failed" in r["error"] and "covered entirely" in r["error"]
            assert r["total_loss_w"] == ""
            assert float(r["gap"]) == pytest.approx(-0.02)
        else:
            assert r["error"] == "" and float(r["total_loss_w"]) > 0
            assert float(r["frequency_hz"]) == float(r["freq"])
    for column in ("region.billet.loss_w", "region.billet.current_rms_a",
                   "source.coil.impedance_re_ohm", "source.coil.impedance_im_ohm",
                   "source.coil.resistance_ohm", "source.coil.inductance_h",
                   "loop.pickup.emf_re_v", "loop.pickup.emf_rms_v"):
        assert column in rows[0]
    folders = sorted(p.name for p in (folder / "points").iterdir())
    assert folders == ["0001", "0003"]  # failed points leave no folder
    results = json.loads((folder / "points" / "0003" / "results.json").read_text())
    assert results["parameters"]["freq"] == 500.0
    assert results["sweep"]["point"] == 3
    assert (folder / "points" / "0003" / "case.toml").read_text() == path.read_text()


def test_help_documents_exit_status(capsys):
    assert main(["sweep", "--help"]) == 0
    text = capsys.readouterr().out
    assert "1 some points failed" in text and "--point-timeout" in text


def test_morning_view(bad_grid):
    _, folder, _ = bad_grid
    plots = sorted((folder / "plots").glob("*.png"))
    assert {p.name for p in plots} >= {"total_loss_w.png", "source.coil.inductance_h.png"}
    assert all(p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" for p in plots)
    html = (folder / "report.html").read_text()
    assert html.count("data:image/png;base64,") == len(plots)
    assert "<style>" in html and "http" not in html.replace("http-equiv", "")
    assert "confirm them by measurement" in html.lower() and "licensed practice" in html
    assert "covered entirely" in html


def test_status_and_resume_without_rerunning(bad_grid, capsys):
    path, folder, _ = bad_grid
    capsys.readouterr()
    assert main(["sweep", str(path), "--status"]) == 0
    out = capsys.readouterr().out
    # every point done or failed: the sweep is finished, not merely stopped
    assert "finished: 2 done, 2 failed, 0 running, 0 pending of 4 points" in out
    assert "point 2 failed: meshing failed" in out
    before = _store(folder, "SELECT point, finished FROM points ORDER BY point")
    outcome = run_sweep(path)
    assert outcome.ran == 0 and outcome.counts["done"] == 2
    assert _store(folder, "SELECT point, finished FROM points ORDER BY point") == before


def test_retry_failed_reruns_only_failed_points(bad_grid):
    path, folder, _ = bad_grid
    outcome = run_sweep(path, retry_failed=True, workers=1)
    assert outcome.ran == 2 and outcome.failed == 2 and outcome.counts["done"] == 2
    attempts = dict(_store(folder, "SELECT point, attempts FROM points"))
    assert attempts == {1: 1, 2: 2, 3: 1, 4: 2}


def test_changed_case_is_refused_until_restart(tmp_path):
    path = tiny_case(tmp_path, 'freq = ["200 Hz", "500 Hz"]')
    first = run_sweep(path, workers=1)
    assert first.counts["done"] == 2
    # a comment or a new sweep value is not a change of the case
    path.write_text(path.read_text().replace('"500 Hz"]', '"500 Hz", "800 Hz"]')
                    + "# note\n")
    second = run_sweep(path, workers=1)
    assert second.ran == 1 and second.counts["done"] == 3
    path.write_text(path.read_text().replace('current = "100 A"', 'current = "150 A"'))
    with pytest.raises(SweepConflict, match="--restart"):
        run_sweep(path, workers=1)
    assert main(["sweep", str(path), "-q"]) == 2
    third = run_sweep(path, workers=1, restart=True)
    assert third.ran == 3 and third.counts["done"] == 3
    with pytest.raises(CaseError, match="3 points, more than the maximum of 2"):
        run_sweep(path, max_points=2)
    # every command that reads the case takes the limit its message names
    for command in ("check", "run", "mesh", "sweep"):
        assert main([command, str(path), "--max-points", "2"]) == 2
    assert main(["check", str(path), "--max-points", "3"]) == 0


def test_frequency_only_sweep_meshes_once_and_current_sweep_uses_the_cache(tmp_path):
    path = tiny_case(tmp_path, 'freq = ["100 Hz", "300 Hz", "1 kHz"]\n'
                               'current = ["100 A", "200 A"]')
    outcome = run_sweep(path, workers=2)
    folder = outcome.folder
    assert outcome.counts["done"] == 6
    assert outcome.meshed == 1  # one sized geometry: one meshing call in the whole sweep
    rows = _store(folder, "SELECT point, meshed, mesh_source FROM points ORDER BY point")
    assert sum(r[1] for r in rows) == 1
    assert sorted(r[2] for r in rows) == ["built", "cache", "cache", "cache", "group", "group"]
    assert len(list((folder / "mesh-cache").glob("*.npz"))) == 1
    summary = _summary(folder)
    # a current twice as large: four times the loss, same mesh and impedance
    by_point = {int(r["point"]): r for r in summary}
    for a, b in ((1, 2), (3, 4), (5, 6)):
        assert float(by_point[b]["total_loss_w"]) == pytest.approx(
            4 * float(by_point[a]["total_loss_w"]), rel=1e-9)
    results = json.loads((folder / "points" / "0001" / "results.json").read_text())
    assert results["sweep"]["frequencies_solved_together_hz"] == [100.0, 300.0, 1000.0]


def test_point_timeout_records_failures(tmp_path):
    path = tiny_case(tmp_path, 'gap = ["2 mm", "4 mm"]')
    outcome = run_sweep(path, workers=2, point_timeout=0.001)
    assert outcome.counts["failed"] == 2
    rows = _summary(outcome.folder)
    assert all("timed out after 0.001 s" in r["error"] for r in rows)
