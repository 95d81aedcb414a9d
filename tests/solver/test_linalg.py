"""Linear solver backends: each gives SuperLU's solution; auto falls back; iterative stalls loudly.

Systems are small (a few thousand unknowns) on structured meshes: a planar pair of
conductors (massive, voltage-driven: unsymmetric coupling rows; and a stranded coil
with a free plate) and an axisymmetric stranded coil around a closed ring (complex
symmetric).
"""

import numpy as np
import pytest
from meshing import tensor_mesh

from whorl.solver import (
    FluxParallel,
    Massive,
    Material,
    Problem,
    SolveError,
    Stranded,
    linalg,
    solve_system,
)
from whorl.solver.iterative import iterative
from whorl.solver.reduction import reduce
from whorl.solver.system import assemble

COPPER = Material("copper", 58e6)
STEEL = Material("steel", 5e6, 20.0)
AIR = Material("air")


def _box(x0, x1, y0, y1):
    return lambda x, y: (x > x0) & (x < x1) & (y > y0) & (y < y1)


def planar_massive():
    xs = np.linspace(-0.05, 0.05, 26)
    mesh = tensor_mesh(xs, xs, {"go": _box(-0.02, -0.01, -0.01, 0.01),
                                "back": _box(0.01, 0.02, -0.01, 0.01)})
    return Problem(mesh, {"go": COPPER, "back": COPPER, "domain": AIR},
                   (Massive("bar", ("go",), voltage=1e-3, return_regions=("back",),
                            resistance=1e-4),),
                   {s: FluxParallel() for s in ("left", "right", "top", "bottom")}, order=2)


def planar_stranded_plate():
    xs = np.linspace(-0.05, 0.05, 26)
    mesh = tensor_mesh(xs, xs, {"coil": _box(-0.02, 0.02, -0.03, -0.01),
                                "plate": _box(-0.03, 0.03, 0.0, 0.01)})
    return Problem(mesh, {"coil": COPPER, "plate": STEEL, "domain": AIR},
                   (Stranded("coil", ("coil",), turns=10, current=100.0),), order=2)


def axisymmetric_ring():
    rs, zs = np.linspace(0.0, 0.06, 25), np.linspace(-0.04, 0.04, 33)
    mesh = tensor_mesh(rs, zs, {"ring": _box(0.0, 0.02, -0.01, 0.01),
                                "coil": _box(0.03, 0.035, -0.02, 0.02)}, axisymmetric=True)
    return Problem(mesh, {"ring": STEEL, "coil": COPPER, "domain": AIR},
                   (Stranded("coil", ("coil",), turns=20, current=50.0),), order=2)


PROBLEMS = {"planar-massive": planar_massive, "planar-plate": planar_stranded_plate,
            "axisymmetric": axisymmetric_ring}
DIRECT = [n for n in linalg.BACKENDS if n != "iterative"]


def _system(name, frequency=5e3):
    system = assemble(PROBLEMS[name]())
    red = reduce(system)
    omega = 2 * np.pi * frequency
    return red.matrix(1.0, 1j * omega), red.rhs(system.rhs(omega), 1.0, 1j * omega)


@pytest.fixture(scope="module")
def systems():
    return {name: _system(name) for name in PROBLEMS}


@pytest.mark.parametrize("problem", list(PROBLEMS))
@pytest.mark.parametrize("backend", DIRECT)
def test_backend_matches_superlu(systems, backend, problem):
    if not linalg.BACKENDS[backend].available():
        pytest.skip(f"{backend} is not installed (pip install 'whorl[fast]')")
    a, b = systems[problem]
    reference = linalg.superlu(a)(b)
    x = linalg.BACKENDS[backend](a)(b)
    assert np.abs(x - reference).max() <= 1e-10 * np.abs(reference).max()


def test_symmetry_check(systems):
    assert linalg.is_symmetric(systems["axisymmetric"][0])
    assert not linalg.is_symmetric(systems["planar-massive"][0])


