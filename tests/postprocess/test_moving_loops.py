"""Moving loops: the EMF in the loop's frame, -(j omega + v . grad) of the flux, against
the circulation of E + v x B and against loops displaced in a static field (the
textbook moving-loop EMF, -v dPhi/dx; e.g. Feynman, Leighton and Sands, The Feynman
Lectures on Physics II, sec. 17-1)."""

import sys
from pathlib import Path

import numpy as np
import pytest

from whorl.postprocess.records import loop_result
from whorl.solver import solve_harmonic

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "solver"))
from test_motion import billet_problem, plate_mesh, plate_problem  # noqa: E402


def displaced(solution, loop, velocity, step):
    """-v . grad(flux) of one turn by central differences of loops displaced by +-step
    along v (the field is static, so the loops need no new solution)."""
    v = np.asarray(velocity, float)
    unit = v / np.hypot(*v)
    fluxes = []
    for sign in (1, -1):
        moved = dict(loop)
        moved.pop("velocity", None)
        moved["turns"] = 1.0
        for key in ("start", "end", "at"):
            if key in moved:
                moved[key] = tuple(np.asarray(moved[key]) + sign * step * unit)
        fluxes.append(loop_result(solution, moved, surface=False).flux_wb)
    return -np.hypot(*v) * (fluxes[0] - fluxes[1]) / (2 * step)


@pytest.fixture(scope="module")
def planar_static():
    (sol,), _ = solve_harmonic(plate_problem(plate_mesh(), 10.0), [0.0])
    return sol


def test_planar_loop_moving_through_a_static_field(planar_static):
    """Both ways agree to round-off, and equal -v dPhi/ds from displaced loops within 1e-6
    (central differences inside one element of a P2 field are exact but for round-off);
    a loop at rest in a static field sees no EMF."""
    loop = {"name": "probe", "turns": 3.0, "start": (0.005, 0.004), "end": (0.011, 0.007),
            "velocity": (4.0, -1.5)}
    res = loop_result(planar_static, loop, surface=False)
    assert abs(res.emf_v) > 0
    assert res.emf_v == pytest.approx(res.emf_from_e_v, rel=1e-9)
    assert res.emf_v == pytest.approx(loop["turns"] * displaced(planar_static, loop,
                                                                loop["velocity"], 1e-7),
                                      rel=1e-6)
    rest = loop_result(planar_static, {k: v for k, v in loop.items() if k != "velocity"},
                       surface=False)
    assert abs(rest.emf_v) == 0 and rest.flux_wb == res.flux_wb


def test_axisymmetric_loop_moving_through_a_static_field():
    (sol,), _ = solve_harmonic(billet_problem(0.5), [0.0])
    loop = {"name": "ring", "turns": 2.0, "at": (0.045, 0.012), "velocity": (0.7, 2.0)}
    res = loop_result(sol, loop, surface=False)
    assert res.emf_v == pytest.approx(res.emf_from_e_v, rel=1e-9)
    assert res.emf_v == pytest.approx(2.0 * displaced(sol, loop, loop["velocity"], 1e-7),
                                      rel=1e-6)


def test_moving_loop_in_an_alternating_field(planar_static):
    """At 50 Hz with the plate moving: -(j omega + v . grad) flux = circulation of
    E + v x B for a loop in air, to round-off."""
    (sol,), _ = solve_harmonic(plate_problem(plate_mesh(), 10.0), [50.0])
    loop = {"name": "probe", "start": (-0.03, -0.004), "end": (0.02, -0.005),
            "velocity": (-3.0, 2.0)}
    res = loop_result(sol, loop, surface=False)
    assert res.emf_v == pytest.approx(res.emf_from_e_v, rel=1e-9)
    rest = loop_result(sol, {k: v for k, v in loop.items() if k != "velocity"}, surface=False)
    assert res.emf_v != rest.emf_v
