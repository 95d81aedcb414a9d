r"""The factorised field matrix as an affine function of the saturable elements' reluctivity.

An effective-permeability iteration (:mod:`.effective`) changes only the reluctivity
nu_e of the saturable elements, and S0 only through

.. math::

    S_0(\nu) = S_0(\nu^0) + \sum_e (\nu_e - \nu_e^0) K_e ,

with K_e the element's stiffness for a unit reluctivity. The reduction
(:mod:`.reduction`: glued unknowns summed, fixed ones removed) is linear too, so the
matrix that is factorised, M = (S0 + a1 S1) on the free unknowns, is affine in nu on a
fixed sparsity pattern:

.. math::

    \mathrm{data}(M(\nu)) = \mathrm{data}(M(\nu^0)) + W\,(\nu - \nu^0),

where W maps each element's reluctivity to the stored entries it touches (built once
from the element matrices). An iterate then costs one sparse product instead of an
assembly, a reduction and a format conversion, and its pattern never changes, so a
backend that keeps its analysis (PARDISO) keeps it.

It applies where the fixed unknowns are zero (the usual flux-parallel boundaries); with
non-zero fixed values the right-hand side would change with nu as well.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp


class ReweightedMatrix:
    """M(nu) = M(nu0) + sum_e (nu_e - nu0_e) K_e on the free unknowns of ``red``.

    Parameters
    ----------
    red : Reduced
        The reduction of the field system (which unknowns are free, glued, fixed).
    sat : Saturable
        The elements whose reluctivity changes (their unit-reluctivity stiffness).
    """

    def __init__(self, red, sat):
        if np.any(red.fixed_values):
            raise ValueError("the fixed unknowns must be zero")
        n_el = sat.elements.size
        coo = sat.stiffness_form.elemental(sat.basis,
                                           nu=np.ones((n_el, sat.basis.X.shape[-1])))
        element = np.tile(np.arange(n_el), coo.data.size // n_el)
        free = np.full(red.size, -1, dtype=np.int64)
        free[red.free] = np.arange(red.free.size)
        rows = free[red.renumber[coo.indices[0]]]
        cols = free[red.renumber[coo.indices[1]]]
        keep = (rows >= 0) & (cols >= 0)  # entries on fixed unknowns are removed with them
        self.n = red.free.size
        self._rows, self._cols = rows[keep], cols[keep]
        self._element, self._values = element[keep], coo.data.ravel()[keep]
        self._pattern = None  # (indptr, indices, keys) of the union pattern
        self._map = None      # W, rows in the union pattern's entries
        self._data0 = None
        self._nu0 = None
        self._placed = None   # (indptr, indices, positions) of the last matrix rebased

    def _keys(self, rows, cols):
        return cols.astype(np.int64) * self.n + rows  # column-major, as CSC stores entries

    def _build_pattern(self, matrix):
        """The union of ``matrix``'s pattern and the elements' entries; W on it."""
        coo = matrix.tocoo()
        keys = np.union1d(self._keys(coo.row, coo.col), self._keys(self._rows, self._cols))
        cols, rows = np.divmod(keys, self.n)
        indptr = np.zeros(self.n + 1, dtype=np.int64)
        np.add.at(indptr, cols + 1, 1)
        self._pattern = (np.cumsum(indptr), rows.astype(np.int32), keys)
        position = np.searchsorted(keys, self._keys(self._rows, self._cols))
        self._map = sp.csr_matrix((self._values, (position, self._element)),
                                  shape=(keys.size, int(self._element.max()) + 1))

    def rebase(self, matrix, nu0):
        """Take ``matrix`` (free unknowns, square sparse) as M at reluctivities ``nu0``
        (one per saturable element, m/H). Where its stored entries go is kept for the
        next matrix of the same pattern (the next field solution of a heating study)."""
        m = sp.csc_matrix(matrix)
        kept = self._placed
        if not (kept is not None and np.array_equal(kept[0], m.indptr)
                and np.array_equal(kept[1], m.indices)):
            m.sum_duplicates()
            rows = m.indices
            cols = np.repeat(np.arange(self.n), np.diff(m.indptr))
            wanted = self._keys(rows, cols)
            if self._pattern is None or not np.isin(wanted, self._pattern[2]).all():
                self._build_pattern(m)  # an entry outside the pattern: a new pattern
            kept = (m.indptr.copy(), m.indices.copy(), np.searchsorted(self._pattern[2], wanted))
            self._placed = kept
        data = np.zeros(self._pattern[2].size, dtype=np.result_type(m.data, complex))
        data[kept[2]] = m.data
        self._data0 = data
        self._nu0 = np.array(nu0, float)

    def matrix(self, nu) -> sp.csc_matrix:
        """M at reluctivities ``nu`` (one per saturable element, m/H), CSC."""
        data = self._data0 + self._map @ (np.asarray(nu, float) - self._nu0)
        indptr, indices, _ = self._pattern
        return sp.csc_matrix((data, indices, indptr), shape=(self.n, self.n))
