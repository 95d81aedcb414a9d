"""Loops: Faraday consistency and the long-solenoid flux.

Faraday's law in integral form (EMF = -d flux/dt, any electromagnetics text):
for loops in air, the four numbers of a loop must agree; the flux of a loop in
the bore of a long solenoid is mu0 N I / h times its area (Ampere's law).
"""

import numpy as np
import pytest
from analytic import MU0
from meshing import tensor_mesh
from test_circuits import CU, box, busbar_problem
from test_cylinder import CURRENT, TURNS, cylinder_problem

from whorl.postprocess.circuits import source_results
from whorl.postprocess.loops import axisymmetric_loop, planar_loop
from whorl.solver import BUILTIN, Massive, Material, Problem, Stranded, solve_harmonic


def coil_with_billet():
    """A 4-turn stranded coil around a steel billet, axisymmetric (m)."""
    rs = np.linspace(0, 0.08, 81)
    zs = np.linspace(-0.06, 0.06, 121)
    regions = {"billet": box(0.0, 0.02, -0.03, 0.03),
               "coil": box(0.03, 0.036, -0.025, 0.025)}
    tm = tensor_mesh(rs, zs, regions, axisymmetric=True)
    return Problem(tm, {"billet": Material("steel", 5e6, 50.0), "coil": CU,
                        "domain": BUILTIN["air"]},
                   sources=(Stranded("coil", ("coil",), turns=4, current=200.0),))


@pytest.fixture(scope="module")
def coil_solution():
    (sol,), _ = solve_harmonic(coil_with_billet(), [2000.0])
    return sol


@pytest.mark.parametrize("r, z", [(0.025, 0.0), (0.045, 0.01), (0.06, -0.04), (0.025, 0.05)])
def test_faraday_consistency_in_air(coil_solution, r, z):
    """Inside the coil (between billet and winding), outside it, and beyond its end:
    all four ways agree within 0.5 %."""
    lp = axisymmetric_loop(coil_solution, "probe", r, z, turns=3)
    scale = abs(lp.emf_v)
    assert abs(lp.flux_from_b_wb - lp.flux_wb) < 0.005 * abs(lp.flux_wb)
    assert abs(lp.emf_from_e_v - lp.emf_v) < 0.005 * scale
    assert lp.emf_v == pytest.approx(-1j * 2 * np.pi * 2000.0 * lp.flux_linkage_wb)


def test_flux_is_per_turn_and_linkage_is_turns_times_flux(coil_solution):
    """The flux through one turn does not depend on the number of turns; the flux linkage
    and the EMF scale with it (the contract in CASEFILE.md, "Loops")."""
    one = axisymmetric_loop(coil_solution, "probe", 0.045, 0.01, turns=1)
    many = axisymmetric_loop(coil_solution, "probe", 0.045, 0.01, turns=7)
    assert many.flux_wb == one.flux_wb
    assert many.flux_from_b_wb == one.flux_from_b_wb
    assert many.flux_linkage_wb == pytest.approx(7 * one.flux_wb, rel=1e-14)
    assert many.emf_v == pytest.approx(7 * one.emf_v, rel=1e-14)


def test_loop_in_a_long_solenoid_reads_the_ampere_flux():
    problem, height = cylinder_problem(0.01, 0.01, 1.0, material="air-core")
    problem.materials["bar"] = BUILTIN["air"]
    (sol,), _ = solve_harmonic(problem, [50.0])
    r = 0.008
    lp = axisymmetric_loop(sol, "bore", r, height / 2)
    expected = MU0 * TURNS * CURRENT / height * np.pi * r**2
    assert abs(lp.flux_wb) == pytest.approx(expected, rel=0.005)
    assert abs(lp.flux_from_b_wb) == pytest.approx(expected, rel=0.005)


def test_planar_loop_through_massive_bars_sees_the_terminal_voltage():
    """A loop whose sides run inside the go and return bars: the circulation of E adds
    the bars' electrostatic part to -j omega flux, which is the terminal voltage."""
    problem = busbar_problem(Massive("bus", ("go",), "series", current=1000.0,
                                     return_regions=("back",)))
    (sol,), _ = solve_harmonic(problem, [50.0])
    lp = planar_loop(sol, "through-bars", (-0.03, 0.005), (0.03, 0.005))
    v = source_results(sol)["bus"].voltage_v
    assert lp.emf_from_e_v == pytest.approx(lp.emf_v + v, rel=1e-9)
    # In air beside the bars the two agree.
    air = planar_loop(sol, "air", (-0.01, 0.005), (0.01, 0.005))
    assert abs(air.emf_from_e_v - air.emf_v) < 1e-9 * abs(air.emf_v)
    assert abs(air.flux_from_b_wb - air.flux_wb) < 0.005 * abs(air.flux_wb)
