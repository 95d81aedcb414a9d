"""Matrices re-weighted per element (solver/elementwise.py) against skfem's own assembly.

Internal checks: sum_e c_e A_e gathered into the fixed pattern must equal the matrix
skfem assembles with the coefficient c inside the form (the same quadrature, so to
round-off); the stored heat of a temperature rise computed per element equals the sum
of C times the rise (the shape functions sum to 1 on every element).
"""

import numpy as np
import pytest
from meshing import tensor_mesh
from skfem import BilinearForm, FacetBasis, LinearForm
from skfem.helpers import dot, grad

from whorl.solver.elementwise import ElementwiseMatrix, ElementwiseVector
from whorl.solver.heat import heat_domain
from whorl.solver.heatstep import HeatStepper, Surface
from whorl.solver.materials import Material
from whorl.solver.system import ELEMENTS
from whorl.solver.tables import PropertyTable


@BilinearForm
def weighted_mass(u, v, w):
    return w.c * u * v * w.wt


@BilinearForm
def weighted_conduction(u, v, w):
    return w.c * dot(grad(u), grad(v)) * w.wt


@LinearForm
def weighted_load(v, w):
    return w.c * v * w.wt


@pytest.fixture(scope="module", params=[1, 2])
def domain(request):
    """An axisymmetric heated bar beside an unheated one (P1 and P2), losing heat on top."""
    tm = tensor_mesh(np.linspace(0.0, 0.03, 9), np.linspace(0.0, 0.02, 7),
                     {"bar": lambda r, z: r < 0.02}, axisymmetric=True)
    return heat_domain(tm, request.param, ["bar"], [("bar",)])


def _reference(form, basis, active, c, wt):
    full = form.assemble(basis, c=c[:, None] * np.ones_like(wt), wt=wt)
    return full[active][:, active]


@pytest.mark.parametrize("name, form", [("capacity", weighted_mass),
                                        ("conduction", weighted_conduction)])
def test_reweighted_matrix_equals_assembly(domain, name, form):
    c = np.random.default_rng(7).uniform(0.5, 2.0, domain.elements.size)
    reference = _reference(form, domain.basis, domain.active, c, domain.weight)
    ew = getattr(domain, name)
    got = ew.matrix(c)
    scale = np.abs(reference).max()
    assert np.abs(got - reference).max() <= 1e-13 * scale
    # the stored entries alone, in the pattern's CSR order, and a scalar coefficient
    assert np.abs(ew.with_values(ew.values(c), copy=False) - reference).max() <= 1e-13 * scale
    uniform = _reference(form, domain.basis, domain.active,
                         np.full(c.size, 1.5), domain.weight)
    assert np.abs(ew.matrix(1.5) - uniform).max() <= 1e-13 * scale


@pytest.mark.parametrize("name, form", [("capacity", weighted_mass),
                                        ("conduction", weighted_conduction)])
def test_restricted_matrix_equals_assembly_on_the_subset(domain, name, form):
    """A few elements' matrices taken from the whole set, on a new numbering of the
    unknowns they touch, equal skfem's assembly with the coefficient zero elsewhere."""
    rng = np.random.default_rng(3)
    positions = np.sort(rng.choice(domain.elements.size, domain.elements.size // 3,
                                   replace=False))
    c = rng.uniform(0.5, 2.0, positions.size)
    everywhere = np.zeros(domain.elements.size)
    everywhere[positions] = c
    reference = _reference(form, domain.basis, domain.active, everywhere, domain.weight)
    touched = np.unique(domain.local[domain.basis.element_dofs[:, positions]])
    local = np.full(domain.size, -1)
    local[touched] = np.arange(touched.size)
    part = getattr(domain, name).restricted(positions, local, touched.size)
    expected = reference[touched][:, touched]
    assert np.abs(part.matrix(c) - expected).max() <= 1e-13 * np.abs(expected).max()
    assert reference[np.setdiff1d(np.arange(domain.size), touched)].count_nonzero() == 0
    with pytest.raises(ValueError):
        getattr(domain, name).restricted(positions, np.full(domain.size, -1), 1)


def test_shared_pattern_is_not_copied(domain):
    ew = domain.capacity
    a = ew.with_values(ew.values(1.0), copy=False)
    b = ew.with_values(ew.values(2.0), copy=False)
    assert np.shares_memory(a.indices, b.indices)
    assert not np.shares_memory(ew.matrix(1.0).indices, a.indices)


def test_facet_matrix_and_vector_equal_assembly():
    """Exchange matrix and load over facets, numbering only the dofs on those facets
    (the traces of the others vanish and are dropped)."""
    tm = tensor_mesh(np.linspace(0.0, 1.0, 6), np.linspace(0.0, 1.0, 6), {})
    mesh = tm.mesh
    fb = FacetBasis(mesh, ELEMENTS[2](), facets=mesh.boundaries["top"], intorder=6)
    wt = 1.0 + fb.global_coordinates()[0]
    on_top = np.flatnonzero(np.abs(fb.doflocs[1] - 1.0) < 1e-12)
    local = np.full(fb.N, -1)
    local[on_top] = np.arange(on_top.size)
    c = np.random.default_rng(8).uniform(1.0, 3.0, fb.nelems)
    m = ElementwiseMatrix(weighted_mass, fb, local, on_top.size, c=np.ones_like(wt), wt=wt)
    ref = weighted_mass.assemble(fb, c=c[:, None] * np.ones_like(wt), wt=wt)
    ref = ref[on_top][:, on_top]
    assert np.abs(m.matrix(c) - ref).max() <= 1e-13 * np.abs(ref).max()
    v = ElementwiseVector(weighted_load, fb, local, on_top.size, c=np.ones_like(wt), wt=wt)
    ref = weighted_load.assemble(fb, c=c[:, None] * np.ones_like(wt), wt=wt)[on_top]
    assert np.abs(v.vector(c) - ref).max() <= 1e-13 * np.abs(ref).max()


def test_stored_energy_equals_capacity_matrix_sum(domain):
    """int rho c rise dV per element equals sum(C rise) with C at the same temperatures."""
    steel = Material("m", 1e6, 1.0, thermal_conductivity=40.0, density=7800.0,
                     specific_heat=PropertyTable((300.0, 1000.0), (450.0, 900.0)))
    stepper = HeatStepper(domain, {"bar": steel}, [Surface(("bar",), 10.0)])
    rng = np.random.default_rng(9)
    t = rng.uniform(300.0, 1000.0, domain.size)
    rise = rng.uniform(-5.0, 20.0, domain.size)
    te = domain.element_temperature(t)
    expected = np.sum(domain.capacity.matrix(stepper.heat_capacity(te)) @ rise)
    got = stepper.stored_energy(te, rise)
    assert abs(got - expected) <= 1e-12 * np.sum(np.abs(
        domain.capacity.matrix(stepper.heat_capacity(te)) @ np.abs(rise)))
