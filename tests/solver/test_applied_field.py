"""A conducting cylinder in a uniform applied axial field (axisymmetric, 'applied-field'
side), against the Bessel-function solution (E. J. Davies and P. Simpson, *Induction
Heating Handbook*, 1979).

The outer side r = R carries A = B0 R / 2, which fixes the flux through the model at
pi R^2 B0. The field in the air annulus a < r < R is uniform (top and bottom are
flux-normal), so the surface field H_s follows from flux conservation:
    pi R^2 B0 = 2 pi mu H_s a J1(ka) / (k J0(ka)) + mu0 H_s pi (R^2 - a^2).
"""

import numpy as np
import pytest
from analytic import MU0, cylinder_power_per_length
from meshing import graded, tensor_mesh
from scipy.special import jv

from whorl.postprocess.regions import region_totals
from whorl.solver import (
    BUILTIN,
    AppliedField,
    AppliedFieldSide,
    FluxNormal,
    Material,
    Problem,
    skin_depth,
    solve_harmonic,
)


@pytest.mark.parametrize("ratio", [1.0, 5.0])
def test_cylinder_in_an_applied_field(ratio):
    f, sigma, mu_r, b0 = 500.0, 3e7, 1.0, 0.01
    delta = skin_depth(f, sigma, mu_r)
    a = ratio * delta
    R = 1.5 * a
    rs = np.concatenate([graded(0, a, min(delta / 2, a / 6), a / 6, 1.25, "b"),
                         graded(a, R, min(delta / 2, a / 6), a / 4, 1.3, "a")[1:]])
    height = a / 5
    tm = tensor_mesh(rs, np.linspace(0, height, 3), {"bar": lambda r, z: r < a},
                     axisymmetric=True)
    problem = Problem(tm, {"bar": Material("metal", sigma, mu_r), "domain": BUILTIN["air"]},
                      sources=(AppliedField("uniform", b0),),
                      boundary={"right": AppliedFieldSide(), "top": FluxNormal(),
                                "bottom": FluxNormal()})
    (sol,), _ = solve_harmonic(problem, [f])
    k = np.sqrt(-1j * 2 * np.pi * f * MU0 * mu_r * sigma)
    mu = MU0 * mu_r
    h_s = np.pi * R**2 * b0 / (2 * np.pi * mu * a * jv(1, k * a) / (k * jv(0, k * a))
                              + MU0 * np.pi * (R**2 - a**2))
    expected = cylinder_power_per_length(h_s, a, sigma, mu_r, f) * height
    assert region_totals(sol)["bar"].loss_w == pytest.approx(expected, rel=0.01)
