"""Sparse direct solvers behind one small interface, registered by name.

A backend is a factory ``factorize(matrix) -> solve`` where ``solve(rhs)``
returns the solution; the matrix is complex CSC (or CSR). ``"auto"`` picks the
first available backend in ``PREFERENCE``. A backend may also offer
``factorize.session()``: a factory of the same shape that keeps what it can
(the symbolic analysis) between matrices of one sparsity pattern, as a
frequency list has; a ``solve`` it returned is valid until its next call; and
``factorize.family(count)``: several factorisations of one pattern from one
analysis, all valid together (the reduced frequency sweep's expansion points).
:func:`positive_definite` gives, for any backend, a session of the same shape for
REAL symmetric positive definite matrices with real right-hand sides (the heat
equation's): a backend with ``factorize.positive_definite()`` factorises them in
real arithmetic (PARDISO: real Cholesky, matrix type 2; SuperLU: real LU), others
take them as complex with a zero imaginary part.

Backends (factor + solve measured on whorl's P2 systems, see docs/performance.md):

- ``"pardiso"``: the sparse direct solver of Intel's oneMKL, called through its
  C interface with ctypes from the ``mkl`` wheel (``pip install "whorl[fast]"``),
  complex symmetric (matrix type 6) when the matrix is symmetric, complex
  unsymmetric (type 13) otherwise; OpenMP threads on the available cores.
- ``"scipy-superlu"``: SciPy's SuperLU, always there, the fallback.
- ``"iterative"`` (:mod:`.iterative`): preconditioned Krylov for models too large
  to factorise; never chosen by ``"auto"``.
"""

from __future__ import annotations

import ctypes
import functools
import glob
import logging
import os
import sys
import weakref

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from threadpoolctl import threadpool_limits

from whorl.solver.errors import SolveError

log = logging.getLogger(__name__)

BACKENDS: dict[str, object] = {}
PREFERENCE: list[str] = []


def register_backend(name: str, available=lambda: True, preferred: bool = False,
                     auto: bool = True):
    """Decorator: register ``factorize`` under ``name``; ``preferred`` puts it first in
    ``PREFERENCE``, ``auto=False`` leaves it out of ``"auto"``'s choice."""

    def wrap(factorize):
        factorize.available = available
        BACKENDS[name] = factorize
        if not auto:
            return factorize
        if preferred:
            PREFERENCE.insert(0, name)
        else:
            PREFERENCE.append(name)
        return factorize

    return wrap


def _singular(detail) -> SolveError:
    return SolveError(f"the system is singular ({detail}): a region floats or a source "
                      "is not tied to anything")


@register_backend("scipy-superlu")
def superlu(matrix):
    """SciPy's SuperLU with its default COLAMD column ordering (measured on a 6.2e4
    unknown axisymmetric P2 system: COLAMD 1.0 s; MMD on A^T + A 22 s, its fill-in
    half as large but its ordering slow on meshes from gmsh)."""
    try:
        # SuperLU is sequential; its small dense kernels only lose when BLAS spins up
        # threads, and badly so when several solves share the cores (sweeps, tests).
        with threadpool_limits(limits=1, user_api="blas"):
            lu = spla.splu(matrix.tocsc(), permc_spec="COLAMD")
    except RuntimeError as exc:  # "Factor is exactly singular"
        raise _singular(exc) from exc

    def solve(rhs):
        with threadpool_limits(limits=1, user_api="blas"):
            return lu.solve(rhs)

    return solve


superlu.positive_definite = lambda: superlu  # real matrices give a real LU as they are


# ---------------------------------------------------------------------------- PARDISO

_MKL = None


def _mkl():
    """oneMKL's single dynamic library (``libmkl_rt``) from the ``mkl`` wheel, or None."""
    global _MKL
    if _MKL is None:
        names = []
        for root in dict.fromkeys((sys.prefix, sys.base_prefix)):
            names += sorted(glob.glob(os.path.join(root, "lib", "libmkl_rt.so*")))
        names += ["libmkl_rt.so.3", "libmkl_rt.so.2", "libmkl_rt.so"]
        # Idle OpenMP threads yield at once instead of spinning: several whorl processes
        # may share the cores (sweeps), and spinning threads then starve the others.
        os.environ.setdefault("KMP_BLOCKTIME", "0")
        _MKL = False
        for name in names:
            try:
                lib = ctypes.CDLL(name)
                lib.pardiso  # noqa: B018 - the symbol must be there
            except (OSError, AttributeError):
                continue
            _MKL = lib
            break
    return _MKL or None


