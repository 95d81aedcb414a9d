"""Forces: Lorentz force against Ampere's force law and the Maxwell-stress cross-check.

- Force per unit length between two long parallel conductors, mu0 I1 I2 / (2 pi d)
  (Ampere's force law): attractive for like currents, repulsive for opposite ones.
- A conducting ring beside a coil is pushed away from it by its induced current
  (repulsion of induced currents, the principle of electrodynamic levitation;
  common practice): the axial force changes sign when the ring moves from above
  the coil to below it.
"""

import numpy as np
import pytest
from analytic import MU0

from whorl.meshes import (
    Circle,
    DomainSpec,
    Geometry,
    MeshOptions,
    Rectangle,
    RegionSpec,
    build_mesh,
)
from whorl.postprocess.forces import shell_force
from whorl.postprocess.regions import region_totals
from whorl.solver import BUILTIN, Open, Problem, Stranded, solve_harmonic

CURRENT = 100.0
SPACING = 0.02  # m


@pytest.fixture(scope="module")
def wires_mesh():
    geometry = Geometry((RegionSpec("a", Circle((-10, 0), 2), mesh_size=0.4),
                         RegionSpec("b", Circle((10, 0), 2), mesh_size=0.4)),
                        DomainSpec("circle", radius=30, open_boundary=True), False, 1e-3,
                        MeshOptions(order=2, max_size=2))
    return build_mesh(geometry)


@pytest.mark.parametrize("sign", [1, -1])
def test_parallel_conductors(wires_mesh, sign):
    problem = Problem(wires_mesh, {"a": BUILTIN["copper"], "b": BUILTIN["copper"],
                                   "domain": BUILTIN["air"]},
                      sources=(Stranded("one", ("a",), current=CURRENT),
                               Stranded("two", ("b",), current=sign * CURRENT)),
                      boundary={"outer": Open()}, depth_m=1.0)
    (sol,), _ = solve_harmonic(problem, [50.0])
    totals = region_totals(sol)
    expected = MU0 * CURRENT * CURRENT / (2 * np.pi * SPACING)
    fa = totals["a"].force_n[0]
    # Wire a sits at x < 0: like currents pull it towards +x.
    assert fa == pytest.approx(sign * expected, rel=0.01)
    assert totals["b"].force_n[0] == pytest.approx(-fa, rel=1e-3)
    maxwell = shell_force(sol, "a")
    assert maxwell[0] == pytest.approx(fa, rel=0.01)
    assert abs(maxwell[1]) < 0.01 * expected


@pytest.mark.parametrize("z_ring, direction", [(12.0, 1), (-16.0, -1)])
def test_ring_is_repelled_by_a_coil(z_ring, direction):
    geometry = Geometry(
        (RegionSpec("coil", Rectangle((20, -4), (6, 8)), mesh_size=1.0),
         RegionSpec("ring", Rectangle((18, z_ring), (10, 4)), mesh_size=0.5)),
        DomainSpec("circle", radius=90, open_boundary=True), True, 1e-3,
        MeshOptions(order=2, max_size=6))
    mesh = build_mesh(geometry)
    problem = Problem(mesh, {"coil": BUILTIN["copper"], "ring": BUILTIN["aluminium"],
                             "domain": BUILTIN["air"]},
                      sources=(Stranded("coil", ("coil",), turns=50, current=20.0),),
                      boundary={"outer": Open()})
    (sol,), _ = solve_harmonic(problem, [1000.0])
    fz = region_totals(sol)["ring"].force_n[1]
    assert np.sign(fz) == direction
    assert shell_force(sol, "ring")[1] == pytest.approx(fz, rel=0.01)
    # Newton's third law through the field: the coil feels the opposite force.
    assert region_totals(sol)["coil"].force_n[1] == pytest.approx(-fz, rel=0.01)
