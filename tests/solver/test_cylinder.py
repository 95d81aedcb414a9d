"""Long solid cylinder in a long coil (axisymmetric) against the Bessel-function solution.

Source: E. J. Davies and P. Simpson, *Induction Heating Handbook*, 1979 (see
tests/analytic.py). Top, bottom and the outer side are flux-normal, so the
model is a slice of an infinitely long cylinder in an infinitely long
solenoid: the surface field is H0 = N I / h (Ampere's law).
"""

import numpy as np
import pytest
from analytic import MU0, cylinder_field, cylinder_power_per_length
from meshing import graded, tensor_mesh

from whorl.postprocess.probes import probe
from whorl.postprocess.regions import region_totals
from whorl.solver import (
    BUILTIN,
    FluxNormal,
    Material,
    Problem,
    Stranded,
    skin_depth,
    solve_harmonic,
)

SIGMA = 5.8e6
TURNS, CURRENT = 10, 5.0


def cylinder_problem(radius, delta, mu_r, order=2, per_delta=2, material="steel"):
    a = radius
    gap, thick = 0.2 * a, 0.1 * a
    h_min = min(delta / per_delta, a / 6)
    rs = np.concatenate([graded(0, a, h_min, a / 6, 1.25, "b"),
                         graded(a, a + gap, h_min, gap / 3, 1.4, "a")[1:],
                         np.linspace(a + gap, a + gap + thick, 3)[1:], [a + 2 * gap + thick]])
    height = a / 5
    tm = tensor_mesh(rs, np.linspace(0, height, 3),
                     {"bar": lambda r, z: r < a,
                      "coil": lambda r, z: (r > a + gap) & (r < a + gap + thick)},
                     axisymmetric=True)
    problem = Problem(tm, {"bar": Material(material, SIGMA, mu_r), "coil": BUILTIN["copper"],
                           "domain": BUILTIN["air"]},
                      sources=(Stranded("coil", ("coil",), turns=TURNS, current=CURRENT),),
                      boundary={"right": FluxNormal(), "top": FluxNormal(), "bottom": FluxNormal()},
                      order=order)
    return problem, height


@pytest.mark.parametrize("ratio", [0.5, 2.0, 10.0, 30.0])
@pytest.mark.parametrize("mu_r", [1.0, 50.0])
def test_power_and_internal_field(ratio, mu_r):
    """a/delta from 0.5 to 30, mu_r 1 and 50: power per length and H_z(r) within 1 %."""
    f = 1000.0
    delta = skin_depth(f, SIGMA, mu_r)
    a = ratio * delta
    problem, height = cylinder_problem(a, delta, mu_r)
    (sol,), _ = solve_harmonic(problem, [f])
    h0 = TURNS * CURRENT / height
    expected = cylinder_power_per_length(h0, a, SIGMA, mu_r, f) * height
    assert region_totals(sol)["bar"].loss_w == pytest.approx(expected, rel=0.01)
    # The field is a derivative of A, pointwise accurate to O(h^p) rather than the
    # O(h^2p) of the power, so it is checked on a mesh of delta/6 at the surface.
    problem, height = cylinder_problem(a, delta, mu_r, per_delta=6)
    (sol,), _ = solve_harmonic(problem, [f])
    r = a - np.linspace(0.1, min(3.0, 0.9 * ratio), 8) * delta
    hz = probe(sol, np.array([r, np.full_like(r, height / 2)])).h[1]
    exact = cylinder_field(r, h0, a, SIGMA, mu_r, f)
    assert np.max(np.abs(hz - exact)) < 0.01 * abs(h0)


def test_static_solenoid_field_is_n_i_over_length():
    """At 0 Hz the field inside a long solenoid is mu0 N I / L (Ampere's law), within 0.5 %."""
    problem, height = cylinder_problem(0.01, 0.01, 1.0, material="air-core")
    problem.materials["bar"] = BUILTIN["air"]
    (sol,), _ = solve_harmonic(problem, [0.0])
    r = np.array([0.0005, 0.005, 0.0099])
    bz = probe(sol, np.array([r, np.full_like(r, height / 2)])).b[1]
    assert np.allclose(np.abs(bz), MU0 * TURNS * CURRENT / height, rtol=0.005)