def pardiso_available() -> bool:
    return _mkl() is not None


@functools.lru_cache(maxsize=4)
def _probe(n: int) -> np.ndarray:
    """A fixed random vector of length ``n`` (read-only), for :func:`is_symmetric`."""
    y = np.random.default_rng(12345).standard_normal(n)
    y.flags.writeable = False
    return y


def is_symmetric(matrix, rtol: float = 1e-10) -> bool:
    """Whether ``matrix`` equals its (plain, not conjugate) transpose, tested cheaply:
    A y against A^T y for a random y (an unsymmetric part shows with probability 1)."""
    if matrix.shape[0] != matrix.shape[1]:
        return False
    y = _probe(matrix.shape[0])
    ay, aty = matrix @ y, matrix.T @ y
    scale = np.abs(ay).max() if ay.size else 0.0
    return bool(np.abs(ay - aty).max() <= rtol * scale) if scale > 0 else True


_ERRORS = {-1: "input inconsistent", -2: "not enough memory", -3: "reordering problem",
           -4: "zero pivot", -5: "unclassified internal error", -6: "reordering failed",
           -7: "diagonal matrix is singular", -8: "32-bit integer overflow",
           -9: "not enough memory for the out-of-core solver", -10: "problems with "
           "opening the out-of-core files", -11: "read/write problems with the "
           "out-of-core files"}


