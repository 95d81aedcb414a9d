"""A copper sphere in a uniform AC field, drawn as a circle on the axis of an
axisymmetric model: its eddy-current loss against the closed form from the magnetic
polarizability of a conducting sphere (L. D. Landau and E. M. Lifshitz, Electrodynamics
of Continuous Media, 2nd ed., 1984, section 59, problem 1)."""

from pathlib import Path

import numpy as np
import pytest
from analytic import MU0

from whorl.cases.loader import load_case
from whorl.cases.run import solve_case

CASE = (Path(__file__).resolve().parents[2] / "cases" / "verification"
        / "sphere-in-field.toml")
SIGMA, RADIUS, B_RMS = 1 / 1.68e-8, 0.01, 1e-3  # built-in copper, 10 mm, 1 mT RMS


def sphere_loss(frequency):
    """Time-average loss (W) of the sphere in a uniform field of B_RMS.

    SI form of Landau and Lifshitz's result (time factor exp(-j omega t), k = (1 + j) /
    delta): moment m = alpha H0 with alpha = -2 pi a^3 [1 - 3/(k a)^2 + 3 cot(k a)/(k a)],
    loss P = omega mu0 Im(alpha) H0^2 with RMS H0. At low frequency this tends to
    2 pi sigma omega^2 B^2 a^5 / 15 (checked below)."""
    omega = 2 * np.pi * frequency
    delta = np.sqrt(2 / (omega * MU0 * SIGMA))
    ka = (1 + 1j) / delta * RADIUS
    alpha = -2 * np.pi * RADIUS**3 * (1 - 3 / ka**2 + 3 / (ka * np.tan(ka)))
    return omega * MU0 * alpha.imag * (B_RMS / MU0) ** 2


def test_closed_form_has_the_low_frequency_limit():
    """Low-frequency loss from E = -j omega B r sin(theta) / 2 integrated over the ball;
    at 0.1 Hz (a/delta = 0.05) the next term of the expansion is about 2e-6."""
    f = 0.1
    omega = 2 * np.pi * f
    low = 2 * np.pi * SIGMA * omega**2 * B_RMS**2 * RADIUS**5 / 15
    assert sphere_loss(f) == pytest.approx(low, rel=1e-5)


@pytest.mark.parametrize("ratio", [0.5, 3.0, 10.0])
def test_sphere_loss_against_landau_lifshitz(ratio):
    """Within 0.1 % for a/delta from 0.5 to 10 (measured: 4e-4 or better) with the field
    applied on a circle of 20 sphere radii."""
    frequency = ratio**2 / (RADIUS**2 * np.pi * MU0 * SIGMA)
    case = load_case(CASE, {"freq": f"{frequency} Hz"})
    assert case.geometry.regions[0].shape.kind == "outline"  # the half disk at r >= 0
    results, _, _ = solve_case(case)
    loss = results["solutions"][0]["regions"]["ball"]["loss_w"]
    assert loss == pytest.approx(sphere_loss(frequency), rel=1e-3)
