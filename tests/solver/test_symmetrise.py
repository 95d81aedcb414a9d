"""Circuit rows scaled to a symmetric matrix (whorl.solver.symmetrise).

Internal checks against the formulation on paper (the rows of whorl.solver.system): a
branch row couples to the field by -j omega c^T where its column has -c, so its factor
is 1/(j omega); a driven source's row has kappa sign_b where the branch column has
-sign_b, so -1/(j omega kappa); a series capacitor's row 1/(j omega kappa). The scaled
matrix must be symmetric, a solve through the scaling must equal the plain solve to
round-off, and where no scaling can make the matrix symmetric (0 Hz: the branch rows
have no field entries) nothing is scaled.
"""

from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse as sp
from meshing import tensor_mesh

from whorl.solver import FluxParallel, Massive, Material, Problem, Stranded, linalg
from whorl.solver.reduction import reduce
from whorl.solver.symmetrise import row_scaling, scale_rows, symmetrising
from whorl.solver.system import assemble

COPPER = Material("copper", 58e6)
STEEL = Material("steel", 5e6, 20.0)
AIR = Material("air")
OMEGA = 2 * np.pi * 5e3
SIDES = {s: FluxParallel() for s in ("left", "right", "top", "bottom")}


def _box(x0, x1, y0, y1):
    return lambda x, y: (x > x0) & (x < x1) & (y > y0) & (y < y1)


def planar_massive_with_capacitor():
    """A voltage-driven go-and-return bar pair through a series capacitor, and a free
    plate (its own branch, current zero)."""
    xs = np.linspace(-0.05, 0.05, 21)
    mesh = tensor_mesh(xs, xs, {"go": _box(-0.02, -0.01, -0.02, 0.0),
                                "back": _box(0.01, 0.02, -0.02, 0.0),
                                "plate": _box(-0.03, 0.03, 0.01, 0.02)})
    source = Massive("bar", ("go",), voltage=1e-3, return_regions=("back",),
                     resistance=1e-4, capacitance=2e-3)
    return Problem(mesh, {"go": COPPER, "back": COPPER, "plate": STEEL, "domain": AIR},
                   (source,), SIDES, order=2)


def axisymmetric_turns_and_winding():
    """Two massive turns in series (current-driven) and a voltage-driven winding."""
    rs, zs = np.linspace(0.0, 0.06, 25), np.linspace(-0.04, 0.04, 33)
    mesh = tensor_mesh(rs, zs, {"ring": _box(0.0, 0.02, -0.01, 0.01),
                                "t1": _box(0.03, 0.035, -0.02, -0.005),
                                "t2": _box(0.03, 0.035, 0.005, 0.02),
                                "coil": _box(0.045, 0.05, -0.02, 0.02)}, axisymmetric=True)
    return Problem(mesh, {"ring": STEEL, "t1": COPPER, "t2": COPPER, "coil": COPPER,
                          "domain": AIR},
                   (Massive("turns", ("t1", "t2"), current=100.0),
                    Stranded("coil", ("coil",), turns=20, voltage=5.0, resistance=0.2)),
                   order=2)


def planar_massive_without_resistance():
    """The bar pair driven straight by its voltage: the driven row's diagonal is zero, so
    the symmetric factorisation must pivot (Bunch-Kaufman)."""
    problem = planar_massive_with_capacitor()
    source = replace(problem.sources[0], resistance=0.0, capacitance=None)
    return replace(problem, sources=(source,))


PROBLEMS = {"planar": planar_massive_with_capacitor,
            "planar-zero-diagonal": planar_massive_without_resistance,
            "axisymmetric": axisymmetric_turns_and_winding}


@pytest.fixture(scope="module", params=list(PROBLEMS))
def case(request):
    system = assemble(PROBLEMS[request.param]())
    red = reduce(system)
    tail = system.size - system.n_field
    return system, red, tail


def expected_factors(system, omega):
    """The factors on paper, in the system's unknown order (field, branches, driven
    sources, capacitors)."""
    n_b, n_d, n_c = len(system.branches), len(system.driven), len(system.capacitors)
    kappa = system.kappa
    return np.concatenate([np.full(n_b, 1 / (1j * omega)),
                           np.full(n_d, -1 / (1j * omega * kappa)),
                           np.full(n_c, 1 / (1j * omega * kappa))])


def test_factors_are_those_of_the_formulation(case):
    system, red, tail = case
    assert tail > 0
    m = red.matrix(1.0, 1j * OMEGA)
    d = row_scaling(m, tail)
    assert d is not None
    assert np.all(d[:-tail] == 1)
    expected = expected_factors(system, OMEGA)
    assert np.abs(d[-tail:] - expected).max() <= 1e-12 * np.abs(expected).max()
    scaled = scale_rows(m, d)
    assert linalg.is_symmetric(scaled, rtol=1e-12)
    assert not linalg.is_symmetric(m)  # the unscaled one is not


