r"""Open boundaries by the Kelvin transformation.

The space outside a circle (planar) or sphere (axisymmetric) of radius R about
the origin is inverted into a second disk of the same radius, rho' = R^2 / rho
at the same angle, which the mesher places beside the domain and the solver
glues to it along the circle. The inversion of the plane is conformal, so:

- planar: the Dirichlet integral of A is unchanged and the exterior disk keeps
  nu0 (E. M. Freeman and D. A. Lowther, "A novel mapping technique for open
  boundary finite element solutions to Poisson's equation", IEEE Trans. Magn.
  24(6), 1988);
- axisymmetric: with the flux function psi = r A the energy is
  pi nu int |grad psi|^2 / r dr dz, and r = r' R^2 / rho'^2 under the inversion,
  so the exterior disk carries nu0 (rho'/R)^2 (the same transformation worked out
  for the flux function; see also D. A. Lowther, E. M. Freeman and B. Forghani,
  "A sparse matrix open boundary method for finite element analysis", IEEE
  Trans. Magn. 25(4), 1989).

The result is exact up to discretisation: no truncation of the domain.
"""

from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from whorl.solver.errors import SolveError


def reluctivity_factor(x, kelvin, axisymmetric: bool):
    """Factor on nu0 at points ``x`` (2, ...) of the exterior disk: (rho'/R)^2 or 1."""
    if not axisymmetric:
        return np.ones(x.shape[1:])
    dx = x[0] - kelvin.offset[0]
    dy = x[1] - kelvin.offset[1]
    return (dx**2 + dy**2) / kelvin.radius**2


def glue(basis, kelvin, domain_side: str = "outer") -> np.ndarray:
    """``target[i]``: the dof that dof i is identified with (itself, or on the domain's
    circle for a dof on the exterior disk's arc)."""
    target = np.arange(basis.N)
    ext = basis.get_dofs(kelvin.arc).all()
    main = basis.get_dofs(domain_side).all()
    locs_ext = basis.doflocs[:, ext] - np.asarray(kelvin.offset)[:, None]
    tree = cKDTree(basis.doflocs[:, main].T)
    dist, idx = tree.query(locs_ext.T)
    if ext.size and dist.max() > 1e-6 * kelvin.radius:
        raise SolveError("the exterior disk of the open boundary does not match the domain's "
                         f"circle (worst mismatch {dist.max():.3g} m)")
    target[ext] = main[idx]
    return target
