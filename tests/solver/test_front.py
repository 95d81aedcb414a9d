"""The pre-solve of the layer around a Curie front (:mod:`whorl.solver.front`).

Internal checks (the pre-solve only changes where the effective iteration starts, so
its checks are consistency ones; the physics of the result is checked in
test_heating_saturable.py and test_curie.py against their sources):
- the rows of the re-weighted matrix that the layer uses equal the rows of the whole
  matrix, for random reluctivities (round-off);
- the layer's own matrix is its elements' share of the system's stiffness and eddy
  mass (against skfem's assembly over the whole mesh with the coefficients zero
  outside the layer);
- the layer holds every element below the Curie point and the magnetic ones within
  three skin depths of them, none further;
- a converged field is a fixed point of the pre-solve: held at a field solution
  converged to 1e-9, the layer's problem reproduces it and nothing moves (this checks
  the right-hand side and the frozen outside's load);
- a heating sequence across the Curie point gives the same losses with and without the
  pre-solve (0.5 %: both stop at a 1e-2 change of the reluctivity, as in
  test_heating_saturable.py; 1e-3 measured), with fewer linear solutions (52 against 67
  measured).
"""

from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse as sp
from skfem import asm
from test_curie import A, bar_in_coil
from test_heating_saturable import STEEL, field_sequence, with_bar

import whorl.solver.heating_field as heating_field
from whorl.solver import front
from whorl.solver.coefficients import magnetisation
from whorl.solver.effective import iterate, start_reluctivity
from whorl.solver.heating import HeatingStudy
from whorl.solver.linalg import choose
from whorl.solver.reduction import reduce
from whorl.solver.reweighted import ReweightedMatrix
from whorl.solver.saturable import saturable_part
from whorl.solver.system import assemble

OMEGA = 2 * np.pi * 1000.0


def heated_problem(surface_c, depth=0.002):
    """The bar in its coil, hot at the surface and cool inside (T falls as exp(-d/depth))."""
    problem = with_bar(bar_in_coil(700.0), STEEL)
    mesh = problem.mesh.mesh
    r = mesh.p[0, mesh.t].mean(axis=0)
    bar = problem.mesh.elements("bar")
    temperature = np.full(mesh.t.shape[1], 293.15)
    temperature[bar] = 293.15 + (surface_c - 20.0) * np.exp(-(A - r[bar]) / depth)
    return replace(problem, element_temperature_k=temperature)


def pieces(problem):
    system = assemble(problem)
    sat = saturable_part(system)
    red = reduce(system)
    rew = ReweightedMatrix(red, sat)
    rew.rebase_system(system.S0, system.S1, 1j * OMEGA, system.nu[sat.elements])
    return system, sat, red, rew


def centroids(system):
    mesh = system.basis.mesh
    return mesh.p[:, mesh.t].mean(axis=1).T