def test_frequency_list_reuses_the_analysis():
    """A session refactorises at a new frequency and still gives SuperLU's answers."""
    if not linalg.pardiso_available():
        pytest.skip("pardiso is not installed")
    system = assemble(planar_stranded_plate())
    fast, _ = solve_system(system, [1e3, 3e3], backend="pardiso")
    slow, info = solve_system(system, [1e3, 3e3], backend="scipy-superlu")
    assert info["backend"] == "scipy-superlu"
    for f, s in zip(fast, slow, strict=True):
        assert np.abs(f.x - s.x).max() <= 1e-10 * np.abs(s.x).max()


def test_iterative_converges(systems):
    a, b = systems["planar-massive"]
    reference = linalg.superlu(a)(b)
    solve = iterative(a, rtol=1e-12)
    x = solve(b)
    assert solve.report["iterations"] > 0
    assert solve.report["relative_residual"] <= 1e-11
    assert np.abs(x - reference).max() <= 1e-7 * np.abs(reference).max()


def test_iterative_raises_when_it_stalls(systems):
    a, b = systems["axisymmetric"]
    with pytest.raises(SolveError, match="stalled"):
        iterative(a, maxiter=2, restart=2)(b)


def test_auto_falls_back_when_the_extra_is_missing(monkeypatch):
    for name in linalg.PREFERENCE:
        if name != "scipy-superlu":
            monkeypatch.setattr(linalg.BACKENDS[name], "available", lambda: False)
    name, factorize = linalg.choose("auto")
    assert name == "scipy-superlu"
    assert "iterative" not in linalg.PREFERENCE
    _, info = solve_system(assemble(axisymmetric_ring()), [1e3])
    assert info["backend"] == "scipy-superlu"
    with pytest.raises(SolveError, match="not installed"):
        linalg.choose("pardiso")


def test_unknown_backend_lists_the_known_ones():
    with pytest.raises(SolveError, match="scipy-superlu"):
        linalg.choose("nonesuch")


def test_singular_system_is_a_solve_error():
    import scipy.sparse as sp

    a = sp.csc_matrix(np.array([[1.0, 1.0], [1.0, 1.0]], dtype=complex))
    for name in DIRECT:
        if linalg.BACKENDS[name].available():
            with pytest.raises(SolveError, match="singular"):
                linalg.BACKENDS[name](a)(np.array([1.0, 0.0], dtype=complex))


def _spd(n=30, shift=1.0):
    """A real symmetric positive definite matrix: a 2D five-point Laplacian plus ``shift``
    times the identity (a heat step's conduction plus capacity in miniature)."""
    import scipy.sparse as sp

    t = sp.diags([-1.0, 2.0, -1.0], [-1, 0, 1], shape=(n, n))
    eye = sp.identity(n)
    return (sp.kron(t, eye) + sp.kron(eye, t) + shift * sp.identity(n * n)).tocsr()


def _complex_only(matrix):
    """A backend without a real path: ``positive_definite`` must hand it complex matrices."""
    assert np.iscomplexobj(matrix.data)
    return linalg.superlu(matrix)


@pytest.mark.parametrize("backend", [*DIRECT, "complex-only"])
def test_positive_definite_solves_real_systems_to_round_off(backend):
    """Each backend's real symmetric positive definite session: real solutions with a
    residual at round-off, for two matrices of one pattern in turn (PARDISO keeps the
    analysis of the first), and a real Cholesky refuses an indefinite matrix."""
    if backend == "complex-only":
        factorize = _complex_only
    elif linalg.BACKENDS[backend].available():
        factorize = linalg.BACKENDS[backend]
    else:
        pytest.skip(f"{backend} is not installed (pip install 'whorl[fast]')")
    session = linalg.positive_definite(factorize)
    b = np.random.default_rng(3).standard_normal(900)
    for shift in (1.0, 1e-3):
        a = _spd(shift=shift)
        x = session(a)(b)
        assert x.dtype == np.float64
        # a backward-stable solve: |b - A x| of the order of eps |A| |x| (eps = 2.2e-16)
        norm_a = abs(a).sum(axis=1).max()
        assert np.abs(a @ x - b).max() <= 1e-13 * norm_a * np.abs(x).max()
    if backend == "pardiso":
        with pytest.raises(SolveError, match="not positive definite"):
            session(_spd(shift=-1.0))


