r"""Row scaling that makes a circuit-coupled field matrix symmetric.

The harmonic matrix M = S0 + j omega S1 (:mod:`.system`) is symmetric in its field
block, but its circuit rows are not the transposes of their columns: a branch couples
to the field by -c_b in its column (S0) and by -j omega c_b^T in its row (S1); a driven
source's row carries kappa sign_b where the branch's column carries -sign_b. A diagonal
row scaling D (one for the field rows) with

.. math::

    d_i M_{ij} = d_j M_{ji}

makes D M symmetric: d = 1/(j omega) on a branch row, -1/(j omega kappa) on a driven
source's row, and so on along the circuit. D M x = D b has the same solution, and a
complex symmetric matrix factorises as L D L^T at about two thirds of the cost of an
LU and half its memory (measured on the shaft-end demo's field matrix, 4.5e4
unknowns, PARDISO on two threads: 39 ms against 57 ms per factorisation, 13 ms
against 21 ms per solve; docs/performance.md).

Only the last ``tail`` rows (the circuit unknowns, which the numbering puts after the
field's) are scaled. Each takes its factor from its largest entry whose partner row is
scaled already (field rows first), and every scaled row is then checked against its
column. Where no factors pass (a moving conductor's motional current in the branch rows,
a static matrix without the S1 coupling) the matrix is factorised as it is. Of the
demos, all but the two with moving conductors become symmetric.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp


def row_scaling(matrix, tail: int):
    """Factors d (one per row, one on all but the last ``tail`` rows) with diag(d) M
    symmetric in its last ``tail`` rows and columns, or None where there are none."""
    m = matrix.tocsr()
    n = m.shape[0]
    if tail <= 0 or tail >= n or m.shape[1] != n:
        return None
    if not m.has_sorted_indices:
        m = m.sorted_indices()
    first = n - tail
    d = np.ones(n, dtype=np.result_type(m.dtype, float))
    known = np.zeros(n, dtype=bool)
    known[:first] = True
    for _ in range(tail):  # a pass fixes every row with a scaled partner
        progressed = False
        for i in np.flatnonzero(~known):
            lo, hi = m.indptr[i], m.indptr[i + 1]
            cols, vals = m.indices[lo:hi], m.data[lo:hi]
            usable = (cols != i) & known[cols] & (vals != 0)
            for k in np.flatnonzero(usable)[np.argsort(-np.abs(vals[usable]))]:
                j = cols[k]
                row = m.indices[m.indptr[j]:m.indptr[j + 1]]
                at = np.searchsorted(row, i)
                if at < row.size and row[at] == i and m.data[m.indptr[j] + at] != 0:
                    d[i] = d[j] * m.data[m.indptr[j] + at] / vals[k]
                    known[i] = progressed = True
                    break
        if known.all() or not progressed:
            break
    if np.all(d == 1) or not np.all(np.isfinite(d)):
        return None
    # the scaled circuit rows against the scaled circuit columns (the field block is
    # checked where the matrix is factorised: unsymmetric, it is factorised as such)
    rows = sp.diags(d[first:]) @ m[first:]
    cols = (sp.diags(d) @ m[:, first:]).T.tocsr()  # d_j M_ji, row i, column j
    scale = abs(rows).max()
    return d if scale > 0 and abs(rows - cols).max() <= 1e-12 * scale else None


def scale_rows(matrix, d, overwrite: bool = False):
    """diag(d) M as a CSR matrix. M is left as it is (the result shares its index arrays
    when it is a CSR, so neither may change its structure), unless ``overwrite``: then a
    CSR M of a type that holds the factors is scaled in place and returned."""
    m = matrix.tocsr()
    in_place = overwrite and m.dtype == np.result_type(m.dtype, d.dtype)
    if in_place:
        data = m.data
    else:
        data = m.data.astype(np.result_type(m.dtype, d.dtype), copy=True)
    rows = np.flatnonzero(d != 1)
    if rows.size:  # the circuit rows only: a slice from the first of them on
        start = rows[0]
        data[m.indptr[start]:] *= np.repeat(d[start:], np.diff(m.indptr[start:]))
    if in_place:
        return m
    out = sp.csr_matrix((data, m.indices, m.indptr), shape=m.shape)
    out.has_sorted_indices = m.has_sorted_indices
    return out


class _ScaledSolve:
    """The solve of diag(d) M, taking right-hand sides of M x = b."""

    def __init__(self, solve, d):
        self._solve, self._d = solve, d

    def __call__(self, rhs):
        b = np.asarray(rhs)
        return self._solve(b * (self._d if b.ndim == 1 else self._d[:, None]))

    def __getattr__(self, name):  # a backend's report and the like
        if name.startswith("_"):
            raise AttributeError(name)
        return getattr(self._solve, name)


def circuit_scaling(backend, system, factorize, overwrite: bool = False):
    """``factorize`` wrapped by :func:`symmetrising` for ``system``'s circuit rows where
    ``backend`` (a registered backend function) gains by symmetry
    (``backend.exploits_symmetry``: PARDISO's L D L^T); as it is otherwise (SuperLU's LU
    and GMRES gain nothing, and GMRES's residual would weigh the scaled rows less)."""
    if not getattr(backend, "exploits_symmetry", False):
        return factorize
    return symmetrising(factorize, system.size - system.n_field, overwrite)


def symmetrising(factorize, tail: int, overwrite: bool = False):
    """``factorize`` (matrix, ... -> solve) for matrices whose last ``tail`` rows are
    circuit rows: each matrix that a row scaling makes symmetric goes to it scaled, and
    its solve scales the right-hand sides alike, so callers see M x = b unchanged.
    ``overwrite``: the callers give up the matrices they pass (each a new one, not used
    again), so a CSR one is scaled in place instead of copied."""
    if tail <= 0:
        return factorize

    kept = {}  # the last factors and what they were found for

    def wrapped(matrix, *args, **kwargs):
        m = matrix.tocsr()  # once: a CSC matrix is converted for the scaling and the copy
        d = _kept_scaling(kept, m, tail)
        if d is None:
            return factorize(matrix, *args, **kwargs)
        return _ScaledSolve(factorize(scale_rows(m, d, overwrite), *args, **kwargs), d)

    return wrapped


def _kept_scaling(kept: dict, m, tail: int):
    """:func:`row_scaling` of the CSR ``m``, kept for the next matrix of the same pattern
    whose circuit rows hold the same values (the iterates of a nonlinear solution change
    the field block only). The factors depend on the circuit rows alone; a stale choice
    could only cost speed, never accuracy: a matrix that the factors leave unsymmetric is
    factorised as such (the backend checks), and D M x = D b has the solution of M x = b
    for any nonsingular D."""
    first = m.indptr[m.shape[0] - tail] if 0 < tail < m.shape[0] else 0
    key = (m.shape, m.indptr, m.indices, m.data[first:])
    old = kept.get("key")
    if old is not None and old[0] == key[0] and all(
            a is b or np.array_equal(a, b) for a, b in zip(old[1:], key[1:], strict=True)):
        return kept["d"]
    kept["key"] = (m.shape, m.indptr, m.indices, m.data[first:].copy())  # the pattern by
    # reference: the re-weighted iterates share it, so the test above is an identity
    kept["d"] = row_scaling(m, tail)
    return kept["d"]
