"""Heating studies through the case file and the command line.

Sources: Carslaw and Jaeger, Conduction of Heat in Solids, 1959 (long cylinder
with uniform heat generation and surface heat transfer; tests/heat_analytic.py).
A round wire carrying a current at a frequency far below a/delta = 0.1 has a
uniform loss density (here a/delta = 0.06), which drives the cylinder check;
an insulated wire checks the mean temperature P t / (rho c V) and the energy
balance. Bad input exits 2 naming the key path.
"""

import json

import numpy as np
import pytest
from heat_analytic import cylinder_steady, cylinder_transient

from whorl.cases.cli import main

WIRE = """\
format = 1
[case]
name = "wire"
[model]
geometry = "planar"
depth = "1 m"
[material.m]
conductivity = "10 MS/m"
thermal_conductivity = "40 W/(m*K)"
density = "7800 kg/m^3"
specific_heat = "500 J/(kg*K)"
[[region]]
name = "wire"
material = "m"
shape = "circle"
center = [0, 0]
radius = 10
mesh_size = 2
[[source]]
name = "feed"
kind = "massive"
regions = ["wire"]
current = "20 kA"
[study]
kind = "heating"
frequency = "1 Hz"
end = "{end}"
step = "{step}"
report_temperatures = ["100 degC"]
heated = ["wire"]
{surface}
[[point]]
name = "centre"
at = [0, 0]
[[point]]
name = "edge"
at = [9.999, 0]
"""

CONVECTION = """[[surface]]
regions = ["wire"]
convection = "2000 W/(m^2*K)"
ambient = "20 degC"
"""


def run(tmp_path, text, name="case.toml"):
    path = tmp_path / name
    path.write_text(text)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "-q"]) == 0
    return json.loads((tmp_path / "out" / "wire" / "results.json").read_text())


def _uniform_q(heating):
    """Loss density of the model (W/m^3): loss / (I^2 R / loss) area, depth 1 m."""
    loss = heating["regions"]["wire"]["loss_w"][0]
    area = 20e3 ** 2 / (10e6 * loss)   # R = 1/(sigma A) per metre
    return loss / area, area


def test_wire_with_convection_against_bessel_series(tmp_path):
    """Centre and edge temperature rise within 1 % of the series at 2, 8 and 30 s."""
    res = run(tmp_path, WIRE.format(end="30 s", step="0.25 s", surface=CONVECTION))
    h = res["heating"]
    q, area = _uniform_q(h)
    a = np.sqrt(area / np.pi)   # the polygon's equivalent radius
    alpha = 40.0 / (7800 * 500)
    times = np.array(h["time_s"])
    for t in (2.0, 8.0, 30.0):
        k = int(np.argmin(np.abs(times - t)))
        exact = cylinder_transient(np.array([0.0, a]), times[k], a, q, 2000.0, 40.0, alpha,
                                   293.15) - 273.15
        got = [h["points"]["centre"]["temperature_c"][k], h["points"]["edge"]["temperature_c"][k]]
        assert np.allclose(got, exact, rtol=0, atol=0.01 * (min(exact) - 20.0)), (t, got, exact)
    steady = cylinder_steady(0.0, a, q, 2000.0, 40.0, 293.15) - 273.15
    assert h["points"]["centre"]["temperature_c"][-1] < steady
    assert h["points"]["centre"]["time_to_temperature_s"]["100"] is not None
    assert abs(h["energy"]["balance"]) < 0.01


def test_insulated_wire_mean_temperature_and_energy_balance(tmp_path):
    """No surface: mean temperature 20 degC + P t/(rho c V) and balance within 0.1 %."""
    res = run(tmp_path, WIRE.format(end="5 s", step="0.5 s", surface=""))
    h = res["heating"]
    q, _ = _uniform_q(h)
    t = np.array(h["time_s"])
    mean = np.array(h["regions"]["wire"]["mean_temperature_c"])
    expected = 20.0 + q * t / (7800 * 500)
    assert np.allclose(mean, expected, rtol=1e-3)
    assert abs(h["energy"]["balance"]) < 1e-3
    assert h["energy"]["surface_loss_j"] == 0.0


