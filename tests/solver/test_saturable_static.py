"""Static saturable steel: a conductor inside a steel tube, against Ampere's law.

Source: Ampere's circuital law (any electromagnetics text). The field of a
straight conductor inside a round tube is H = I / (2 pi r) whatever the tube's
material, so the flux per metre through the tube wall is the integral of
B(I / (2 pi r)) dr from the inner to the outer radius: exact for any B-H curve.
The curve is the Frohlich-Kennelly law (values of a typical medium-carbon steel,
see ``solver/materials.py``), given to whorl as 40 tabulated points; the reference
integrates the analytic law. Checked at currents on the steep part of the curve,
at its knee and in deep saturation: within 1 % (P2 elements of 1 mm on radii of
10 to 20 mm: the polygonal boundaries and the tabulation stay well below that).
Newton's method: quadratic convergence near the solution, bounded steps.
"""

import numpy as np
import pytest
from scipy.integrate import quad

from whorl.cases import model
from whorl.cases.loader import parse_case
from whorl.cases.run import solve_case
from whorl.meshes.build import build_mesh
from whorl.solver import linalg
from whorl.solver.constants import MU0
from whorl.solver.harmonic import solve_harmonic
from whorl.solver.newton import NonlinearSystem
from whorl.solver.system import assemble

JS, MU_I = 2.0, 600.0
HK = JS / (MU0 * (MU_I - 1))
A_IN, A_OUT = 10e-3, 20e-3


def law(h):
    return MU0 * h + JS * h / (HK + h)


def wall_flux(current):
    """Wb per metre through the tube wall, by Ampere's law and the analytic curve."""
    return quad(lambda r: law(current / (2 * np.pi * r)), A_IN, A_OUT, limit=200)[0]


def tube_case(current, points=40, linear=False):
    h = np.concatenate([[0.0], np.geomspace(HK * 1e-3, 1e6, points - 1)])
    b = law(h)
    hs = ", ".join(f"{v:.10g}" for v in h)
    bs = ", ".join(f"{v:.10g}" for v in b)
    text = f"""
format = 1
[model]
geometry = "planar"
length_unit = "mm"
order = 2
[mesh]
max_size = 4
[material.fk-steel]
resistivity = "1.6e-7 ohm*m"
bh_curve = {{ h = [{hs}], b = [{bs}] }}
[[region]]
name = "wire"
material = "copper"
shape = "circle"
center = [0, 0]
radius = 5
[[region]]
name = "tube"
material = "fk-steel"
shape = "ring"
center = [0, 0]
inner = 10
outer = 20
mesh_size = 1
[domain]
shape = "circle"
radius = 40
[[source]]
name = "feed"
kind = "stranded"
regions = ["wire"]
turns = 1
current = "{current} A"
[study]
kind = "static"
[[loop]]
name = "wall"
from = [10, 0]
to = [20, 0]
"""
    if linear:
        text = text.replace(f"bh_curve = {{ h = [{hs}], b = [{bs}] }}",
                            "relative_permeability = 600")
    return parse_case(text)


@pytest.fixture(scope="module")
def tube_mesh():
    return build_mesh(model.sized_geometry(tube_case(1.0)))


# steep part (H 0.3-0.6 kA/m), knee (H 3-6 kA/m), deep saturation (H 0.25-0.5 MA/m)
@pytest.mark.parametrize("current", [40.0, 380.0, 3.2e4])
def test_tube_wall_flux_ampere(tube_mesh, current):
    results, _, _ = solve_case(tube_case(current), mesh=tube_mesh)
    sol = results["solutions"][0]
    assert sol["nonlinear"]["converged"]
    flux = complex(*sol["loops"]["wall"]["flux_wb"])
    expected = wall_flux(current)
    assert abs(flux.real) == pytest.approx(expected, rel=0.01)


def test_newton_quadratic_and_bounded(tube_mesh):
    case = tube_case(3.2e4)
    problem = model.problem(case, tube_mesh)
    system = assemble(problem)
    nl = NonlinearSystem(system, linalg.choose("scipy-superlu")[1])
    _, report = nl.solve(system.rhs(0.0))
    h = report.history
    assert report.converged
    assert report.iterations <= 25  # deep saturation from a field-free start
    # quadratic: near the solution each residual is about the square of the one before
    tail = [v for v in h if v < 1e-2]
    assert len(tail) >= 3
    orders = [np.log(tail[k + 1]) / np.log(tail[k]) for k in range(len(tail) - 1)
              if tail[k + 1] > 1e-14]
    assert max(orders) > 1.8, h


def test_linear_material_unchanged_by_saturable_code(tube_mesh):
    """A model without curves takes the linear path (no "nonlinear" entry)."""
    case = tube_case(40.0)
    problem = model.problem(case, tube_mesh)
    from dataclasses import replace
    problem.materials["tube"] = replace(problem.materials["tube"], bh_curve=None)
    sols, _ = solve_harmonic(problem, [0.0])
    assert sols[0].nonlinear is None


def test_saturation_warning_for_linear_steel(tube_mesh):
    """A linear mu_r = 600 tube at 32 kA would carry hundreds of tesla: warned (more than
    about 2.2 T is beyond any steel, common practice); the saturable run is not warned and
    reports a peak flux density on the curve (Ampere: H = I / (2 pi r_inner))."""
    results, _, _ = solve_case(tube_case(3.2e4, linear=True), mesh=tube_mesh)
    peak = results["solutions"][0]["regions"]["tube"]["peak_flux_density_t"]
    assert peak > 100
    (text,) = [w for w in results["warnings"] if "'tube'" in w]
    assert "bh_curve" in text and f"{peak:.3g} T" in text
    results, _, _ = solve_case(tube_case(3.2e4), mesh=tube_mesh)
    assert not any("'tube'" in w for w in results["warnings"])
    peak = results["solutions"][0]["regions"]["tube"]["peak_flux_density_t"]
    assert peak == pytest.approx(law(3.2e4 / (2 * np.pi * A_IN)), rel=0.02)
