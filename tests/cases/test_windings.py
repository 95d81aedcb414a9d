"""Stranded windings as engineers read them: conductor current beside ampere-turns, the
DC resistance from the winding's material, turns and fill factor, and copper loss in
the totals so that losses and terminal power reconcile.

Reference: the resistance of a uniform conductor, R = length / (sigma x section) (any
circuits text); N turns of wire filling the fraction f of a region of section A, each
of mean length 2 pi r_c, give R = N^2 2 pi r_c / (sigma f A). Poynting's theorem: the
terminals deliver the eddy losses plus the winding's copper loss.
"""

import csv
import json
import math

import pytest

from whorl.cases.cli import main

SIGMA_CU = 58e6
CASE = """\
format = 1

[case]
name = "winding"

[model]
geometry = "axisymmetric"
length_unit = "mm"

[material.cu]
conductivity = "58 MS/m"

[[region]]
name = "billet"
material = "carbon-steel"
shape = "rectangle"
corner = [0, 0]
size = [20, 10]

[[region]]
name = "coil"
material = "cu"
shape = "rectangle"
corner = [24, 0]
size = [2, 10]

[[region]]
name = "bore"
material = "air"
shape = "rectangle"
corner = [21, 0]
size = [2, 10]

[domain]
shape = "rectangle"
corner = [0, 0]
size = [30, 10]

[domain.boundary]
right = "flux-normal"
top = "flux-normal"
bottom = "flux-normal"

[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
turns = 10
current = "5 A"
{extra}

[study]
kind = "harmonic"
frequency = "1 kHz"
"""


def run_case(tmp_path, capsys, extra=""):
    path = tmp_path / "winding.toml"
    path.write_text(CASE.replace("{extra}", extra))
    code = main(["run", str(path), "--out", str(tmp_path / "out"), "-q"])
    out = capsys.readouterr().out
    assert code == 0, out
    folder = tmp_path / "out" / "winding"
    return json.loads((folder / "results.json").read_text()), folder, out


def test_dc_resistance_from_material_turns_and_fill(tmp_path, capsys):
    results, folder, out = run_case(tmp_path, capsys, "fill_factor = 0.6")
    sol = results["solutions"][0]
    r_dc = 10**2 * 2 * math.pi * 0.025 / (SIGMA_CU * 0.6 * 0.002 * 0.010)
    coil = sol["regions"]["coil"]
    # conductor current and ampere-turns, each labelled
    assert coil["current_rms_a"] == pytest.approx(5.0, rel=1e-12)
    assert abs(complex(*coil["ampere_turns_a"])) == pytest.approx(50.0, rel=1e-9)
    # the copper loss I^2 R in the winding's region and in the totals
    assert coil["winding_loss_w"] == pytest.approx(5.0**2 * r_dc, rel=1e-9)
    assert coil["loss_w"] == coil["winding_loss_w"]
    assert sol["totals"]["winding_loss_w"] == pytest.approx(5.0**2 * r_dc, rel=1e-9)
    # totals reconcile with the power at the terminals (Poynting)
    power = sum(s["power_w"] for s in sol["sources"].values())
    assert sol["totals"]["loss_w"] == pytest.approx(power, rel=1e-6)
    assert sol["totals"]["loss_w"] == pytest.approx(
        sum(r["loss_w"] for r in sol["regions"].values()), rel=1e-12)
    # the console shows terminal current and voltage, and the copper loss
    assert "source coil: I 5 A, V " in out and "winding copper loss" in out
    # regions.csv: conductor current beside ampere-turns; axisymmetric force names;
    # no row for the empty air bore or the air around; no always-zero column
    with (folder / "regions.csv").open() as fh:
        rows = list(csv.DictReader(fh))
    header = list(rows[0])
    assert "ampere_turns_rms_a" in header and "force_z_n" in header
    assert not {"force_x_n", "force_y_n", "force_r_n"} & set(header)
    assert {r["region"] for r in rows} == {"billet", "coil"}
    for col in header[2:]:
        assert any(float(r[col]) != 0 for r in rows), col
    coil_row = next(r for r in rows if r["region"] == "coil")
    assert float(coil_row["current_rms_a"]) == pytest.approx(5.0)
    assert float(coil_row["ampere_turns_rms_a"]) == pytest.approx(50.0)


def test_given_resistance_wins(tmp_path, capsys):
    results, _, _ = run_case(tmp_path, capsys, 'resistance = "0.2 ohm"')
    sol = results["solutions"][0]
    assert sol["totals"]["winding_loss_w"] == pytest.approx(5.0**2 * 0.2, rel=1e-12)


@pytest.mark.parametrize("extra, words", [
    ("fill_factor = 1.5", "at most 1"),
    ("fill_factor = 0", "> 0"),
    ('fill_factor = 0.5\nresistance = "1 ohm"', "not both"),
])
def test_bad_fill_factor(tmp_path, capsys, extra, words):
    path = tmp_path / "bad.toml"
    path.write_text(CASE.replace("{extra}", extra))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "source.coil.fill_factor" in err and words in err


def test_fill_factor_needs_a_conducting_winding(tmp_path, capsys):
    path = tmp_path / "bad.toml"
    path.write_text(CASE.replace("{extra}", "fill_factor = 0.5").replace(
        'material = "cu"', 'material = "air"'))
    assert main(["check", str(path)]) == 2
    assert "do not conduct" in capsys.readouterr().err