@pytest.mark.parametrize("columns", [1, 3])
def test_solve_through_the_scaling_equals_the_plain_solve(case, columns):
    system, red, tail = case
    m = red.matrix(1.0, 1j * OMEGA)
    rng = np.random.default_rng(7)
    b = rng.standard_normal((m.shape[0], columns)) + 1j * rng.standard_normal(
        (m.shape[0], columns))
    b = b[:, 0] if columns == 1 else b
    plain = linalg.superlu(m)(b)
    through = symmetrising(linalg.superlu, tail)(m)(b)
    assert np.abs(through - plain).max() <= 1e-10 * np.abs(plain).max()


def test_pardiso_factorises_the_scaled_matrix_as_complex_symmetric(case):
    if not linalg.pardiso_available():
        pytest.skip("pardiso is not installed")
    system, red, tail = case
    m = red.matrix(1.0, 1j * OMEGA)
    b = red.rhs(system.rhs(OMEGA), 1.0, 1j * OMEGA)
    handle = linalg._Pardiso()
    x = symmetrising(handle.factorize, tail)(m)(b)
    assert handle.mtype == 6  # complex symmetric (L D L^T), not 13 (LU)
    ref = linalg.superlu(m)(b)
    assert np.abs(x - ref).max() <= 1e-10 * np.abs(ref).max()


def test_scaling_kept_for_iterates_and_found_again_when_circuit_rows_change(case,
                                                                          monkeypatch):
    """A wrapper finds the factors once for matrices that differ in their field block only
    (the iterates of a nonlinear solution) and again when a circuit row changes; every
    solve equals the plain one either way."""
    import whorl.solver.symmetrise as symmetrise

    _, red, tail = case
    calls = []
    monkeypatch.setattr(symmetrise, "row_scaling",
                        lambda m, t: calls.append(1) or row_scaling(m, t))
    wrapped = symmetrising(linalg.superlu, tail)
    base = red.matrix(1.0, 1j * OMEGA).tocsr()
    n_field = base.shape[0] - tail
    rng = np.random.default_rng(11)
    b = rng.standard_normal(base.shape[0]) + 0j
    field_rows = np.repeat(np.arange(base.shape[0]), np.diff(base.indptr)) < n_field
    for k, scale in enumerate((1.0, 1.3, 0.7)):  # field block scaled: a new iterate
        m = base.copy()
        m.data[field_rows] *= scale
        m = sp.csr_matrix((m.data, base.indices, base.indptr), shape=base.shape)
        x = wrapped(m)(b)
        assert np.abs(m @ x - b).max() <= 1e-9 * np.abs(b).max()
        assert len(calls) == 1, k
    m = base.copy()
    m.data[~field_rows] *= 2.0  # a circuit row changed
    x = wrapped(m)(b)
    assert np.abs(m @ x - b).max() <= 1e-9 * np.abs(b).max()
    assert len(calls) == 2


def test_scaling_in_place_equals_the_copy(case):
    """``overwrite`` scales a CSR in place (no copy of its entries) to the same matrix; a
    CSC is converted, so its entries are never touched."""
    _, red, tail = case
    m = red.matrix(1.0, 1j * OMEGA)
    d = row_scaling(m, tail)
    copied = scale_rows(m, d)
    csr = m.tocsr(copy=True)
    before = csr.data.copy()
    in_place = scale_rows(csr, d, overwrite=True)
    assert in_place is csr and not np.array_equal(csr.data, before)
    assert np.abs(in_place - copied).max() == 0
    csc = m.tocsc(copy=True)
    kept = csc.data.copy()
    assert np.abs(scale_rows(csc, d, overwrite=True) - copied).max() == 0
    assert np.array_equal(csc.data, kept)


def test_static_matrix_is_left_as_it_is(case):
    _, red, tail = case
    assert row_scaling(red.matrix(1.0, 0.0), tail) is None


def test_no_scaling_where_the_circuit_rows_cannot_match(case):
    """A circuit row whose entries are not one multiple of its column's: refused, and the
    wrapper factorises the matrix as it is."""
    _, red, tail = case
    m = sp.csr_matrix(red.matrix(1.0, 1j * OMEGA))
    last = m.shape[0] - tail  # the first circuit row
    lo, hi = m.indptr[last], m.indptr[last + 1]
    off = lo + np.flatnonzero(m.indices[lo:hi] < last)  # its field entries
    m.data[off[np.argmax(np.abs(m.data[off]))]] *= 1.5  # the largest off the common factor
    assert row_scaling(m, tail) is None
    b = np.ones(m.shape[0], complex)
    plain = linalg.superlu(m)(b)
    assert np.array_equal(symmetrising(linalg.superlu, tail)(m)(b), plain)


def test_only_a_backend_that_gains_by_symmetry_gets_the_scaling(case):
    """SuperLU's LU and GMRES gain nothing from symmetry (and GMRES's residual would weigh
    the scaled rows less): their factorize is left as it is; PARDISO's is wrapped."""
    from whorl.solver.iterative import iterative
    from whorl.solver.symmetrise import circuit_scaling

    system, _, _ = case
    for backend in (linalg.superlu, iterative):
        assert circuit_scaling(backend, system, backend) is backend
    assert circuit_scaling(linalg.pardiso, system, linalg.pardiso) is not linalg.pardiso