BAD = [
    ("heated_not_conductor", 'heated = ["wire"]', 'heated = ["air-gap"]', "study.heated[1]"),
    ("below_absolute_zero", "[study]", "[study]\ninitial_temperature = \"-300 degC\"",
     "study.initial_temperature"),
    ("window", "[[source]]", "[[source]]\non = [\"5 s\", \"1 s\"]", "source.feed.on"),
    ("emissivity", CONVECTION, CONVECTION + "emissivity = 1.5\n", "surface[1].emissivity"),
    ("missing_thermal", "thermal_conductivity = \"40 W/(m*K)\"\n", "", "material.m"),
    ("table_below_zero", "conductivity = \"10 MS/m\"",
     "conductivity = { temperature = [\"-500 degC\", \"100 degC\"], value = [1e7, 5e6] }",
     "material.m.conductivity.temperature[1]"),
    ("surface_window", CONVECTION, CONVECTION + "from = \"3 s\"\nuntil = \"1 s\"\n",
     "surface[1].until"),
]


@pytest.mark.parametrize("name,old,new,key", BAD, ids=[b[0] for b in BAD])
def test_bad_heating_input_exits_2_with_key(tmp_path, capsys, name, old, new, key):
    text = WIRE.format(end="1 s", step="0.1 s", surface=CONVECTION)
    text = text.replace("[[point]]", "[[region]]\nname = \"air-gap\"\nmaterial = \"air\"\n"
                        "shape = \"circle\"\ncenter = [30, 0]\nradius = 2\n[[point]]", 1)
    assert old in text
    text = text.replace(old, new, 1)
    path = tmp_path / "bad.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    assert key in capsys.readouterr().err


def test_power_outside_a_heating_study_exits_2(tmp_path, capsys):
    text = WIRE.format(end="1 s", step="0.1 s", surface="").replace(
        'current = "20 kA"', 'power = "5 kW"').replace('kind = "heating"', 'kind = "harmonic"')
    text = "\n".join(line for line in text.splitlines()
                     if not line.startswith(("end =", "step =", "report_temperatures",
                                             "heated =")))
    path = tmp_path / "bad.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    assert "source.feed.power" in capsys.readouterr().err


def test_heating_sweep_summary(tmp_path):
    """A sweep of a heating study: final and peak temperatures, time to temperature and
    the hardened depth per point in summary.csv; more current, hotter wire."""
    import csv

    text = WIRE.format(end="2 s", step="0.5 s", surface=CONVECTION).replace(
        'current = "20 kA"', 'current = "amps"').replace(
        '[study]', '[parameters]\namps = "20 kA"\n[sweep]\namps = ["10 kA", "20 kA"]\n[study]', 1
    ).replace('heated = ["wire"]', 'heated = ["wire"]\nhardening_temperature = "25 degC"')
    text += '[[line]]\nname = "r"\nfrom = [10, 0]\nto = [0, 0]\nsamples = 11\n'
    path = tmp_path / "sweep.toml"
    path.write_text(text)
    assert main(["sweep", str(path), "--out", str(tmp_path / "out"), "--workers", "1",
                 "-q"]) == 0
    with open(tmp_path / "out" / "wire" / "sweep" / "summary.csv") as f:
        rows = list(csv.DictReader(f))
    assert [r["status"] for r in rows] == ["done", "done"]
    peak = [float(r["point.centre.peak_temperature_c"]) for r in rows]
    assert peak[1] > peak[0] > 20
    assert "line.r.hardened_depth_mm" in rows[0]
    assert float(rows[1]["point.centre.time_to_100_c_s"] or "inf") > 0
