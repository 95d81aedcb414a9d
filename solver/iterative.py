r"""An iterative backend for models too large to factorise: preconditioned GMRES.

The harmonic matrix of the field is :math:`A = K + j\omega M` with K and M real,
symmetric and positive (semi)definite. Preconditioning it with the real matrix
:math:`P = K + \omega M` (``Re A + Im A``) puts every eigenvalue of
:math:`P^{-1} A` on the segment from 1 to j (the ratio
:math:`(\lambda + j\mu)/(\lambda + \mu)` with :math:`\lambda, \mu \ge 0`), away from
0 whatever the frequency and the mesh, so GMRES converges in a number of steps
that hardly grows with the model (O. Axelsson and A. Kucherov, "Real valued
iterative methods for solving complex symmetric linear systems", Numer. Linear
Algebra Appl. 7, 2000, analyse this preconditioner). P is applied approximately,
by one V-cycle of smoothed-aggregation algebraic multigrid (pyamg, in the
``fast`` extra) or, without pyamg, by an incomplete LU factorisation of P
(SciPy).

The few unknowns beyond the field (a voltage per massive conductor, a current
per driven source) have long rows and columns; they are left out of the
multigrid hierarchy and treated exactly in a block factorisation: with W =
P^-1 A_fs (one multigrid application per coupling unknown, once), the Schur
complement S = A_ss - A_sf W is a small dense matrix, and each application
costs one multigrid cycle more than the field alone.

Registered as ``"iterative"``; never chosen by ``"auto"``. Its convergence
(steps, relative residual) is logged; a solve that does not reach ``RTOL``
within ``MAXITER`` steps raises :class:`SolveError`.
"""

from __future__ import annotations

import logging
import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from whorl.solver.errors import SolveError
from whorl.solver.linalg import register_backend

log = logging.getLogger(__name__)

RTOL = 1e-10      # relative residual ||b - A x|| / ||b|| to reach
MAXITER = 600     # GMRES steps at most (restarted every RESTART)
RESTART = 60
LONG_ROW = 200    # a row with more entries than this is a coupling row, not a field row
MAX_BORDER = 64   # coupling unknowns treated exactly (a dense column each)


def _has_pyamg() -> bool:
    try:
        import pyamg  # noqa: F401
    except ImportError:
        return False
    return True


def _field_cycle(p):
    """A real operator applying approximately p^-1 (multigrid, or incomplete LU)."""
    if _has_pyamg():
        import pyamg

        ml = pyamg.smoothed_aggregation_solver(p, symmetry="symmetric", max_coarse=500)
        return ml.aspreconditioner(cycle="V"), (
            f"smoothed-aggregation multigrid ({len(ml.levels)} levels)")
    ilu = spla.spilu(p.tocsc(), drop_tol=1e-5, fill_factor=20)
    return spla.LinearOperator(p.shape, ilu.solve, dtype=float), "incomplete LU"


def preconditioner(matrix):
    """The operator applying approximately A^-1: P^-1 (P = Re A + Im A) on the field
    rows, the coupling unknowns exactly through their Schur complement."""
    a = sp.csr_matrix(matrix)
    n = a.shape[0]
    long_rows = np.flatnonzero(np.diff(a.indptr) > LONG_ROW)
    long_cols = np.flatnonzero(np.diff(a.tocsc().indptr) > LONG_ROW)
    special = np.union1d(long_rows, long_cols)
    if special.size > MAX_BORDER:  # too many to treat exactly: keep them in P
        special = special[:0]
    field = np.setdiff1d(np.arange(n), special)
    a_ff = a[field][:, field]
    p = (a_ff.real + a_ff.imag).tocsr()
    p.eliminate_zeros()
    cycle, kind = _field_cycle(p)

    def field_inverse(v):
        if np.iscomplexobj(v):
            return cycle @ np.ascontiguousarray(v.real) + 1j * (
                cycle @ np.ascontiguousarray(v.imag))
        return cycle @ v

    if special.size == 0:
        return spla.LinearOperator(a.shape, lambda v: field_inverse(np.asarray(v).ravel()),
                                   dtype=complex), kind
    a_fs = a[field][:, special].toarray()
    a_sf = a[special][:, field]
    a_ss = a[special][:, special].toarray()
    w = np.column_stack([field_inverse(a_fs[:, k]) for k in range(special.size)])
    schur = np.linalg.inv(a_ss - a_sf @ w)

    def apply(v):
        v = np.asarray(v).ravel()
        z = field_inverse(v[field])
        y_s = schur @ (v[special] - a_sf @ z)
        y = np.empty(n, dtype=complex)
        y[field] = z - w @ y_s
        y[special] = y_s
        return y

    return spla.LinearOperator(a.shape, apply, dtype=complex), (
        f"{kind}, {special.size} coupling unknowns by their Schur complement")


@register_backend("iterative", auto=False)
def iterative(matrix, rtol: float = RTOL, maxiter: int = MAXITER, restart: int = RESTART):
    """GMRES preconditioned by multigrid on K + omega M; see the module's docstring."""
    t0 = time.perf_counter()
    a = sp.csr_matrix(matrix)
    m, kind = preconditioner(a)
    setup = time.perf_counter() - t0

    def solve(rhs):
        b = np.asarray(rhs, dtype=complex)
        if b.ndim > 1:
            return np.column_stack([solve(b[:, k]) for k in range(b.shape[1])])
        norm = np.linalg.norm(b)
        if norm == 0:
            return np.zeros_like(b)
        steps = []
        t1 = time.perf_counter()
        x, status = spla.gmres(a, b, M=m, rtol=rtol, atol=0.0, restart=restart,
                               maxiter=max(1, -(-maxiter // restart)),
                               callback=lambda r: steps.append(r), callback_type="pr_norm")
        residual = float(np.linalg.norm(b - a @ x) / norm)
        solve.report = {"method": f"GMRES({restart}) with {kind}", "iterations": len(steps),
                        "relative_residual": residual, "gmres_status": int(status),
                        "setup_s": setup,
                        "solve_s": time.perf_counter() - t1}
        log.info("iterative: %s, %d steps, relative residual %.2e (setup %.2f s, solve %.2f s)",
                 solve.report["method"], len(steps), residual, setup, solve.report["solve_s"])
        # Judge by the true residual: GMRES's own status follows the preconditioned one,
        # which near round-off can miss its target while the solution is already good.
        if not np.isfinite(residual) or residual > 10 * rtol:
            raise SolveError(
                f"the iterative solver stalled: relative residual {residual:.2e} after "
                f"{len(steps)} GMRES steps (asked for {rtol:.0e} within {maxiter}); use a "
                "direct solver ([model] solver = \"auto\") or a coarser mesh")
        return x

    solve.report = None
    return solve