class _Pardiso:
    """One PARDISO handle: analysis once per sparsity pattern, factorisation per matrix."""

    def __init__(self, threads: int | None = None, maxfct: int = 1,
                 positive_definite: bool = False):
        self.lib = _mkl()
        # Real symmetric positive definite matrices only (real Cholesky, matrix type 2,
        # real right-hand sides); otherwise every matrix is taken as complex.
        self.positive_definite = positive_definite
        self.maxfct = maxfct  # factorisations of one pattern kept at once (mnum 1..maxfct)
        # Iterative refinement: False is PARDISO's automatic mode (two steps only after a
        # factorisation that perturbed pivots); True forces up to two steps after every
        # solve, which more than doubles a solve's cost: on the shaft-end demo's field
        # matrix (4.5e4 unknowns, no perturbed pivots) 47 ms against 20 ms per solve, for a
        # relative residual of 1.2e-11 against 3.0e-11. Every solve's residual is checked
        # either way.
        self.refine = False
        self.currents = {}
        self.pt = np.zeros(64, dtype=np.int64)
        self.iparm = np.zeros(64, dtype=np.int32)
        self.pattern = None
        self._gather = None  # see _arrays
        self.mtype = None
        self.n = 0
        self.threads = 1 if positive_definite else threads or len(os.sched_getaffinity(0))
        self._finalizer = weakref.finalize(self, _release, self.lib, self.pt, self.iparm, 13)

    @property
    def _dtype(self):
        return np.float64 if self.positive_definite else np.complex128

    def _call(self, phase, a, ia, ja, nrhs=1, b=None, x=None, mnum=1):
        n = ctypes.c_int32(self.n)
        err = ctypes.c_int32(0)
        dummy = np.zeros(2, dtype=self._dtype)
        b = dummy if b is None else b
        x = dummy if x is None else x
        self.lib.MKL_Domain_Set_Num_Threads(ctypes.c_int(self.threads), ctypes.c_int(4))
        self.lib.pardiso(self.pt.ctypes.data_as(ctypes.c_void_p),
                         ctypes.byref(ctypes.c_int32(self.maxfct)),
                         ctypes.byref(ctypes.c_int32(mnum)),
                         ctypes.byref(ctypes.c_int32(self.mtype)),
                         ctypes.byref(ctypes.c_int32(phase)), ctypes.byref(n),
                         a.ctypes.data_as(ctypes.c_void_p), ia.ctypes.data_as(ctypes.c_void_p),
                         ja.ctypes.data_as(ctypes.c_void_p), ctypes.c_void_p(None),
                         ctypes.byref(ctypes.c_int32(nrhs)),
                         self.iparm.ctypes.data_as(ctypes.c_void_p),
                         ctypes.byref(ctypes.c_int32(0)),
                         b.ctypes.data_as(ctypes.c_void_p), x.ctypes.data_as(ctypes.c_void_p),
                         ctypes.byref(err))
        if err.value != 0:
            what = _ERRORS.get(err.value, "unknown error")
            if err.value in (-4, -7) and self.positive_definite:
                raise SolveError(f"the matrix is not positive definite (PARDISO: {what})")
            if err.value in (-4, -7):
                raise _singular(f"PARDISO: {what}")
            raise SolveError(f"PARDISO failed in phase {phase}: {what} (error {err.value})")

    def _arrays(self, matrix, symmetric):
        """``matrix`` as PARDISO takes it: (a, ia, ja) of a sorted CSR (int32 indices; for a
        symmetric matrix the upper triangle with every diagonal entry stored). The map from
        the stored entries of ``matrix`` to ``a`` is kept for the next matrix of the same
        pattern (the iterates of a nonlinear solve), which then costs one gather, or a copy
        where the matrix is laid out so already (an unsymmetric sorted CSR, as
        :class:`~whorl.solver.reweighted.ReweightedMatrix` gives)."""
        m = matrix if matrix.format in ("csr", "csc") else sp.csr_matrix(matrix)
        key = (symmetric, m.format, m.shape)
        kept = self._gather
        if not (kept is not None and kept[0] == key and np.array_equal(kept[1], m.indptr)
                and np.array_equal(kept[2], m.indices)):
            if not m.has_canonical_format:  # duplicate entries: summed, nothing kept
                out = _pardiso_layout(m, symmetric)
                return (out.data, out.indptr.astype(np.int32), out.indices.astype(np.int32))
            probe = m.copy()
            probe.data = np.arange(1, m.nnz + 1, dtype=float)  # where each entry goes
            out = _pardiso_layout(probe, symmetric)
            take = np.rint(out.data).astype(np.int64) - 1  # -1: a diagonal entry added as 0
            where = np.flatnonzero(take >= 0)
            source = take[where]
            if m.format == "csr" and where.size == out.data.size == m.nnz and np.array_equal(
                    source, np.arange(m.nnz)):
                where = source = None  # sorted canonical CSR, nothing added: as it is
            kept = (key, m.indptr.copy(), m.indices.copy(), out.data.size, where, source,
                    np.ascontiguousarray(out.indptr, dtype=np.int32),
                    np.ascontiguousarray(out.indices, dtype=np.int32))
            self._gather = kept
        size, where, source, ia, ja = kept[3:]
        if source is None:  # the matrix is laid out as PARDISO takes it: no gather
            return m.data.copy(), ia, ja
        a = np.zeros(size, dtype=m.dtype)
        a[where] = m.data[source]
        return a, ia, ja

    def factorize(self, matrix, mnum: int = 1):
        """Factorise ``matrix`` as factorisation number ``mnum`` (1..maxfct); a new sparsity
        pattern starts a new analysis, which ends every earlier factorisation."""
        symmetric = is_symmetric(matrix)
        mtype = 6 if symmetric else 13
        a, ia, ja = self._arrays(matrix, symmetric)
        if self.positive_definite and (not symmetric or np.iscomplexobj(matrix.data)):
            raise SolveError("a real symmetric positive definite matrix was expected")
        a = np.ascontiguousarray(a, dtype=self._dtype)
        n = matrix.shape[0]
        if self.positive_definite:
            mtype = 2
        pattern = (mtype, ia, ja)
        same = (self.pattern is not None and self.mtype == mtype and self.n == n
                and (self.pattern[1] is ia or np.array_equal(self.pattern[1], ia))
                and (self.pattern[2] is ja or np.array_equal(self.pattern[2], ja)))
        if not same:
            self._finalizer()  # release a previous analysis
            self.pt[:] = 0
            self.mtype, self.n = mtype, n
            self._set_parameters(symmetric)
            self._finalizer = weakref.finalize(self, _release, self.lib, self.pt, self.iparm,
                                               mtype)
            self._call(11, a, ia, ja)
            self.pattern = pattern
            self.currents.clear()
        else:
            ia, ja = self.pattern[1], self.pattern[2]
        self._call(22, a, ia, ja, mnum=mnum)
        self.current = (a, ia, ja)
        self.currents[mnum] = self.current
        kind = {2: "real symmetric positive definite", 6: "complex symmetric",
                13: "complex unsymmetric"}[mtype]
        log.debug("PARDISO %s: %d unknowns, %d entries in the factors, %d perturbed pivots",
                  kind, self.n,
                  self.iparm[17], self.iparm[13])
        return self._solver(matrix, self.current, mnum)

    def _set_parameters(self, symmetric):
        p = self.iparm
        p[:] = 0
        p[0] = 1    # parameters given here
        p[1] = 3    # fill-reducing ordering: nested dissection, parallel (OpenMP)
        p[7] = 2 if self.refine else 0  # refinement: up to 2 steps, or automatic (0)
        p[9] = 8 if symmetric else 13  # pivot perturbation 1e-8 / 1e-13
        p[10] = 1   # scaling ...
        p[12] = 1   # ... and weighted matching: robust on the badly scaled coupling rows
        p[17] = -1  # report the factors' size
        p[20] = 1   # Bunch-Kaufman pivoting (symmetric indefinite)
        p[26] = 0   # no matrix check
        p[33] = os.cpu_count() or 1  # same digits whatever the threads (sweeps, workers)
        p[34] = 1   # zero-based indices
        if self.positive_definite:
            # Real Cholesky: no pivoting, so no scaling, matching or refinement. One
            # thread gives the same digits on any machine without the reproducible mode,
            # which made each solve five times slower (measured on a 2.1e4-unknown heat
            # matrix: 4.4 ms against 0.8 ms; docs/performance.md).
            p[1] = 2    # nested dissection (METIS), sequential
            p[7] = 0
            p[10] = p[12] = p[20] = 0
            p[33] = 0

    def _solver(self, matrix, current, mnum=1):
        a, ia, ja = current

        def solve(rhs):
            if self.currents.get(mnum) is not current:
                raise SolveError("this PARDISO factorisation was replaced by a later one")
            if self.positive_definite and np.iscomplexobj(rhs):
                raise SolveError("a real factorisation takes real right-hand sides")
            b = np.asarray(rhs, dtype=self._dtype)
            shape = b.shape
            b = np.asfortranarray(b.reshape(self.n, -1))
            x = np.zeros_like(b, order="F")
            self._call(33, a, ia, ja, nrhs=b.shape[1], b=b, x=x, mnum=mnum)
            if not np.all(np.isfinite(x)):
                raise _singular("PARDISO: the solution is not finite")
            if b.shape[1] > 1:  # one product: a random combination of the columns
                w = np.random.default_rng(0).standard_normal(b.shape[1])
                r = matrix @ (x @ w) - b @ w
            else:
                r = matrix @ x - b
            scale = np.abs(b).max()
            if scale > 0 and np.abs(r).max() > 1e-6 * scale:
                raise _singular(f"PARDISO: relative residual {np.abs(r).max() / scale:.1e}")
            return x.reshape(shape)

        return solve


