r"""A local pre-solve of the steel around a Curie front (heating field solutions).

Once the surface of a saturable part has passed its Curie point, each new field
solution of a heating study finds the transition band a little deeper. Just below
it, in magnetic steel about a skin depth thick, the field has changed most, and
there the effective-permeability iteration (:mod:`.effective`) starts furthest from
its answer: on the shaft-end demo the first iterate's energy-weighted change of the
reluctivity was 0.2 after the band had moved (0.01 to 0.05 before the Curie point),
and the iteration needed five to seven linear solutions instead of one to three.

This module settles that steel first, alone (:class:`LocalProblem`): the saturable
elements within ``SKIN_DEPTHS`` skin depths of the band (the elements whose
magnetisation multiplier is below one; the skin depth sqrt(2 nu / (omega sigma)) is
the median of the ``NEAREST`` magnetic elements closest to it), with their own element
matrices, and the rest of the model frozen at the last field solution as the load it
puts on the layer's unknowns. In that small problem the update of the global
iteration (the geometric mean of the curve's reluctivity at the element's flux density
and at its field strength, a step ``ALPHA`` in log nu, shrunk when the change grows)
runs for at most ``ITERATIONS`` solves; the reluctivities it reaches are the start of
the global iteration. This is nonlinear elimination of a local nonlinearity
(P. J. Lanzkron, D. J. Rose and J. T. Wilkes, SIAM J. Sci. Comput. 17(5), 1996;
X.-C. Cai and D. E. Keyes, SIAM J. Sci. Comput. 24(1), 2002; citations from memory),
used here only as a start: the global iteration and its stopping rule are unchanged,
so the result is the same to the tolerance; the number of linear solutions differs.

Why the load and not the potential is frozen: where the layer reaches the part's
surface, holding the potential outside it would hold the flux the part carried before
its front moved, and the layer would settle to that (measured: a field solution of
the small bar in tests/solver/test_front.py took 9 linear solutions instead of 3).
The frozen load holds the field strength at the layer's boundary and lets the flux
follow. Measured over the shaft-end demo's cycle (docs/performance.md): 221 linear
solutions instead of 315 with a layer of three skin depths, 232 with two, 294 with one.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.spatial import cKDTree

from whorl.solver.effective import (
    ALPHA,
    STEP_LIMIT,
    effective_reluctivity,
    relaxation,
    weighted_change,
)
from whorl.solver.elementwise import ElementwiseMatrix
from whorl.solver.saturable import rms_flux_density

SKIN_DEPTHS = 3.0
"""Thickness of the layer below the front, in skin depths of the steel there."""
NEAREST = 50
"""Magnetic elements nearest the front whose median skin depth sets the layer."""
ITERATIONS = 5
"""Solves of the layer's block at most, per field solution."""
TOLERANCE = 2e-3
"""The layer's iteration stops early at this energy-weighted relative change."""


class Layer:
    """The layer's saturable elements, in the form that
    :func:`.effective.effective_reluctivity` and :func:`.effective.weighted_change` take
    (curves with positions, magnetisation multipliers, flux density, volumes)."""

    def __init__(self, sat, positions):
        self.positions = positions
        self.curves = [(curve, np.flatnonzero(np.isin(positions, pos)))
                       for curve, pos in sat.curves]
        self.multiplier = None if sat.multiplier is None else sat.multiplier[positions]
        n_q = sat.basis.dx.shape[1]
        rows = (positions[:, None] * n_q + np.arange(n_q)).ravel()
        self._curl = tuple(c[rows] for c in sat.curl_operator())
        self._dx = sat.basis.dx[positions]
        self._volumes = sat.volumes()[positions]
        self.n_field = sat.n_field

    def element_flux_density(self, x):
        """RMS |B| per element of the layer (T), as :meth:`.Saturable.element_flux_density`."""
        return rms_flux_density(self._curl, self._dx, x[: self.n_field])

    def volumes(self):
        return self._volumes


def layer_positions(sat, nu, sigma, omega: float, centroids) -> np.ndarray | None:
    """Positions (in ``sat.elements``) of the layer around the Curie front, or None when
    there is no front (every multiplier one, or none of them).

    ``nu``: reluctivities of the saturable elements (m/H); ``sigma``: their conductivity
    (S/m); ``centroids``: (n, 2) element centroids of the whole mesh (m)."""
    m = sat.multiplier
    if m is None:
        return None
    below = m < 1.0
    magnetic = np.flatnonzero(~below & (sigma > 0))
    if not below.any() or not magnetic.size:
        return None
    at = centroids[sat.elements]
    distance, _ = cKDTree(at[below]).query(at)
    near = magnetic[np.argsort(distance[magnetic], kind="stable")[:NEAREST]]
    depth = np.sqrt(2.0 * nu[near] / (omega * sigma[near]))
    return np.flatnonzero(distance <= SKIN_DEPTHS * float(np.median(depth)))


