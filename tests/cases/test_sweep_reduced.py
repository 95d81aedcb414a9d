"""A parameter sweep with a frequency range inside every point, through the reduced-order
frequency sweep: each point's record lists its own frequencies (not its group's), and each
point's reduced answers equal a full solve of that point (the check of issue 15: 1e-6
relative on the impedance and every region's loss; the reduced model of Ruhe 1984 /
Grimme 1997 certified as in Hesthaven, Rozza and Stamm 2016, ch. 3)."""

from __future__ import annotations

import json
from dataclasses import replace

import pytest
from test_sweep_points import tiny_case

from whorl.cases.cli import main
from whorl.cases.run import solve_case
from whorl.cases.sweep.points import point_case

RANGE = 'frequency = { from = "100 Hz", to = "fhi", count = 8, scale = "log" }\nreduced = "on"'
SWEEP = 'gap = ["3 mm", "8 mm"]\nfhi = ["2 kHz", "5 kHz"]'


@pytest.fixture(scope="module")
def swept(tmp_path_factory):
    root = tmp_path_factory.mktemp("reduced-sweep")
    path = tiny_case(root, SWEEP, replace={'frequency = "freq"': RANGE,
                                           'freq = "500 Hz"': 'freq = "500 Hz"\nfhi = "2 kHz"'})
    assert main(["sweep", str(path), "--workers", "1", "-q"]) == 0
    return path, root / "results" / "tiny-sweep" / "sweep"


def _point(folder, number):
    return json.loads((folder / "points" / f"{number:04d}" / "results.json").read_text())


def test_each_point_records_its_own_frequencies(swept):
    """Points 1 and 2 (gap 3 mm, up to 2 kHz and 5 kHz) were solved together as one list of
    15 frequencies; each point's frequency_sweep block has its 8 only."""
    _, folder = swept
    for number in (1, 2, 3, 4):
        rec = _point(folder, number)
        mine = [s["frequency_hz"] for s in rec["solutions"]]
        block = rec["frequency_sweep"]
        assert len(mine) == 8
        assert block["frequencies_hz"] == mine
        assert len(block["estimated_error"]) == 8
        assert max(block["estimated_error"]) <= block["tolerance"]
        assert set(block["full_solve_frequencies_hz"]) <= set(mine)
        assert len(rec["sweep"]["frequencies_solved_together_hz"]) == 15


@pytest.mark.parametrize(("number", "values"), [(2, {"gap": "3 mm", "fhi": "5 kHz"}),
                                                (3, {"gap": "8 mm", "fhi": "2 kHz"})])
def test_each_points_reduced_answers_equal_a_full_solve_of_that_point(swept, number, values):
    """At the point's lowest frequency and one between its expansion frequencies, the
    reduced impedance and region losses equal a full solve of the same point on the same
    mesh (sized, as the group's, for its highest frequency, 5 kHz) to 1e-6 relative."""
    path, folder = swept
    rec = _point(folder, number)
    block = rec["frequency_sweep"]
    reduced = [f for f in block["frequencies_hz"] if f not in block["full_solve_frequencies_hz"]]
    picks = [rec["solutions"][0]["frequency_hz"], reduced[len(reduced) // 2]]
    case = point_case(path.read_text(), path, values)
    assert rec["parameters"]["gap"] == pytest.approx(case.parameters["gap"])
    group_max = max(rec["sweep"]["frequencies_solved_together_hz"])
    case = replace(case, study=replace(case.study, frequencies=(*picks, group_max),
                                       reduced="off"))
    full, _, _ = solve_case(case)
    by_f = {s["frequency_hz"]: s for s in rec["solutions"]}
    assert "frequency_sweep" not in full
    for sol in full["solutions"][:2]:
        red = by_f[sol["frequency_hz"]]
        z_full = complex(*sol["sources"]["coil"]["impedance_ohm"])
        z_red = complex(*red["sources"]["coil"]["impedance_ohm"])
        assert abs(z_red - z_full) <= 1e-6 * abs(z_full)
        for name, region in sol["regions"].items():
            if region["loss_w"] > 1e-9 * sol["totals"]["loss_w"]:
                assert red["regions"][name]["loss_w"] == pytest.approx(region["loss_w"],
                                                                       rel=1e-6)
