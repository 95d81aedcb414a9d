"""The verification cases of cases/verification/, run through the whole pipeline
(case file, mesher, solver, postprocessing). Each names its published source in
its notes and here."""

from pathlib import Path

import numpy as np
import pytest
from analytic import MU0, round_wire_impedance
from scipy.special import ellipe, ellipk

from whorl.cases.loader import load_case
from whorl.cases.run import solve_case

CASES = Path(__file__).resolve().parents[2] / "cases" / "verification"


def run(name, **overrides):
    case = load_case(CASES / f"{name}.toml", {k: str(v) for k, v in overrides.items()})
    results, solutions, mesh = solve_case(case)
    return case, results, solutions


def maxwell_mutual(r1, r2, dz):
    """Mutual inductance (H) of coaxial circular filaments (Maxwell; Grover 1946)."""
    k2 = 4 * r1 * r2 / ((r1 + r2) ** 2 + dz**2)
    k = np.sqrt(k2)
    return MU0 * np.sqrt(r1 * r2) * ((2 / k - k) * ellipk(k2) - 2 / k * ellipe(k2))


def coil_inductance(r_in, r_out, height, turns, n):
    """Self-inductance of a coil with uniform current density over a rectangular
    cross-section: Maxwell's formula integrated over both cross-sections with n x n and
    (n+1) x (n+1) Gauss points (the points never coincide, so the integrable logarithmic
    singularity is never hit)."""
    def points(m):
        x, w = np.polynomial.legendre.leggauss(m)
        r = (r_in + r_out) / 2 + (r_out - r_in) / 2 * x
        z = height / 2 * x
        R, Z = np.meshgrid(r, z, indexing="ij")
        W = np.outer(w * (r_out - r_in) / 2, w * height / 2)
        return R.ravel(), Z.ravel(), W.ravel()

    r1, z1, w1 = points(n)
    r2, z2, w2 = points(n + 1)
    total = 0.0
    for start in range(0, r1.size, 400):
        s = slice(start, start + 400)
        m = maxwell_mutual(r1[s, None], r2[None, :], z1[s, None] - z2[None, :])
        total += np.sum(w1[s, None] * w2[None, :] * m)
    return turns**2 / ((r_out - r_in) * height) ** 2 * total


def test_coil_inductance_against_maxwell():
    """Within 0.5 %. The reference is extrapolated from n = 40 and 80 with the observed
    n^-2 convergence of the quadrature (Richardson); its own error is below 1e-4."""
    l40 = coil_inductance(0.02, 0.03, 0.04, 100, 40)
    l80 = coil_inductance(0.02, 0.03, 0.04, 100, 80)
    reference = l80 + (l80 - l40) / 3
    case, results, _ = run("coil-inductance-open")
    inductance = results["solutions"][0]["sources"]["winding"]["inductance_h"]
    assert inductance == pytest.approx(reference, rel=0.005)


def test_open_boundary_against_a_ten_times_larger_closed_domain():
    """The contract: within 0.5 % of the same model in a flux-parallel domain ten times
    larger."""
    _, open_run, _ = run("coil-inductance-open")
    case = load_case(CASES / "coil-inductance-open.toml")
    from dataclasses import replace

    from whorl.solver import FluxParallel

    domain = replace(case.geometry.domain, radius=10 * case.geometry.domain.radius)
    case.geometry = replace(case.geometry, domain=domain,
                            options=replace(case.geometry.options, max_size=40.0))
    case.boundary = {"outer": FluxParallel()}
    closed, _, _ = solve_case(case)
    l_open = open_run["solutions"][0]["sources"]["winding"]["inductance_h"]
    l_closed = closed["solutions"][0]["sources"]["winding"]["inductance_h"]
    assert l_open == pytest.approx(l_closed, rel=0.005)


def test_two_wire_line_inductance():
    """(mu0/pi)(ln(D/a) + 1/4) within 0.5 %."""
    _, results, _ = run("two-wire-line")
    inductance = results["solutions"][0]["sources"]["line"]["inductance_h"]
    assert inductance == pytest.approx(MU0 / np.pi * (np.log(20 / 2) + 0.25), rel=0.005)


@pytest.mark.parametrize("ratio", [0.5, 2.0, 5.0, 10.0])
def test_round_wire_internal_impedance(ratio):
    """AC resistance and internal inductance within 1 % for a/delta from 0.5 to 10."""
    sigma, radius = 1 / 1.68e-8, 0.005
    frequency = ratio**2 / (radius**2 * np.pi * MU0 * sigma)  # a/delta = ratio
    _, results, _ = run("round-wire-skin-effect", freq=f"{frequency} Hz")
    sol = results["solutions"][0]
    omega = 2 * np.pi * frequency
    z = round_wire_impedance(radius, sigma, frequency)
    wire = sol["regions"]["wire"]
    assert wire["loss_w"] == pytest.approx(z.real, rel=0.01)  # P = R |I|^2 with 1 A
    assert 2 * wire["magnetic_energy_j"] == pytest.approx(z.imag / omega, rel=0.01)


@pytest.mark.parametrize("ratio, mu", [(0.5, 1), (3.0, 1), (10.0, 1), (10.0, 50)])
def test_cylinder_in_coil(ratio, mu):
    """Davies and Simpson: power per unit length within 1 %, a/delta from 0.5 to 10."""
    from analytic import cylinder_power_per_length

    sigma, radius, height = 5.8e6, 0.02, 0.01
    frequency = ratio**2 / (radius**2 * np.pi * MU0 * mu * sigma)
    _, results, _ = run("cylinder-in-coil", freq=f"{frequency} Hz", mu=mu)
    h0 = 10 * 5.0 / height
    expected = cylinder_power_per_length(h0, radius, sigma, mu, frequency) * height
    assert results["solutions"][0]["regions"]["billet"]["loss_w"] == pytest.approx(expected,
                                                                                  rel=0.01)


@pytest.mark.parametrize("ratio, mu", [(0.3, 1), (2.0, 1), (20.0, 1), (5.0, 100)])
def test_slab_in_field(ratio, mu):
    """Stoll's closed form for the slab, d/delta from 0.3 to 20, within 1 %."""
    from analytic import slab_loss_per_area, slab_propagation

    sigma, d, gap, height, b0 = 5.8e7, 0.02, 0.02, 0.002, 1e-3
    frequency = ratio**2 / (d**2 * np.pi * MU0 * mu * sigma)
    _, results, _ = run("slab-in-field", freq=f"{frequency} Hz", mu=mu)
    k = slab_propagation(sigma, mu, frequency)
    half = d / 2 + gap
    h_s = 2 * b0 * half / (MU0 * (2 * half - d) + MU0 * mu * (2 / k) * np.tanh(k * d / 2))
    expected = slab_loss_per_area(h_s, d, sigma, mu, frequency) * height
    assert results["solutions"][0]["regions"]["slab"]["loss_w"] == pytest.approx(expected,
                                                                                rel=0.01)