def _pardiso_layout(matrix, symmetric):
    """CSR with sorted indices; for a symmetric matrix its upper triangle with every
    diagonal entry stored (PARDISO asks for it)."""
    if symmetric:
        n = matrix.shape[0]
        upper = sp.triu(matrix, format="coo")
        diag = np.arange(n)
        csr = sp.csr_matrix((np.concatenate([upper.data, np.zeros(n, upper.dtype)]),
                             (np.concatenate([upper.row, diag]),
                              np.concatenate([upper.col, diag]))), shape=matrix.shape)
    else:
        csr = sp.csr_matrix(matrix, copy=True)
    csr.sum_duplicates()
    csr.sort_indices()
    return csr


def _release(lib, pt, iparm, mtype):
    if not pt.any():
        return
    n = ctypes.c_int32(0)
    err = ctypes.c_int32(0)
    one = ctypes.c_int32(1)
    dummy = np.zeros(2, dtype=np.complex128)
    idx = np.zeros(2, dtype=np.int32)
    lib.pardiso(pt.ctypes.data_as(ctypes.c_void_p), ctypes.byref(one), ctypes.byref(one),
                ctypes.byref(ctypes.c_int32(mtype)), ctypes.byref(ctypes.c_int32(-1)),
                ctypes.byref(n), dummy.ctypes.data_as(ctypes.c_void_p),
                idx.ctypes.data_as(ctypes.c_void_p), idx.ctypes.data_as(ctypes.c_void_p),
                ctypes.c_void_p(None), ctypes.byref(one), iparm.ctypes.data_as(ctypes.c_void_p),
                ctypes.byref(ctypes.c_int32(0)), dummy.ctypes.data_as(ctypes.c_void_p),
                dummy.ctypes.data_as(ctypes.c_void_p), ctypes.byref(err))
    pt[:] = 0


