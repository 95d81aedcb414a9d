"""Harmonic studies of saturable steel: effective permeability per element.

Checks (sources named):
- far below the knee the effective permeability is the curve's initial one, so the
  result equals a linear run with that permeability (1 %): the fundamental of B for a
  small sinusoidal H is mu_initial H (Taylor expansion of the curve);
- far beyond saturation it tends to the linear result with the vacuum slope mu0, the
  curve's slope there (1 %);
- the long cylinder in a long coil, linear, agrees with the Bessel solution (Davies and
  Simpson, Induction Heating Handbook, 1979), so the two limits are pinned to it too;
- the magnetisation multiplier m = 0 makes steel non-magnetic (B = mu0 H), and a warm
  start from converged permeabilities converges at once.
"""

from dataclasses import replace

import numpy as np
import pytest
from test_cylinder import SIGMA, cylinder_problem

from whorl.postprocess.regions import region_totals
from whorl.solver import Material, skin_depth, solve_harmonic
from whorl.solver.bh import frohlich_kennelly
from whorl.solver.effective import EffectiveCurve, EffectiveSystem
from whorl.solver.linalg import choose
from whorl.solver.system import assemble

CURVE = frohlich_kennelly(2.0, 600.0)
F = 1000.0


def problem_with(curve_material, current):
    delta = skin_depth(F, SIGMA, 20.0)
    problem, _ = cylinder_problem(4 * delta, delta, 20.0, order=1, per_delta=3)
    problem.materials["bar"] = curve_material
    problem.sources = (replace(problem.sources[0], current=current),)
    return problem


def loss(problem):
    (sol,), _ = solve_harmonic(problem, [F])
    return region_totals(sol)["bar"].loss_w, sol


STEEL = Material("steel", SIGMA, CURVE.initial_relative_permeability, bh_curve=CURVE)


@pytest.mark.parametrize("current, mu_r", [(1e-3, CURVE.initial_relative_permeability),
                                           (2e8, 1.0)])
def test_limits_equal_linear_runs(current, mu_r):
    nonlinear, sol = loss(problem_with(STEEL, current))
    assert sol.nonlinear["converged"]
    linear, _ = loss(problem_with(Material("lin", SIGMA, mu_r), current))
    assert nonlinear == pytest.approx(linear, rel=0.01)


def test_effective_curve_limits():
    eff = EffectiveCurve(CURVE)
    nu0 = 1 / (4e-7 * np.pi)
    assert 1 / eff.reluctivity(np.array([1e-6]))[0] == pytest.approx(600 * 4e-7 * np.pi,
                                                                      rel=1e-3)
    assert eff.reluctivity(np.array([1e4]))[0] == pytest.approx(nu0, rel=1e-3)
    # H = Hm sin: B is flat-topped, so its fundamental lies between its peak B(Hm) and
    # 4/pi B(Hm), the fundamental of a square wave of that height (Fourier series)
    for hm in (3e3, 3e4):
        b1 = hm / eff.reluctivity_at_field(np.array([hm]))[0]
        peak = CURVE.flux_density(np.array([hm]))[0]
        assert peak < b1 <= 4 / np.pi * peak


def test_multiplier_zero_is_nonmagnetic_and_warm_start():
    problem = problem_with(STEEL, 200.0)
    problem.element_magnetisation = np.zeros(problem.mesh.mesh.t.shape[1])
    nonlinear, _ = loss(problem)
    linear, _ = loss(problem_with(Material("lin", SIGMA, 1.0), 200.0))
    assert nonlinear == pytest.approx(linear, rel=1e-3)
    # warm start: from converged permeabilities the iteration stops at once
    problem = problem_with(STEEL, 200.0)
    eff = EffectiveSystem(assemble(problem), choose("scipy-superlu")[1])
    first = eff.solve(F)
    nu = first.system.nu[eff.saturable.elements]
    again = eff.solve(F, start=nu)
    assert again.nonlinear["iterations"] <= 2
    assert first.nonlinear["iterations"] > again.nonlinear["iterations"]


def test_effective_curve_inverse_against_root_finding():
    """The H amplitude for a given B_1 (Newton's method on the tabulated curve) against
    SciPy's brentq on the same forward curve, with magnetisation multipliers 0 < m <= 1,
    m = 0 (vacuum) and amplitudes below the table (linear there)."""
    from scipy.optimize import brentq

    eff = EffectiveCurve(CURVE)
    rng = np.random.default_rng(7)
    b = np.concatenate([10 ** rng.uniform(-9, 1.3, 40), [1e-12, 1.0, 1.9, 2.4]])
    m = np.concatenate([rng.choice([1.0, 0.5, 1e-3, 0.0, 0.9], 40), [1.0, 0.0, 0.3, 1.0]])
    h = eff.field_strength(b, m)

    def mismatch(hm, mm, bb):
        return 4e-7 * np.pi * hm + mm * eff.magnetisation(hm) - bb

    for bi, mi, hi in zip(b, m, h, strict=True):
        root = brentq(mismatch, 0.0, bi / (4e-7 * np.pi) * 1.001, args=(mi, bi),
                      xtol=1e-300, rtol=1e-14)
        assert hi == pytest.approx(root, rel=1e-11)
