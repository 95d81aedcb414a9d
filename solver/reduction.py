"""From the full system to the one that is factorised: glued and fixed unknowns removed.

The open boundary identifies unknowns (``System.target``), which turns S into
P^T S P with P[i, target[i]] = 1; the side conditions fix others. What is left
are the free unknowns; :meth:`Reduced.expand` puts a solution back together.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import scipy.sparse as sp


@dataclass
class Reduced:
    S0_ff: sp.csc_matrix
    S1_ff: sp.csc_matrix
    S0_fd: sp.csc_matrix
    S1_fd: sp.csc_matrix
    P: sp.csr_matrix | None
    renumber: np.ndarray
    free: np.ndarray
    fixed: np.ndarray
    fixed_values: np.ndarray
    size: int

    def matrix(self, a0: complex, a1: complex):
        """a0 S0 + a1 S1 on the free unknowns."""
        return (a0 * self.S0_ff + a1 * self.S1_ff).tocsc()

    def rhs(self, b, a0, a1, fixed_scale=1.0):
        """The free part of ``b`` (full numbering) less the fixed unknowns' share,
        for the matrix a0 S0 + a1 S1 with the fixed values times ``fixed_scale``."""
        if self.P is not None:
            b = self.P.T @ b
        return b[self.free] - (a0 * self.S0_fd + a1 * self.S1_fd) @ (
            fixed_scale * self.fixed_values)

    def expand(self, x_free, fixed_scale=1.0):
        """All unknowns in the full numbering from the free ones."""
        x = np.empty(self.size, dtype=np.result_type(x_free, self.fixed_values))
        x[self.fixed] = fixed_scale * self.fixed_values
        x[self.free] = x_free
        return x[self.renumber]

    def restrict(self, x_full):
        """The free unknowns of a full vector."""
        y = np.empty(self.size, dtype=x_full.dtype)
        y[self.renumber] = x_full
        return y[self.free]


def reduce(system) -> Reduced:
    target = system.target
    keep = np.unique(target)
    n = keep.size
    if n < system.size:
        renumber = np.searchsorted(keep, target)
        P = sp.csr_matrix((np.ones(system.size), (np.arange(system.size), renumber)),
                          shape=(system.size, n))
        S0, S1 = (P.T @ system.S0 @ P).tocsc(), (P.T @ system.S1 @ P).tocsc()
    else:
        renumber, P = np.arange(n), None
        S0, S1 = system.S0.tocsc(), system.S1.tocsc()
    fixed, first = np.unique(renumber[system.fixed], return_index=True)
    fixed_values = system.fixed_values[first]
    free = np.setdiff1d(np.arange(n), fixed)
    return Reduced(S0[free][:, free], S1[free][:, free], S0[free][:, fixed], S1[free][:, fixed],
                   P, renumber, free, fixed, fixed_values, n)


def with_stiffness(red: Reduced, S0) -> Reduced:
    """``red`` with a new S0 (full numbering, same unknowns and conditions): only S0's
    blocks are recomputed (a heating study's effective iteration changes only S0)."""
    S0 = (red.P.T @ S0 @ red.P).tocsc() if red.P is not None else S0.tocsc()
    rows = S0[red.free]
    return replace(red, S0_ff=rows[:, red.free], S0_fd=rows[:, red.fixed])