@register_backend("pardiso", available=pardiso_available, preferred=True)
def pardiso(matrix):
    """oneMKL PARDISO (complex symmetric when the matrix is, else unsymmetric)."""
    return _Pardiso().factorize(matrix)


pardiso.session = lambda: _Pardiso().factorize


def _pardiso_family(count, refine=True):
    handle = _Pardiso(maxfct=count)
    handle.refine = refine
    return lambda matrix, k: handle.factorize(matrix, mnum=k + 1)


pardiso.family = _pardiso_family
pardiso.exploits_symmetry = True  # L D L^T for complex symmetric matrices (.symmetrise)
pardiso.positive_definite = lambda: _Pardiso(positive_definite=True).factorize


def session(factorize):
    """A factory that keeps what ``factorize``'s backend can between calls (see above)."""
    maker = getattr(factorize, "session", None)
    return maker() if maker is not None else factorize


def positive_definite(factorize):
    """A session (see :func:`session`) for real symmetric positive definite matrices and
    real right-hand sides: ``factorize(matrix) -> solve`` with real solutions. In real
    arithmetic where the backend offers it (``factorize.positive_definite()``), else the
    matrix goes to the backend as complex with a zero imaginary part."""
    maker = getattr(factorize, "positive_definite", None)
    if maker is not None:
        return maker()
    complex_session = session(factorize)

    def real_factorize(matrix):
        solve = complex_session(sp.csc_matrix(matrix, dtype=complex))
        return lambda rhs: np.real(solve(np.asarray(rhs, dtype=complex)))

    return real_factorize


def family(factorize, count: int, refine: bool = True):
    """``factorize(matrix, k)`` for k in 0..count-1 whose solves all stay valid together,
    for matrices of one sparsity pattern: PARDISO analyses the pattern once and keeps
    ``count`` numerical factorisations; other backends factorise independently.
    ``refine=False`` skips PARDISO's iterative refinement (two extra solves each time;
    every solve's residual is still checked)."""
    maker = getattr(factorize, "family", None)
    if maker is not None:
        return maker(count, refine)
    return lambda matrix, k: factorize(matrix)


def choose(name: str = "auto") -> tuple[str, object]:
    """The backend ``name`` (or the best available one for ``"auto"``)."""
    if name == "auto":
        for candidate in PREFERENCE:
            if BACKENDS[candidate].available():
                return candidate, BACKENDS[candidate]
    if name not in BACKENDS:
        raise SolveError(f"unknown linear solver {name!r}; known: {', '.join(BACKENDS)}")
    if not BACKENDS[name].available():
        raise SolveError(f"linear solver {name!r} is not installed")
    return name, BACKENDS[name]
from whorl.solver import iterative  # noqa: E402,F401  (registers "iterative")
