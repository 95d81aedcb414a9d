"""The motion demos of cases/examples/ through the command line: the checks an engineer
makes first (power balance with the mechanical power, Lenz's law, a speed sweep)."""

import csv
import json
from pathlib import Path

import numpy as np
import pytest

from whorl.cases.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "cases" / "examples"


def run(name, tmp_path, capsys, *extra):
    code = main(["run", str(EXAMPLES / f"{name}.toml"), "--out", str(tmp_path), "-q", *extra])
    out = capsys.readouterr().out
    assert code == 0
    return json.loads((tmp_path / name / "results.json").read_text()), out


def test_eddy_current_brake(tmp_path, capsys):
    """The sleeve is braked (torque against the rotation), the drive supplies exactly the
    sleeve's loss (round-off: static Galerkin solution), and terminal power + mechanical
    power = losses."""
    results, out = run("eddy-current-brake", tmp_path, capsys)
    sol = results["solutions"][0]
    sleeve = sol["regions"]["sleeve"]
    omega = results["parameters"]["speed"]
    assert omega == pytest.approx(300 * 2 * np.pi / 60)
    assert sleeve["torque_nm"] < 0
    assert sleeve["mechanical_power_w"] == pytest.approx(-sleeve["torque_nm"] * omega, rel=1e-9)
    assert sleeve["mechanical_power_w"] == pytest.approx(sleeve["loss_w"], rel=1e-6)
    balance = sol["totals"]["power_balance"]
    assert balance["applies"] and balance["relative_mismatch"] < 1e-6
    assert "moving sleeve" in out and "torque" in out


def test_eddy_current_brake_speed_sweep(tmp_path, capsys):
    """Three speeds through `whorl sweep`: the summary carries the torque, the plots
    plot it against the speed, and the braking torque rises with speed, then falls once
    the sleeve's own currents keep the field out of it (the brake's critical speed)."""
    case = (EXAMPLES / "eddy-current-brake.toml").read_text()
    start = case.index("[sweep]")
    path = tmp_path / "brake.toml"
    path.write_text(case[:start] + '[sweep]\nmode = "grid"\n'
                    'speed = ["60 rpm", "300 rpm", "2000 rpm"]\n', encoding="utf-8")
    assert main(["sweep", str(path), "--out", str(tmp_path), "--workers", "1", "-q"]) == 0
    folder = tmp_path / "eddy-current-brake" / "sweep"
    with (folder / "summary.csv").open() as fh:
        rows = list(csv.DictReader(fh))
    torque = [float(r["region.sleeve.torque_nm"]) for r in rows]
    assert [float(r["speed"]) for r in rows] == pytest.approx(
        [s * 2 * np.pi / 60 for s in (60, 300, 2000)])
    assert 0 > torque[0] > torque[1] and torque[2] > torque[1]
    assert (folder / "plots" / "region.sleeve.torque_nm.png").stat().st_size > 0


def test_strip_induction_line(tmp_path, capsys):
    """The strip at 10 m/s: Poynting with the mechanical power to round-off, the force on
    the strip along the line only (transverse flux: no net lift from the symmetric pair),
    and against the strip at rest the heating barely changes at this speed."""
    results, out = run("strip-induction-line", tmp_path, capsys)
    sol = results["solutions"][0]
    strip = sol["regions"]["strip"]
    assert sol["totals"]["power_balance"]["relative_mismatch"] < 1e-6
    assert strip["mechanical_power_w"] == pytest.approx(-strip["force_n"][0] * 10.0, rel=1e-9)
    assert abs(strip["force_n"][1]) < 1e-3 * abs(strip["force_n"][0])
    rest, _ = run("strip-induction-line", tmp_path / "rest", capsys, "--set",
                  "line_speed=0 m/s")
    loss_rest = rest["solutions"][0]["regions"]["strip"]["loss_w"]
    assert rest["solutions"][0]["regions"]["strip"]["mechanical_power_w"] == 0
    assert strip["loss_w"] == pytest.approx(loss_rest, rel=0.05)
