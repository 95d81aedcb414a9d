"""Sparse direct solvers behind one small interface, registered by name.

A backend is a factory ``factorize(matrix) -> solve`` where ``solve(rhs)``
returns the solution; the matrix is complex CSC. ``"auto"`` picks the first
available backend in ``PREFERENCE``.
"""

from __future__ import annotations

import scipy.sparse.linalg as spla
from threadpoolctl import threadpool_limits

from whorl.solver.errors import SolveError

BACKENDS: dict[str, object] = {}
PREFERENCE: list[str] = []


def register_backend(name: str, available=lambda: True, preferred: bool = False):
    """Decorator: register ``factorize`` under ``name``."""

    def wrap(factorize):
        factorize.available = available
        BACKENDS[name] = factorize
        if preferred:
            PREFERENCE.insert(0, name)
        else:
            PREFERENCE.append(name)
        return factorize

    return wrap


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
        raise SolveError(f"the system is singular ({exc}): a region floats or a source "
                         "is not tied to anything") from exc

    def solve(rhs):
        with threadpool_limits(limits=1, user_api="blas"):
            return lu.solve(rhs)

    return solve


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
