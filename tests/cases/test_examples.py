"""Every demo case in cases/examples/ runs through the command line, and its main numbers
pass the checks a practising engineer would make first."""

import json
from pathlib import Path

import numpy as np
import pytest

from whorl.cases.cli import main

EXAMPLES = Path(__file__).resolve().parents[2] / "cases" / "examples"


def run(name, tmp_path, capsys):
    code = main(["run", str(EXAMPLES / f"{name}.toml"), "--out", str(tmp_path), "-q"])
    out = capsys.readouterr().out
    assert code == 0
    folder = tmp_path / name
    return json.loads((folder / "results.json").read_text()), folder, out


def test_shaft_end_heater(tmp_path, capsys):
    results, folder, out = run("shaft-end-heater", tmp_path, capsys)
    # The contract's top-level keys and one solution.
    for key in ("format", "case", "parameters", "mesh", "timing_s", "solver", "solutions"):
        assert key in results
    assert results["case"] == {**results["case"], "geometry": "axisymmetric", "depth_m": None}
    sol = results["solutions"][0]
    # Series turns carry the source current (Kirchhoff's current law).
    for k in range(1, 9):
        assert complex(*sol["regions"][f"turn.{k}"]["current_a"]) == pytest.approx(1500.0)
    # Poynting: the terminals deliver the losses (round-off).
    src = sol["sources"]["inductor"]
    assert src["power_w"] == pytest.approx(sol["totals"]["loss_w"], rel=1e-6)
    assert sol["totals"]["power_balance"]["relative_mismatch"] < 1e-6
    # Heating efficiency is the shaft's share of all losses.
    shaft = sol["regions"]["shaft"]["loss_w"]
    assert sol["derived"]["heating_efficiency"] == pytest.approx(shaft / sol["totals"]["loss_w"])
    # The tuning capacitor resonates with the coil: omega^2 L C = 1 in series.
    omega = 2 * np.pi * 3000.0
    z = complex(*src["impedance_ohm"])
    assert omega * z.imag * src["tuning_capacitance_series_f"] == pytest.approx(1.0)
    # The search coil between two turns sits in air: Faraday's law two ways.
    loop = sol["loops"]["search-coil"]
    assert complex(*loop["flux_from_b_wb"]) == pytest.approx(complex(*loop["flux_wb"]), rel=5e-3)
    for name in ("report.html", "fields.vtu", "flux-lines.png", "line_radial.csv", "run.log"):
        assert (folder / name).stat().st_size > 0
    assert "power factor" in out and "Caution" in out
    # The shaft saturates: effective permeability converged, no warning about its flux.
    assert sol["nonlinear"]["converged"]
    assert not any("'shaft'" in w for w in results.get("warnings", []))


def test_busbar_cover_plate(tmp_path, capsys):
    results, folder, out = run("busbar-cover-plate", tmp_path, capsys)
    sol = results["solutions"][0]
    assert results["case"]["depth_m"] == 1.0
    # Phase currents 2.5 kA at 0, -120, +120 degrees.
    for name, phase in (("phase-a", 0), ("phase-b", -120), ("phase-c", 120)):
        i = complex(*sol["sources"][name]["current_a"])
        assert abs(i) == pytest.approx(2500.0)
        assert np.degrees(np.angle(i)) == pytest.approx(phase, abs=1e-9)
    # The cover's ends are open: no net current, but eddy loss.
    cover = sol["regions"]["cover"]
    assert cover["current_rms_a"] < 1e-6 * 2500.0
    assert cover["loss_w"] > 0
    # A source's force is the sum over its conductors.
    assert sol["sources"]["phase-b"]["force_n"] == sol["regions"]["bar.2"]["force_n"]
    # The three terminal powers add up to all losses (Poynting), even with one negative.
    powers = [s["power_w"] for s in sol["sources"].values()]
    assert sum(powers) == pytest.approx(sol["totals"]["loss_w"], rel=1e-6)
    # Numbers that fit the case: three phases are no coil with a workpiece, so no heating
    # efficiency and no tuning capacitors; the cover's round-off current prints as 0; a
    # negative phase resistance gets its one-line explanation and no power factor.
    assert sol["derived"]["heating_efficiency"] is None
    assert all(s["tuning_capacitance_series_f"] is None for s in sol["sources"].values())
    assert "heating efficiency" not in out and "tuning capacitor" not in out
    cover_line = next(line for line in out.splitlines() if line.strip().startswith("cover "))
    assert cover_line.split()[-2:] == ["0", "A"]
    assert min(powers) < 0 and out.count("R < 0: this source takes in power") == 1
    assert "-0." not in "".join(line for line in out.splitlines() if "power factor" in line)


