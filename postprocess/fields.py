"""Field quantities of a solution at the quadrature points, per element.

Conventions: RMS phasors; time averages are Re(...) of RMS products with no
factor 1/2. Planar: J and E along z, B = (Bx, By). Axisymmetric: J and E
along phi, B = (Br, Bz). In a moving conductor J = sigma (E + v x B) with
(v x B) = -v . grad A along z or phi (see :mod:`whorl.solver.motion`); E is the
field in the frame of the sources.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.solver.sources import Stranded


@dataclass
class QuadratureFields:
    """Arrays of shape (elements, quadrature points) unless noted.

    ``dv`` is the volume of each quadrature point's share: dx times depth
    (planar) or dx times 2 pi r (axisymmetric), in m^3, so a total is
    ``(q * dv).sum()``. ``ds`` is the plain cross-section measure in m^2.
    """

    x: np.ndarray        # (2, E, Q) coordinates in m
    a: np.ndarray        # A, Wb/m
    b: np.ndarray        # (2, E, Q) flux density, T
    e: np.ndarray        # E along z or phi, V/m
    j: np.ndarray        # J along z or phi, A/m^2
    loss: np.ndarray     # |J|^2 / sigma in conductors, W/m^3
    energy: np.ndarray   # time-average magnetic energy density nu |B|^2 / 2, J/m^3
    force: np.ndarray    # (2, E, Q) time-average Lorentz force density Re(J x B*), N/m^3
    dv: np.ndarray
    ds: np.ndarray
    velocity: np.ndarray | None = None  # (2, E, Q) of moving conductors (m/s), else None


def element_sources(solution):
    """Per element: the branch voltage term u (complex) and the stranded current density."""
    system = solution.system
    problem = solution.problem
    nel = problem.mesh.mesh.t.shape[1]
    u = np.zeros(nel, dtype=complex)
    for i, br in enumerate(system.branches):
        for r in br.regions:
            u[problem.mesh.elements(r)] = solution.branch_u[i]
    js = np.zeros(nel, dtype=complex)
    for s in problem.sources:
        if isinstance(s, Stranded):
            current = solution.source_current(s)
            for sign, regions in ((1, s.regions), (-1, s.return_regions)):
                for r in regions:
                    js[problem.mesh.elements(r)] += sign * s.turns * current / system.areas[r]
    return u, js


_TABLES: dict = {}


def _basis_tables(basis):
    """Basis values (K, E, Q) and gradients (K, 2, E, Q) at the quadrature points, cached
    per basis: time series evaluate the same basis hundreds of times."""
    key = id(basis)
    if key not in _TABLES or _TABLES[key][0] is not basis:
        _TABLES.clear()  # one basis at a time is enough
        phi = np.array([np.asarray(basis.basis[k][0]) for k in range(basis.Nbfun)])
        dphi = np.array([basis.basis[k][0].grad for k in range(basis.Nbfun)])
        _TABLES[key] = (basis, phi, dphi, basis.mapping.F(basis.X))
    return _TABLES[key][1:]


def _combine(pattern, coeff, table):
    """einsum on real and imaginary parts apart (faster than on complex numbers)."""
    if np.iscomplexobj(coeff):
        return np.einsum(pattern, coeff.real, table) + 1j * np.einsum(pattern, coeff.imag, table)
    return np.einsum(pattern, coeff, table)


def interpolate_complex(basis, vec, gradient: bool = True):
    """Value and gradient (None unless ``gradient``) of a finite-element vector at the
    quadrature points."""
    phi, dphi, _ = _basis_tables(basis)
    coeff = np.asarray(vec)[basis.element_dofs]  # (K, E)
    value = _combine("ke,keq->eq", coeff, phi)
    grad = _combine("ke,kieq->ieq", coeff, dphi) if gradient else None
    return value, grad


_SUBSETS: dict = {}


def _subset_tables(basis, elements):
    """Basis values (K, E', Q), coordinates (2, E', Q) and dx (E', Q) on ``elements`` only,
    cached for one basis and one element list (the heated parts of a heating study)."""
    key = (id(basis), elements.tobytes())
    if key not in _SUBSETS or _SUBSETS[key][0] is not basis:
        _SUBSETS.clear()
        phi, _, x = _basis_tables(basis)
        _SUBSETS[key] = (basis, np.ascontiguousarray(phi[:, elements]),
                         np.ascontiguousarray(x[:, elements]), basis.dx[elements],
                         basis.element_dofs[:, elements])
    return _SUBSETS[key][1:]


def conductor_loss(solution):
    """The eddy-current loss density |J|^2 / sigma at the quadrature points of the
    conducting elements (sigma > 0) only, as :func:`quadrature_fields` computes it there
    (it is zero elsewhere), without the flux density, forces and energy: what a heating
    study needs at every field solution. Returns (elements, loss W/m^3 (E', Q), dv m^3
    (E', Q)); None for a model with moving conductors (their loss needs grad A: use
    :func:`quadrature_fields`)."""
    system = solution.system
    if getattr(system, "motion", None):
        return None
    basis, form = system.basis, system.form
    sigma = np.asarray(system.sigma, float)
    elements = np.flatnonzero(sigma > 0)
    phi, x, dx, dofs = _subset_tables(basis, elements)
    a_rate = _combine("ke,keq->eq", np.asarray(solution.a_rate)[dofs], phi)
    u, _ = element_sources(solution)
    driving = -a_rate + form.voltage_field(u[elements][:, None], x)
    loss = sigma[elements][:, None] * np.abs(driving) ** 2
    return elements, loss, system.kappa * dx * form.weight(x)


def quadrature_fields(solution) -> QuadratureFields:
    """Evaluate every field quantity of ``solution`` at the quadrature points."""
    system = solution.system
    basis, form = system.basis, system.form
    x = _basis_tables(basis)[2]  # (2, E, Q) coordinates of the quadrature points
    a, grad_a = interpolate_complex(basis, solution.a)
    a_rate, _ = interpolate_complex(basis, solution.a_rate, gradient=False)
    bx, by = form.flux_density(a, grad_a, x)
    b = np.array([bx, by])
    u, js = element_sources(solution)
    sigma = system.sigma[:, None]
    e = -a_rate + form.voltage_field(u[:, None], x) * (sigma > 0)
    velocity = system.motion.velocity_q if getattr(system, "motion", None) else None
    driving = e if velocity is None else e - (velocity[0] * grad_a[0] + velocity[1] * grad_a[1])
    j = sigma * driving + js[:, None]
    loss = sigma * np.abs(driving) ** 2  # |J|^2 / sigma where eddy currents flow, 0 elsewhere
    energy = 0.5 * system.nu_q * (np.abs(b[0]) ** 2 + np.abs(b[1]) ** 2)
    if getattr(system, "energy_q", None) is not None:  # saturable: int H dB from the curve
        elements, density = system.energy_q
        energy[elements] = density
    if system.problem.axisymmetric:
        force = np.array([np.real(j * np.conj(b[1])), -np.real(j * np.conj(b[0]))])
    else:
        force = np.array([-np.real(j * np.conj(b[1])), np.real(j * np.conj(b[0]))])
    ds = basis.dx
    dv = system.kappa * ds * form.weight(x)
    return QuadratureFields(x, a, b, e, j, loss, energy, force, dv, ds, velocity)
