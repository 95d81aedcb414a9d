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
        self.free_of = free[red.renumber]  # full numbering -> free unknown, or -1
        rows = self.free_of[coo.indices[0]]
        cols = self.free_of[coo.indices[1]]
        keep = (rows >= 0) & (cols >= 0)  # entries on fixed unknowns are removed with them
        self.n = red.free.size
        self.n_elements = n_el
        self._element, self._values = element[keep], coo.data.ravel()[keep]
        self._element_keys = self._keys(rows[keep], cols[keep])
        self._pattern = None  # (indptr, indices, keys) of the union pattern
        self._map = None      # W, rows in the union pattern's entries
        self._data0 = None
        self._nu0 = None
        self._placed = {}     # input name -> (indptr, indices, kept entries, positions)

    def _keys(self, rows, cols):
        return rows.astype(np.int64) * self.n + cols  # row-major, as CSR stores entries

    def _grow(self, keys):
        """Make the pattern hold ``keys`` too (with the elements' entries); True if it grew
        (every position found earlier is then void)."""
        if self._pattern is not None:
            have = self._pattern[2]
            at = np.minimum(np.searchsorted(have, keys), have.size - 1)
            if np.array_equal(have[at], keys):
                return False
        old = self._element_keys if self._pattern is None else self._pattern[2]
        keys = np.union1d(np.union1d(old, keys), self._element_keys)
        rows, cols = np.divmod(keys, self.n)
        indptr = np.zeros(self.n + 1, dtype=np.int64)
        np.add.at(indptr, rows + 1, 1)
        self._pattern = (np.cumsum(indptr), cols.astype(np.int32), keys)
        position = np.searchsorted(keys, self._element_keys)
        self._map = sp.csr_matrix((self._values, (position, self._element)),
                                  shape=(keys.size, self.n_elements))
        self._placed.clear()
        return True

    def _place(self, name, matrix, numbering):
        """The stored entries of ``matrix`` summed into the pattern (a data array).
        ``numbering``: "free" (already on the free unknowns) or "full" (the system's own
        numbering: glued unknowns are summed, fixed ones dropped). Where the entries go is
        kept for the next matrix of the same pattern. Returns (data, grew)."""
        m = matrix.tocsr() if matrix.format != "csr" else matrix
        kept = self._placed.get(name)
        grew = False
        if not self._kept_for(kept, m):
            keep, wanted = self._wanted(m, numbering)
            grew = self._grow(wanted)
            at = np.searchsorted(self._pattern[2], wanted)
            alone = np.unique(at).size == at.size  # no two entries share a slot
            kept = (m.indptr.copy(), m.indices.copy(), keep, at, alone)
            self._placed[name] = kept
        values = m.data[kept[2]]
        size = self._pattern[2].size
        if kept[4]:  # one slot each: a scatter
            data = np.zeros(size, dtype=values.dtype)
            data[kept[3]] = values
            return data, grew
        data = np.bincount(kept[3], weights=values.real, minlength=size)
        if np.iscomplexobj(values):
            data = data + 1j * np.bincount(kept[3], weights=values.imag, minlength=size)
        return data, grew

    @staticmethod
    def _kept_for(kept, m) -> bool:
        """Whether a kept placement was made for the pattern of the CSR ``m``."""
        return kept is not None and np.array_equal(kept[0], m.indptr) and np.array_equal(
            kept[1], m.indices)

    def _wanted(self, m, numbering):
        """(entries of the CSR ``m`` that are kept, their keys in the free numbering)."""
        rows = np.repeat(np.arange(m.shape[0]), np.diff(m.indptr))
        cols = m.indices
        if numbering == "full":
            rows, cols = self.free_of[rows], self.free_of[cols]
        keep = np.flatnonzero((rows >= 0) & (cols >= 0))
        return keep, self._keys(rows[keep], cols[keep])

    def rebase(self, matrix, nu0):
        """Take ``matrix`` (free unknowns, square sparse) as M at reluctivities ``nu0``
        (one per saturable element, m/H)."""
        data, _ = self._place("matrix", matrix, "free")
        self._data0 = data.astype(complex)
        self._nu0 = np.array(nu0, float)

    def rebase_system(self, s0, s1, a1: complex, nu0):
        """Take M = S0 + a1 S1 from the system's own matrices (full numbering; the same
        reduction as at construction) at reluctivities ``nu0``: no reduction is formed."""
        s0, s1 = s0.tocsr(), s1.tocsr()
        pairs = (("S0", s0), ("S1", s1))
        if not all(self._kept_for(self._placed.get(name), m) for name, m in pairs):
            # both patterns into the union at once: one growth, and neither placement
            # below can grow it again (which would void the other's)
            self._grow(np.concatenate([self._wanted(m, "full")[1] for _, m in pairs]))
        d0, _ = self._place("S0", s0, "full")
        d1, _ = self._place("S1", s1, "full")
        data0 = self._data0  # M's entries at nu0, written over (nothing else holds them)
        if data0 is None or data0.shape != d1.shape:
            data0 = np.empty(d1.shape, dtype=complex)
        np.multiply(d1, a1, out=data0)
        data0 += d0
        self._data0 = data0
        self._nu0 = np.array(nu0, float)

    def matrix(self, nu) -> sp.csr_matrix:
        """M at reluctivities ``nu`` (one per saturable element, m/H): a sorted CSR, the
        layout a direct solver takes for an unsymmetric matrix as it is."""
        data = self._data0 + self._map @ (np.asarray(nu, float) - self._nu0)
        indptr, indices, _ = self._pattern
        return sp.csr_matrix((data, indices, indptr), shape=(self.n, self.n))

    def rows(self, index) -> RowBlock:
        """The rows ``index`` (free unknowns, sorted, no repeats) of M(nu), at the present
        base (:meth:`rebase` or :meth:`rebase_system` first): see :class:`RowBlock`."""
        return RowBlock(self, np.asarray(index, dtype=np.int64))


class RowBlock:
    """Rows ``index`` of a :class:`ReweightedMatrix` as a function of nu, from the rows'
    share of W alone (for a residual on a few unknowns)."""

    def __init__(self, parent: ReweightedMatrix, index: np.ndarray):
        indptr, indices, _ = parent._pattern
        counts = indptr[index + 1] - indptr[index]
        first = np.repeat(indptr[index] - np.concatenate([[0], np.cumsum(counts)[:-1]]), counts)
        at = first + np.arange(counts.sum())  # the rows' entries in the parent's data
        self.n, self.index = parent.n, index
        self._map = parent._map[at]
        self._data0, self._nu0 = parent._data0[at], parent._nu0
        self._indptr = np.concatenate([[0], np.cumsum(counts)])
        self._indices = indices[at]

    def matrix(self, nu) -> sp.csr_matrix:
        """The rows of M(nu) (all columns) as a CSR matrix."""
        data = self._data0 + self._map @ (np.asarray(nu, float) - self._nu0)
        return sp.csr_matrix((data, self._indices, self._indptr),
                             shape=(self.index.size, self.n))
