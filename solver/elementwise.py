"""Matrices re-weighted per element without re-assembly.

A heating study changes piecewise-constant coefficients (thermal conductivity,
heat capacity, surface exchange) at every iteration of every step. The element
matrices of a unit coefficient are computed once; a new coefficient only
scales them and sums them into a fixed sparsity pattern (one ``bincount``).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp


class ElementwiseMatrix:
    """sum_e c_e A_e for a bilinear form's element (or facet) matrices A_e.

    Parameters
    ----------
    form : skfem BilinearForm
        Its coefficient is left out (unit); extra fields go in ``params``.
    basis : skfem Basis or FacetBasis
    local : ndarray of int
        Global dof -> row/column of the result (-1: not an unknown here; such
        entries are dropped, they must vanish, as traces of interior dofs do).
    size : int
        Number of unknowns.
    """

    def __init__(self, form, basis, local, size: int, **params):
        coo = form.elemental(basis, **params)
        rows, cols = local[coo.indices[0]], local[coo.indices[1]]
        n = basis.nelems
        data = coo.data.reshape(-1, n)
        keep = (rows >= 0) & (cols >= 0)
        dropped = np.abs(data.ravel()[~keep]).max(initial=0.0)
        scale = np.abs(data).max(initial=0.0)
        if dropped > 1e-9 * max(scale, 1e-300):
            raise ValueError("a dropped entry does not vanish: a dof outside the unknowns "
                             "couples in")
        self.size, self.nelems = size, n
        element = np.tile(np.arange(n), data.shape[0])
        self._element = element[keep]
        self._data = data.ravel()[keep]
        key = rows[keep].astype(np.int64) * size + cols[keep]
        uniq, self._slot = np.unique(key, return_inverse=True)
        self._pattern = sp.csr_matrix(
            (np.zeros(uniq.size), (uniq // size, uniq % size)), shape=(size, size))
        self._pattern.sum_duplicates()
        # uniq is sorted row-major, as CSR stores its entries: slot i is data[i].
        self._pattern.data = np.zeros(uniq.size)

    def matrix(self, coefficient) -> sp.csr_matrix:
        """The matrix with ``coefficient`` (one value per element, or a scalar)."""
        c = np.broadcast_to(np.asarray(coefficient, dtype=float), (self.nelems,))
        values = np.bincount(self._slot, weights=self._data * c[self._element],
                             minlength=self._pattern.nnz)
        out = self._pattern.copy()
        out.data = values
        return out


class ElementwiseVector:
    """sum_e c_e b_e for a linear form's element (or facet) vectors b_e."""

    def __init__(self, form, basis, local, size: int, **params):
        coo = form.elemental(basis, **params)
        rows = local[coo.indices[0]]
        n = basis.nelems
        data = coo.data.reshape(-1, n)
        keep = rows >= 0
        self.size, self.nelems = size, n
        self._element = np.tile(np.arange(n), data.shape[0])[keep]
        self._data = data.ravel()[keep]
        self._rows = rows[keep]

    def vector(self, coefficient) -> np.ndarray:
        c = np.broadcast_to(np.asarray(coefficient, dtype=float), (self.nelems,))
        return np.bincount(self._rows, weights=self._data * c[self._element],
                           minlength=self.size)
