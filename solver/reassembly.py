"""Re-assembly of a field system whose coefficients change on a few elements.

A heating study solves the same field again and again with new conductivity and
permeability in the heated elements only. The stiffness and conductor-mass
matrices are sums of element matrices scaled by the element's reluctivity and
conductivity (both piecewise constant), so a new system is the first one plus
the changes on those elements (:mod:`.elementwise`): no quadrature is repeated.
This applies when no heated region is part of a circuit branch (a massive
source's conductor, or a free planar conductor, whose coupling vectors would
change too); otherwise :func:`~.system.assemble` runs again.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import scipy.sparse as sp

from whorl.solver.coefficients import eddy_conductivity, reluctivity
from whorl.solver.elementwise import ElementwiseMatrix, entry_keys
from whorl.solver.system import assemble


def applies(system, regions) -> bool:
    """True if the elements of ``regions`` can change without touching branch couplings."""
    in_branches = {r for br in system.branches for r in br.regions}
    return not (set(regions) & in_branches)


class Reassembler:
    """Systems of ``problem`` at new element temperatures, changing only ``elements``.

    Parameters
    ----------
    problem : Problem (with its first element temperatures)
    elements : global indices of the elements whose coefficients may change
    """

    def __init__(self, problem, elements, progress=None):
        self.base = assemble(problem, progress)
        self.elements = np.asarray(elements)
        basis = self.base.basis.with_elements(self.elements)
        ones = np.ones((self.elements.size, basis.X.shape[-1]))
        local = np.arange(self.base.n_field)
        n = self.base.size
        form = self.base.form
        self._stiffness = ElementwiseMatrix(form.stiffness, basis, local, n, nu=ones)
        self._mass = ElementwiseMatrix(form.conductor_mass, basis, local, n, sigma=ones)
        self._s0 = _FixedSum(self.base.S0, self._stiffness)
        self._s1 = _FixedSum(self.base.S1, self._mass)

    def stiffness(self, nu):
        """S0 with reluctivity ``nu`` (per element of the mesh, m/H) on :attr:`elements`."""
        el = self.elements
        return self._s0(nu[el] - self.base.nu[el])

    def system(self, problem, nu=None):
        """The system of ``problem`` (the same mesh and sources; new temperatures).

        ``nu`` (per element, m/H) replaces the problem's reluctivities when given (the
        effective reluctivities of saturable elements, which must be among
        :attr:`elements`)."""
        base, el = self.base, self.elements
        nu = reluctivity(problem) if nu is None else nu
        sigma = eddy_conductivity(problem)
        s1 = self._s1(sigma[el] - base.sigma[el])
        nu_q = np.array(base.nu_q, copy=True)
        nu_q[el] = nu[el][:, None]
        return replace(base, problem=problem, nu=nu, sigma=sigma, S0=self.stiffness(nu),
                       S1=s1, nu_q=nu_q)


class _FixedSum:
    """``base + part.matrix(c)`` on the union of the two patterns, every entry kept (a
    sparse sum drops exact zeros, so its pattern would depend on the values, and whatever
    keeps work per pattern downstream, a factorisation's analysis or a placement, would
    be redone)."""

    def __init__(self, base, part):
        base = sp.csr_matrix(base)
        base.sum_duplicates()
        ones = part.with_values(np.ones(part.nnz))
        base_ones = sp.csr_matrix((np.ones(base.nnz), base.indices, base.indptr),
                                  shape=base.shape)
        union = (base_ones + ones).tocsr()  # every entry of either (>= 1: none dropped)
        union.sum_duplicates()
        union.sort_indices()
        n = union.shape[1]
        union_keys = entry_keys(union.indptr, union.indices, n)
        self._base_at = np.searchsorted(union_keys, entry_keys(base.indptr, base.indices, n))
        self._part_at = np.searchsorted(union_keys, entry_keys(ones.indptr, ones.indices, n))
        self._base_data = base.data
        self._part = part
        self._indptr, self._indices, self._shape = union.indptr, union.indices, union.shape

    def __call__(self, coefficient) -> sp.csr_matrix:
        data = np.zeros(self._indices.size, dtype=self._base_data.dtype)
        data[self._base_at] = self._base_data
        data[self._part_at] += self._part.values(coefficient)
        out = sp.csr_matrix((data, self._indices, self._indptr), shape=self._shape)
        out.has_sorted_indices = True
        return out
