"""Material coefficients as piecewise-constant arrays over the elements."""

from __future__ import annotations

import numpy as np

from whorl.solver.circuits import eddy_regions


def element_regions(problem) -> dict[str, np.ndarray]:
    """Element indices of the background and of every region."""
    mesh = problem.mesh
    out = {mesh.background: mesh.elements(mesh.background)}
    if mesh.kelvin is not None:  # the exterior disk is the background material too
        out[mesh.background] = np.concatenate([out[mesh.background],
                                               mesh.elements(mesh.kelvin.subdomain)])
    out.update({r: mesh.elements(r) for r in mesh.regions})
    return out


def reluctivity(problem) -> np.ndarray:
    """1/mu per element in m/H."""
    nu = np.empty(problem.mesh.mesh.t.shape[1])
    for name, elems in element_regions(problem).items():
        nu[elems] = problem.materials[name].reluctivity
    return nu


def eddy_conductivity(problem) -> np.ndarray:
    """sigma per element in S/m where eddy currents flow, 0 elsewhere (air, stranded windings)."""
    sigma = np.zeros(problem.mesh.mesh.t.shape[1])
    eddy = set(eddy_regions(problem))
    for name, elems in element_regions(problem).items():
        if name in eddy:
            sigma[elems] = problem.materials[name].conductivity
    return sigma