class LocalProblem:
    """The layer's field problem with the rest of the model frozen.

    Unknowns: every free unknown that a layer element touches. Matrix: the layer
    elements' own share of M = S0 + j omega S1 (stiffness nu_e K_e and eddy mass
    j omega sigma_e M_e). Everything else (the elements outside the layer, the circuit)
    enters as a fixed load g = (M - M_layer) x_last on those rows: the field strength
    that the outside puts on the layer's boundary is held, not the potential, so the flux
    through the layer can change (a held potential would hold the flux the part carried
    before its front moved, and settle the layer to that).

    Parameters
    ----------
    forms : SaturableForms
        The unit stiffness and eddy mass of every saturable element (built once).
    positions : ndarray
        The layer's elements, as positions in the saturable elements.
    sigma : ndarray
        Conductivity of every saturable element (S/m).
    free_of : ndarray
        Full numbering -> free unknown, or -1 (:attr:`.ReweightedMatrix.free_of`).
    omega : float
        Angular frequency (rad/s).
    """

    def __init__(self, forms, positions, sigma, free_of, omega: float):
        dofs = np.unique(forms.element_dofs[:, positions])
        local = np.full(forms.n_field, -1, dtype=np.int64)
        local[dofs] = np.arange(dofs.size)
        self._stiffness = forms.stiffness.restricted(positions, local, dofs.size)
        mass = forms.mass.restricted(positions, local, dofs.size)
        free = free_of[dofs]
        kept = np.flatnonzero(free >= 0)  # fixed unknowns (zero) drop out
        self.unknowns, column = np.unique(free[kept], return_inverse=True)
        # glued unknowns are summed, as the reduction sums them
        self._p = sp.csr_matrix((np.ones(kept.size), (kept, column)),
                                shape=(dofs.size, self.unknowns.size))
        self._mass = (1j * omega) * (self._p.T @ mass.matrix(sigma[positions]) @ self._p)

    def matrix(self, nu_layer):
        """The layer's own matrix on :attr:`unknowns` at reluctivities ``nu_layer`` (m/H)."""
        return (self._p.T @ self._stiffness.matrix(nu_layer) @ self._p + self._mass).tocsc()


class SaturableForms:
    """Unit-coefficient stiffness and eddy mass of every saturable element, on the field
    unknowns (full numbering), built once for all the layers a heating study takes."""

    def __init__(self, system, sat):
        basis = sat.basis  # the field basis on the saturable elements
        ones = np.ones((sat.elements.size, basis.X.shape[-1]))
        everything = np.arange(system.n_field)
        self.n_field = system.n_field
        self.element_dofs = basis.element_dofs
        self.stiffness = ElementwiseMatrix(system.form.stiffness, basis, everything,
                                           system.n_field, nu=ones)
        self.mass = ElementwiseMatrix(system.form.conductor_mass, basis, everything,
                                      system.n_field, sigma=ones)


def relax(layer: Layer, problem: LocalProblem, rows, factorize, nu, x_free, rhs, expand):
    """Settle the layer's reluctivities with the rest of the model frozen.

    Parameters
    ----------
    layer : Layer
    problem : LocalProblem
    rows : RowBlock
        The rows :attr:`LocalProblem.unknowns` of the re-weighted matrix
        (:meth:`.ReweightedMatrix.rows`).
    factorize : callable matrix -> solve
    nu : ndarray
        Reluctivities of all saturable elements (m/H); only the layer's change.
    x_free : ndarray
        The last field solution on the free unknowns (the frozen rest).
    rhs : ndarray
        The right-hand side on those rows.
    expand : callable x_free -> x (full numbering)

    Returns (nu, number of the layer's solves).
    """
    nu = np.array(nu, float)
    x_free = np.array(x_free, dtype=complex)
    pos, index = layer.positions, problem.unknowns
    load = rows.matrix(nu) @ x_free - problem.matrix(nu[pos]) @ x_free[index]  # the outside's share
    alpha, before = ALPHA, np.inf
    for solves in range(1, ITERATIONS + 1):  # noqa: B007 (returned)
        x_free[index] = factorize(problem.matrix(nu[pos]))(rhs - load)
        x = expand(x_free)
        rms = layer.element_flux_density(x)
        from_b, from_h = effective_reluctivity(layer, x, nu[pos], rms)
        new = np.sqrt(from_b * from_h)
        change = weighted_change(layer, x, nu[pos], new, rms)
        if change <= TOLERANCE:
            break
        alpha, before = relaxation(alpha, change, before), change
        step = np.clip(alpha * np.log(new / nu[pos]), -STEP_LIMIT, STEP_LIMIT)
        nu[pos] = nu[pos] * np.exp(step)
    return nu, solves
