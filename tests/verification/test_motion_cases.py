"""Moving conductors through the whole pipeline (case file, mesher, solver, results)."""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from analytic_motion import transverse_cylinder_power

from whorl.cases.loader import load_case
from whorl.cases.run import solve_case
from whorl.cases.spec import LoopSpec, StudySpec

CASES = Path(__file__).resolve().parent  # the case lives beside this test


@pytest.fixture(scope="module")
def spinning():
    case = load_case(CASES / "spinning-cylinder.toml")
    case.loops = (LoopSpec("sweeping", 2.0, None, (15.0, -4.0), (18.0, 6.0), (3.0, -2.0)),)
    results, _, mesh = solve_case(case)
    return case, results, mesh


def test_frame_equivalence_spinning_and_alternating(spinning):
    """The cylinder spinning at Omega in a static field B0 loses what it loses at rest in
    a field of RMS value B0 alternating at Omega/(2 pi) (same mesh: within 1e-4), both
    equal the Bessel solution (Stoll 1974) within 1 %, and the drag torque is P/Omega."""
    case, results, mesh = spinning
    rotor = results["solutions"][0]["regions"]["rotor"]
    omega = 3000 * 2 * np.pi / 60
    at_rest = replace(case, motions=(), loops=(), study=StudySpec("harmonic",
                                                                 (omega / (2 * np.pi),)))
    alternating, _, _ = solve_case(at_rest, mesh=mesh)
    loss_ac = alternating["solutions"][0]["regions"]["rotor"]["loss_w"]
    sigma = case.materials["copper"].conductivity
    reference = transverse_cylinder_power(0.01, 0.01, 0.04, sigma, omega / (2 * np.pi))
    assert rotor["loss_w"] == pytest.approx(loss_ac, rel=1e-4)
    assert rotor["loss_w"] == pytest.approx(reference, rel=0.01)
    assert loss_ac == pytest.approx(reference, rel=0.01)
    assert -rotor["torque_nm"] == pytest.approx(rotor["loss_w"] / omega, rel=1e-6)
    assert rotor["mechanical_power_w"] == pytest.approx(rotor["loss_w"], rel=1e-6)


def test_low_frequency_limit_of_the_reference():
    """The reference tends to sigma omega^2 B0^2 pi a^4 / 4 at low frequency (uniform
    induced E = omega B0 r sin(theta)) and a far boundary."""
    sigma, a, f, b0 = 58e6, 0.01, 0.01, 0.01
    omega = 2 * np.pi * f
    assert transverse_cylinder_power(b0, a, 1e3, sigma, f) == pytest.approx(
        sigma * omega**2 * b0**2 * np.pi * a**4 / 4, rel=1e-6)


def test_moving_loop_in_the_results(spinning):
    """A loop with a velocity: results.json reports both ways, which agree to round-off."""
    _, results, _ = spinning
    loop = results["solutions"][0]["loops"]["sweeping"]
    emf, emf_e = complex(*loop["emf_v"]), complex(*loop["emf_from_e_v"])
    assert abs(emf) > 0
    assert emf == pytest.approx(emf_e, rel=1e-9)
    balance = results["solutions"][0]["totals"]["power_balance"]
    assert balance["mechanical_w"] == pytest.approx(
        results["solutions"][0]["regions"]["rotor"]["loss_w"], rel=1e-6)