def test_tube_forming_pulse(tmp_path, capsys):
    results, folder, out = run("tube-forming-pulse", tmp_path, capsys)
    series = results["series"]
    assert "solutions" not in results
    t = np.array(series["time_s"])
    i = np.array(series["sources"]["bank"]["current_a"])
    v = np.array(series["sources"]["bank"]["capacitor_voltage_v"])
    assert v[0] == pytest.approx(4000.0)
    # The bank's lost energy is what the coil took at its terminals (0.5 % as the energy
    # bookkeeping of the time steps allows).
    balance = series["energy_balance"]
    assert 0.5 * 200e-6 * (v[0] ** 2 - v[-1] ** 2) == pytest.approx(balance["delivered_j"],
                                                                   rel=0.005)
    assert balance["relative_mismatch"] < 0.005
    # The induced current pushes the tube inwards at the current's peak.
    k = np.argmax(np.abs(i))
    assert series["regions"]["tube"]["mean_radial_pressure_pa"][k] < 0
    assert t[-1] == pytest.approx(100e-6)
    snapshots = (folder / "snapshots.pvd").read_text()
    assert snapshots.count("<DataSet") == len(list((folder / "snapshots").glob("*.vtu")))
    assert "peak current" in out


def test_billet_heater_tank(tmp_path, capsys):
    """The frequency-response demo: a few full solves serve 80 frequencies; the reduced
    answers keep Poynting's balance (Galerkin projection: x^H A x = x^H b holds for every
    reduced x); the parallel tank resonates where X / (omega |Z|^2) = C (common practice)."""
    results, folder, out = run("billet-heater-tank", tmp_path, capsys)
    sweep = results["frequency_sweep"]
    assert len(results["solutions"]) == 80
    assert len(sweep["full_solve_frequencies_hz"]) <= 6
    assert max(sweep["estimated_error"]) <= 1e-6
    for sol in results["solutions"]:
        assert sol["totals"]["power_balance"]["relative_mismatch"] < 1e-6
    res = results["resonance"]["inductor"]
    f = res["frequency_hz"]
    sols = sorted(results["solutions"], key=lambda s: s["frequency_hz"])
    k = next(i for i, s in enumerate(sols) if s["frequency_hz"] > f)
    lo, hi = sols[k - 1], sols[k]
    t = np.log(f / lo["frequency_hz"]) / np.log(hi["frequency_hz"] / lo["frequency_hz"])
    z = np.exp((1 - t) * np.log(complex(*lo["sources"]["inductor"]["impedance_ohm"]))
               + t * np.log(complex(*hi["sources"]["inductor"]["impedance_ohm"])))
    omega = 2 * np.pi * f
    assert z.imag / (omega * abs(z) ** 2) == pytest.approx(40e-6, rel=0.01)
    for name in ("frequency_response.csv", "frequency_response.png", "report.html"):
        assert (folder / name).stat().st_size > 0
    assert "resonance with the parallel tank capacitor" in out


def test_shoulder_hardening_from_a_drawing(tmp_path, capsys):
    """The demo drawn in CAD: the shipped drawing is the one drawing_demo.py makes, its
    layers become the shaft and four numbered tubes (bottom up), series turns carry the
    source current and the terminals deliver the losses."""
    import math

    from drawing_demo import make

    from whorl.meshes.dxf import Placement, read_drawing

    make(tmp_path / "fresh.dxf")
    for layer in ("SHAFT", "COIL"):
        shipped, _ = read_drawing(EXAMPLES / "shoulder-hardening.dxf", layer, Placement(1e-3))
        fresh, _ = read_drawing(tmp_path / "fresh.dxf", layer, Placement(1e-3))
        assert [s.area() for s in shipped] == pytest.approx([s.area() for s in fresh])
    results, folder, out = run("shoulder-hardening", tmp_path, capsys)
    sol = results["solutions"][0]
    tube = 8 * 8 - (4 - math.pi) * 2**2 - math.pi * 2.5**2  # mm^2, the drawn tube section
    # curved elements: the meshed section is the drawn one (corner fillets and bore)
    assert sol["regions"]["coil.1"]["area_m2"] == pytest.approx(tube * 1e-6, rel=1e-5)
    for k in range(1, 5):
        assert complex(*sol["regions"][f"coil.{k}"]["current_a"]) == pytest.approx(2000.0)
    src = sol["sources"]["inductor"]
    assert src["power_w"] == pytest.approx(sol["totals"]["loss_w"], rel=1e-6)
    assert sol["regions"]["shaft"]["loss_w"] > 0.5 * sol["totals"]["loss_w"]
    assert (folder / "loss-density.png").stat().st_size > 0


def test_dc_choke_saturation(tmp_path, capsys):
    """The saturated choke: Newton converged; the flux density in the gap stays on the
    curve's scale (a linear core of the same initial permeability would put about 7 T
    there); DC terminal power is the winding's copper loss, I^2 R (Joule)."""
    results, folder, out = run("dc-choke-saturation", tmp_path, capsys)
    sol = results["solutions"][0]
    assert sol["nonlinear"]["converged"] and sol["nonlinear"]["method"] == "Newton"
    assert results.get("warnings", []) == []
    b = [complex(*c) for c in sol["points"]["gap"]["flux_density_t"]]
    gap_b = (abs(b[0]) ** 2 + abs(b[1]) ** 2) ** 0.5
    assert 1.0 < gap_b < 2.2
    for name in ("post", "shell", "top", "bottom"):
        assert sol["regions"][name]["peak_flux_density_t"] < 2.6
    src = sol["sources"]["coil"]
    assert src["power_w"] == pytest.approx(sol["totals"]["loss_w"], rel=1e-6)
    assert "saturable steel" in out and "Newton steps" in out