def test_row_block_equals_the_rows_of_the_matrix():
    system, sat, red, rew = pieces(heated_problem(900.0))
    rng = np.random.default_rng(5)
    index = np.sort(rng.choice(rew.n, size=rew.n // 3, replace=False))
    block = rew.rows(index)
    for _ in range(2):
        nu = system.nu[sat.elements] * 10 ** rng.uniform(0, 2, sat.elements.size)
        whole = rew.matrix(nu)
        scale = np.abs(whole).max()
        assert np.abs(block.matrix(nu) - whole[index]).max() <= 1e-14 * scale


def test_local_matrix_is_the_layers_share_of_the_system():
    """The layer's matrix equals stiffness and eddy mass assembled over the whole mesh
    with reluctivity and conductivity zero outside the layer (skfem's own assembly)."""
    problem = heated_problem(900.0)
    system, sat, red, rew = pieces(problem)
    layer = np.arange(0, sat.elements.size, 3)  # any subset of the saturable elements
    elements = sat.elements[layer]
    local = front.LocalProblem(front.SaturableForms(system, sat), layer,
                               system.sigma[sat.elements], rew.free_of, OMEGA)
    rng = np.random.default_rng(4)
    nu_layer = rng.uniform(1e3, 1e5, elements.size)
    nu = np.zeros(system.basis.mesh.t.shape[1])
    sigma = np.zeros_like(nu)
    nu[elements], sigma[elements] = nu_layer, system.sigma[elements]
    basis = system.basis
    n_q = basis.X.shape[-1]
    full = (asm(system.form.stiffness, basis, nu=np.repeat(nu[:, None], n_q, axis=1))
            + 1j * OMEGA * asm(system.form.conductor_mass, basis,
                               sigma=np.repeat(sigma[:, None], n_q, axis=1)))
    glue = sp.csr_matrix((np.ones(system.n_field), (np.arange(system.n_field),
                                                    np.maximum(rew.free_of[:system.n_field],
                                                               0))),
                         shape=(system.n_field, rew.n))
    glue = glue.multiply((rew.free_of[:system.n_field] >= 0)[:, None]).tocsr()
    expected = (glue.T @ full @ glue).tocsr()[local.unknowns][:, local.unknowns]
    got = local.matrix(nu_layer)
    scale = np.abs(expected).max()
    assert np.abs(got - expected).max() <= 1e-12 * scale
    # and the unknowns are exactly those the layer's elements touch
    touched = np.unique(rew.free_of[np.unique(basis.element_dofs[:, elements])])
    assert local.unknowns.tolist() == touched[touched >= 0].tolist()


def test_layer_is_the_front_and_three_skin_depths_of_magnetic_steel():
    problem = heated_problem(900.0)
    system, sat, red, rew = pieces(problem)
    assert front.layer_positions(replace(sat, multiplier=None), system.nu[sat.elements],
                                 system.sigma[sat.elements], OMEGA, centroids(system)) is None
    m = np.clip(magnetisation(problem)[sat.elements], 0, 1)
    sat.multiplier = m
    nu = start_reluctivity(sat)
    sigma = system.sigma[sat.elements]
    positions = front.layer_positions(sat, nu, sigma, OMEGA, centroids(system))
    r = centroids(system)[sat.elements, 0]
    below = m < 1
    assert below.any() and (~below).any()
    front_r = r[below].min()
    near = np.flatnonzero(~below)[np.argsort(front_r - r[~below])[:front.NEAREST]]
    thickness = 3 * np.median(np.sqrt(2 * nu[near] / (OMEGA * sigma[near])))
    inside = np.zeros(r.size, dtype=bool)
    inside[positions] = True
    assert inside[below].all()
    # centroids on a radial line (one element row): distance to the front = radial gap
    assert np.array_equal(inside[~below], (front_r - r[~below]) <= thickness)
    assert (~inside).any()


def test_a_converged_field_is_a_fixed_point_of_the_presolve():
    problem = heated_problem(900.0)
    system, sat, red, rew = pieces(problem)
    sat.multiplier = np.clip(magnetisation(problem)[sat.elements], 0, 1)
    solve = choose("scipy-superlu")[1]
    b = system.rhs(OMEGA)
    b_free = red.rhs(b, 1.0, 1j * OMEGA)

    def linear(nu):
        return red.expand(solve(rew.matrix(nu))(b_free))

    x, nu, _ = iterate(linear, sat, start_reluctivity(sat), "test", tolerance=1e-9)
    positions = front.layer_positions(sat, nu, system.sigma[sat.elements], OMEGA,
                                      centroids(system))
    local = front.LocalProblem(front.SaturableForms(system, sat), positions,
                               system.sigma[sat.elements], rew.free_of, OMEGA)
    rows = rew.rows(local.unknowns)
    x_free = red.restrict(x)
    settled, solves = front.relax(front.Layer(sat, positions), local, rows, solve, nu, x_free,
                                  b_free[local.unknowns], red.expand)
    assert solves == 1
    assert np.array_equal(settled, nu)


def test_heating_sequence_across_the_curie_point_agrees_with_and_without_presolve(
        monkeypatch):
    problem = with_bar(bar_in_coil(700.0), STEEL)
    heated = problem.mesh.elements("bar")
    study = HeatingStudy(1000.0, 1.0, 0.1, heated=("bar",))
    surfaces = np.arange(700.0, 1000.0, 25.0)  # the surface passes 770 degC

    temperatures = [heated_problem(surface, depth=0.006).element_temperature_k
                    for surface in surfaces]
    with_front = field_sequence(problem, study, temperatures, heated)
    monkeypatch.setattr(heating_field, "FRONT", False)
    without = field_sequence(problem, study, temperatures, heated)
    for a, b in zip(with_front, without, strict=True):
        assert a.region_loss_w["bar"] == pytest.approx(b.region_loss_w["bar"], rel=5e-3)
    assert sum(a.front_solutions for a in with_front) > 0
    assert sum(a.front_solutions for a in without) == 0
    assert (sum(a.linear_solutions for a in with_front)
            < sum(a.linear_solutions for a in without))