def test_positive_definite_pardiso_refuses_complex_matrices():
    if not linalg.pardiso_available():
        pytest.skip("pardiso is not installed")
    with pytest.raises(SolveError, match="real symmetric positive definite"):
        linalg.positive_definite(linalg.pardiso)(_spd().astype(complex))


@pytest.mark.parametrize("symmetric", [True, False])
def test_pardiso_session_reuses_its_layout_for_one_pattern(symmetric):
    """A PARDISO session fed matrices of one pattern (CSC and CSR, as the iterates of a
    nonlinear solve are) keeps the map of their entries to PARDISO's arrays; each solve
    still equals SuperLU's, also after a matrix of another pattern and one whose CSR
    arrays hold an entry twice (summed, not mapped)."""
    import scipy.sparse as sp

    if not linalg.pardiso_available():
        pytest.skip("pardiso is not installed")
    rng = np.random.default_rng(5)
    base = _spd(shift=1.0).astype(complex)
    n = base.shape[0]
    b = rng.standard_normal(n) + 1j * rng.standard_normal(n)
    session = linalg.session(linalg.pardiso)

    def check(m):
        ref = linalg.superlu(sp.csc_matrix(m))(b)
        assert np.abs(session(m)(b) - ref).max() <= 1e-10 * np.abs(ref).max()

    for step in range(3):
        m = base.copy()
        m.data = m.data * (1.0 + 0.5 * rng.random(m.nnz) + 0.1j * step)
        m = (m + m.T) * 0.5 if symmetric else m
        check(m.tocsc())
        check(m.tocsr())
    check((base + sp.eye(n, k=40) + sp.eye(n, k=-40)).tocsr())  # another pattern
    # row 0 stores its diagonal twice (half each): not canonical
    csr = base.tocsr()
    start, stop = csr.indptr[0], csr.indptr[1]
    diag = start + int(np.flatnonzero(csr.indices[start:stop] == 0)[0])
    data = np.insert(csr.data, diag, 0.5 * csr.data[diag])
    data[diag + 1] *= 0.5
    indices = np.insert(csr.indices, diag, 0)
    indptr = csr.indptr + np.r_[0, np.ones(n, dtype=int)]
    twice = sp.csr_matrix((data, indices, indptr), shape=csr.shape)
    assert not twice.has_canonical_format
    check(twice)


def test_pardiso_takes_a_sorted_unsymmetric_csr_as_it_is():
    """An unsymmetric matrix given as a sorted canonical CSR (as the re-weighted field
    matrix of a nonlinear iteration is) is PARDISO's layout already: its entries are
    copied, not gathered, and the solution still equals SuperLU's; a CSC of the same
    matrix is gathered (its entries are in another order)."""
    import scipy.sparse as sp

    if not linalg.pardiso_available():
        pytest.skip("pardiso is not installed")
    rng = np.random.default_rng(11)
    m = _spd(shift=1.0).astype(complex).tocsr()
    m = m + sp.csr_matrix(([0.3j], ([0], [m.shape[0] - 1])), shape=m.shape)  # unsymmetric
    m.sort_indices()
    b = rng.standard_normal(m.shape[0]) + 1j * rng.standard_normal(m.shape[0])
    ref = linalg.superlu(sp.csc_matrix(m))(b)
    solver = linalg._Pardiso()
    for matrix, as_it_is in ((m, True), (m.tocsc(), False)):
        a, _, _ = solver._arrays(matrix, symmetric=False)
        assert (solver._gather[5] is None) is as_it_is
        assert np.array_equal(np.sort_complex(a), np.sort_complex(matrix.data))
        assert np.abs(solver.factorize(matrix)(b) - ref).max() <= 1e-10 * np.abs(ref).max()
    a, _, _ = solver._arrays(m, symmetric=False)
    assert a is not m.data  # a copy: PARDISO's refinement must not see later changes
