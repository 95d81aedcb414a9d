r"""Forces by the Maxwell stress tensor, a cross-check of the Lorentz force.

Time-average stress with RMS phasors (no factor 1/2 on the products):

.. math::

    T_{ij} = \mathrm{Re}(\nu B_i B_j^*) - \tfrac12 \nu |B|^2 \delta_{ij}

The force on a body is the flux of T through any surface around it in air. In
its volume form (the "shell" or virtual-work form: J. L. Coulomb, "A
methodology for the determination of global electromechanical quantities
from a finite element analysis...", IEEE Trans. Magn. 19(6), 1983), with g
equal to 1 on the body, 0 beyond one layer of elements and linear between:

.. math::

    F_i = -\int T_{ij}\, \partial_j g \; dV

(dV = depth dx dy, or 2 pi r dr dz). The layer must lie in a non-magnetic,
non-conducting background; where it does not, no cross-check is reported.
The radial force on a full axisymmetric ring cancels and is reported as 0.
"""

from __future__ import annotations

import numpy as np

from whorl.postprocess.fields import _basis_tables, quadrature_fields
from whorl.postprocess.projected import is_reduced, shell_flux


def shell_force(solution, region: str, fields=None):
    """Maxwell-stress force (Fx, Fy) or (Fr=0, Fz) on ``region`` in N, or None when the
    layer of elements around it is not in plain air."""
    reduced = is_reduced(solution)
    q = None if reduced else fields if fields is not None else quadrature_fields(solution)
    system = solution.system
    problem = solution.problem
    mesh = problem.mesh.mesh
    elems = problem.mesh.elements(region)
    in_region = np.zeros(mesh.p.shape[1], dtype=bool)
    in_region[mesh.t[:, elems]] = True
    touching = np.flatnonzero(in_region[mesh.t].any(axis=0))
    shell = np.setdiff1d(touching, elems)
    if shell.size == 0:
        return None
    background = problem.mesh.background
    material = problem.materials[background]
    if (material.relative_permeability != 1.0 or material.conductivity != 0
            or not _all_in(shell, problem.mesh.elements(background), mesh.t.shape[1])):
        return None
    grad_g = _shell_gradient(system.basis, region, in_region[:mesh.nvertices])[:, shell]
    if reduced:  # B of the shell projected; dv as quadrature_fields makes it
        b = shell_flux(solution, region, shell)
        x = _basis_tables(system.basis)[2][:, shell]
        dv = system.kappa * system.basis.dx[shell] * system.form.weight(x)
    else:
        b, dv = q.b[:, shell], q.dv[shell]
    nu = system.nu_q[shell]
    b2 = np.abs(b[0]) ** 2 + np.abs(b[1]) ** 2

    def stress(i, j):
        return np.real(nu * b[i] * np.conj(b[j])) - (0.5 * nu * b2 if i == j else 0.0)

    fy = -np.sum((stress(1, 0) * grad_g[0] + stress(1, 1) * grad_g[1]) * dv)
    if problem.axisymmetric:
        return (0.0, float(fy))
    fx = -np.sum((stress(0, 0) * grad_g[0] + stress(0, 1) * grad_g[1]) * dv)
    return (float(fx), float(fy))


def _all_in(elements, members, count) -> bool:
    """Whether every index of ``elements`` is among ``members`` (both element indices)."""
    mask = np.zeros(count, dtype=bool)
    mask[members] = True
    return bool(mask[elements].all())


_GRADIENTS: dict = {}


def _shell_gradient(basis, region, g):
    """Gradient (2, elements, quadrature points) of the linear function with vertex values
    ``g``, through the mesh's own element map (curved elements included); kept per basis
    and region (a frequency list asks for it at every frequency)."""
    from skfem import ElementTriP1

    key = (id(basis), region)
    if key not in _GRADIENTS or _GRADIENTS[key][0] is not basis:
        if any(b is not basis for b, _ in _GRADIENTS.values()):
            _GRADIENTS.clear()  # one basis at a time
        grad = np.asarray(basis.with_element(ElementTriP1()).interpolate(g.astype(float)).grad)
        _GRADIENTS[key] = (basis, grad)
    return _GRADIENTS[key][1]
