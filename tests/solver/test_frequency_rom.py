"""The reduced-order frequency sweep (solver/frequency_rom.py): rational Krylov projection
(Ruhe 1984; Grimme 1997) with greedy expansion frequencies and a residual-based error
estimate (Hesthaven, Rozza, Stamm 2016, ch. 3).

Checks: the reduced answer equals a full single-frequency solve to 1e-6 relative
(impedance and every region's loss) over ranges with strong skin effect, including the
range's ends; the estimate bounds the true error; a round wire's internal impedance over a
range against the Bessel solution (Ramo, Whinnery, Van Duzer, Fields and Waves in
Communication Electronics, 1965)."""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from analytic import MU0, round_wire_impedance

from whorl.cases import model
from whorl.cases.loader import load_case, parse_case
from whorl.cases.run import solve_case
from whorl.meshes.build import build_mesh
from whorl.postprocess.circuits import source_results
from whorl.postprocess.regions import region_totals
from whorl.solver.harmonic import solve_harmonic

ROOT = Path(__file__).resolve().parents[2]
COPPER = 1 / 1.68e-8  # S/m, the library's copper
RADIUS = 0.005


def wire_frequency(ratio):
    """Frequency (Hz) at which a / delta = ratio for the 5 mm copper wire."""
    return ratio**2 / (RADIUS**2 * np.pi * MU0 * COPPER)


def wire_problem(freqs, mesh_for=None):
    """The verification wire at ``freqs``, meshed for the frequency ``mesh_for`` (default:
    the highest); a coarser mesh changes the numbers, not reduced against full."""
    case = load_case(ROOT / "cases" / "verification" / "round-wire-skin-effect.toml")
    case.study = replace(case.study, frequencies=(mesh_for or max(freqs),))
    mesh = build_mesh(model.sized_geometry(case))
    case.study = replace(case.study, frequencies=tuple(freqs))
    return case, model.problem(case, mesh)


HEATER = """\
format = 1
[case]
name = "rom-heater"
[model]
geometry = "axisymmetric"
length_unit = "mm"
order = 1
[material.hot-steel]
conductivity = "1 MS/m"
relative_permeability = 20
[[region]]
name = "billet"
material = "hot-steel"
shape = "rectangle"
corner = [0, -30]
size = [15, 60]
[[region]]
name = "sleeve"
material = "aluminium"
shape = "rectangle"
corner = [17, -30]
size = [2, 60]
[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [25, -35]
size = [6, 70]
[domain]
shape = "rectangle"
corner = [0, -100]
size = [100, 200]
[mesh]
max_size = 8
per_skin_depth = 1
[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
turns = 12
voltage = "50 V"
resistance = "0.01 ohm"
[study]
kind = "harmonic"
frequency = { from = "200 Hz", to = "50 kHz", count = 10, scale = "log" }
"""


def compare(problem, freqs, **kw):
    """Reduced and full solutions at ``freqs``: worst relative differences of every
    source's impedance and every region's loss, and the sweep's record."""
    red, info = solve_harmonic(problem, freqs, reduced="on", **kw)
    full, _ = solve_harmonic(problem, freqs, reduced="off")
    worst_z, worst_loss, true_err = 0.0, 0.0, []
    for a, b in zip(red, full, strict=True):
        err = 0.0
        for name, sb in source_results(b).items():
            za = source_results(a)[name].impedance_ohm
            err = max(err, abs(za - sb.impedance_ohm) / abs(sb.impedance_ohm))
        worst_z = max(worst_z, err)
        ta, tb = region_totals(a), region_totals(b)
        total = sum(t.loss_w for t in tb.values())
        for name, t in tb.items():
            if t.loss_w > 1e-9 * total:
                rel = abs(ta[name].loss_w - t.loss_w) / t.loss_w
                worst_loss = max(worst_loss, rel)
                err = max(err, rel)
        true_err.append(err)
    return worst_z, worst_loss, np.array(true_err), info["reduced"]


def test_reduced_equals_full_on_a_wire_with_strong_skin_effect():
    """a / delta from 0.5 to 100 over 14 log-spaced frequencies (both ends included): the
    reduced impedance and loss equal the full solve's to 1e-6 relative, with fewer full
    solves than frequencies; the estimate is never below the true error."""
    freqs = list(np.geomspace(wire_frequency(0.5), wire_frequency(100), 14))
    _, problem = wire_problem(freqs, mesh_for=wire_frequency(20))
    worst_z, worst_loss, true_err, record = compare(problem, freqs)
    assert worst_z < 1e-6 and worst_loss < 1e-6
    assert len(record["full_solve_frequencies_hz"]) < len(freqs)
    estimate = np.array(record["estimated_error"])
    assert np.all(estimate <= 1e-6)
    reduced = ~np.isin(freqs, record["full_solve_frequencies_hz"])
    assert reduced.sum() >= 5
    assert np.all(estimate[reduced] >= true_err[reduced])


def test_reduced_equals_full_on_an_axisymmetric_heater():
    """A voltage-fed coil over a magnetic billet and an aluminium sleeve, 200 Hz to 50 kHz:
    coil impedance and both regions' losses to 1e-6 relative at every frequency (a handful
    spread over the range, with the ends)."""
    case = parse_case(HEATER)
    problem = model.problem(case, build_mesh(model.sized_geometry(case)))
    freqs = list(case.study.frequencies)
    worst_z, worst_loss, _, record = compare(problem, freqs)
    assert worst_z < 1e-6 and worst_loss < 1e-6
    assert len(record["full_solve_frequencies_hz"]) < len(freqs)


@pytest.mark.parametrize("refine", [True, False], ids=["with neighbours", "fixed alone"])
def test_estimate_bounds_the_true_error_as_the_tolerance_loosens(monkeypatch, refine):
    """Estimate against true error at tolerances 1e-3 and 1e-5 (fewer expansion
    frequencies, so errors are well above round-off): every estimate bounds its true error
    and stays below the tolerance. Also through the first expansion frequency's
    factorisation alone (no neighbours' bounds), which is solved once per basis vector (not
    once per basis vector and expansion frequency)."""
    from whorl.solver import frequency_rom

    if not refine:
        monkeypatch.setattr(frequency_rom, "REFINE", False)
    case = parse_case(HEATER)
    problem = model.problem(case, build_mesh(model.sized_geometry(case)))
    freqs = list(np.geomspace(200, 50e3, 9))
    for tol in (1e-3, 1e-5):
        _, _, true_err, record = compare(problem, freqs, tolerance=tol)
        estimate = np.array(record["estimated_error"])
        assert np.all(estimate <= tol)
        assert np.all(true_err <= estimate + 1e-12)
        if not refine:
            assert record["estimate_solves"] == record["basis_size"]


def test_round_wire_internal_impedance_over_a_range_against_bessel():
    """R and omega L_int of the wire within 1 % of Z = k J0(ka) / (2 pi a sigma J1(ka)),
    k^2 = -j omega mu0 sigma, at 10 frequencies from a / delta = 0.5 to 10 (the
    single-frequency verification's range and tolerance), through the case file."""
    case = load_case(ROOT / "cases" / "verification" / "round-wire-skin-effect.toml")
    freqs = tuple(np.geomspace(wire_frequency(0.5), wire_frequency(10), 10))
    case.study = replace(case.study, frequencies=freqs)
    results, _, _ = solve_case(case)
    assert "frequency_sweep" in results
    for sol in results["solutions"]:
        omega = 2 * np.pi * sol["frequency_hz"]
        z = round_wire_impedance(RADIUS, COPPER, sol["frequency_hz"])
        wire = sol["regions"]["wire"]
        assert wire["loss_w"] == pytest.approx(z.real, rel=0.01)  # P = R |I|^2 with 1 A
        assert 2 * wire["magnetic_energy_j"] == pytest.approx(z.imag / omega, rel=0.01)


def test_nonlinear_and_moving_models_fall_back_to_full_solves(caplog):
    """A problem with moving conductors (issue 13) is solved in full, said in the log."""
    freqs = list(np.geomspace(100, 1e4, 9))
    case, problem = wire_problem(freqs, mesh_for=100.0)
    from whorl.solver.motion import Rotation

    shape = case.geometry.regions[0].shape  # the wire spinning about its axis
    problem.motions = (Rotation(("wire",), 10.0, tuple(c * case.unit_m for c in shape.center)),)
    with caplog.at_level("INFO"):
        _, info = solve_harmonic(problem, freqs)
    assert "reduced" not in info
    assert "moving conductors" in caplog.text


@pytest.mark.parametrize("line, key", [
    ('reduced = "maybe"', "study.reduced"),
    ("reduced_tolerance = 0.5", "study.reduced_tolerance"),
    ("reduced_tolerance = -1e-6", "study.reduced_tolerance"),
    ('tank_capacitance = "2 mH"', "study.tank_capacitance"),
    ('tank_connection = "diagonal"', "study.tank_connection"),
])
def test_bad_study_keys_exit_2_with_the_key_path(tmp_path, capsys, line, key):
    from whorl.cases.cli import main

    text = HEATER.replace('kind = "harmonic"', f'kind = "harmonic"\n{line}')
    path = tmp_path / "case.toml"
    path.write_text(text, encoding="utf-8")
    assert main(["check", str(path)]) == 2
    assert key in capsys.readouterr().err


def test_past_the_most_expansion_frequencies_the_rest_is_solved_in_full(monkeypatch, caplog):
    """With room for one expansion frequency only, the frequencies whose estimate stays
    above the tolerance are solved in full (said in the log) and equal full solves."""
    from whorl.solver import frequency_rom

    monkeypatch.setattr(frequency_rom, "MAX_POINTS", 1)
    freqs = list(np.geomspace(wire_frequency(0.5), wire_frequency(30), 9))
    _, problem = wire_problem(freqs, mesh_for=wire_frequency(5))
    with caplog.at_level("WARNING"):
        worst_z, worst_loss, _, record = compare(problem, freqs)
    assert "solving the rest in full" in caplog.text
    assert worst_z < 1e-6 and worst_loss < 1e-6
    assert len(record["expansion_frequencies_hz"]) == 1
    assert len(record["full_solve_frequencies_hz"]) > 1
