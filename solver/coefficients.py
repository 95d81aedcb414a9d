"""Material coefficients as piecewise-constant arrays over the elements.

When the problem carries ``element_temperature_k`` (a heating study), each
element takes its material's conductivity and permeability at its own
temperature, with the Curie transition applied (see :mod:`.tables`).
"""

from __future__ import annotations

import numpy as np

from whorl.solver.circuits import eddy_regions
from whorl.solver.constants import MU0


def element_regions(problem) -> dict[str, np.ndarray]:
    """Element indices of the background and of every region."""
    mesh = problem.mesh
    out = {mesh.background: mesh.elements(mesh.background)}
    if mesh.kelvin is not None:  # the exterior disk is the background material too
        out[mesh.background] = np.concatenate([out[mesh.background],
                                               mesh.elements(mesh.kelvin.subdomain)])
    out.update({r: mesh.elements(r) for r in mesh.regions})
    return out


def _temperature(problem, elems):
    t = getattr(problem, "element_temperature_k", None)
    return None if t is None else np.asarray(t)[elems]


def reluctivity(problem) -> np.ndarray:
    """1/mu per element in m/H: at the element's temperature when the problem has
    temperatures (Curie transition included), then with ``problem.element_magnetisation``
    m applied when given (mu_r_eff = 1 + m (mu_r - 1))."""
    mu_r = np.empty(problem.mesh.mesh.t.shape[1])
    for name, elems in element_regions(problem).items():
        material = problem.materials[name]
        t = _temperature(problem, elems)
        if t is None:
            mu_r[elems] = material.relative_permeability
        else:
            mu_r[elems] = material.relative_permeability_at(t)
    m = getattr(problem, "element_magnetisation", None)
    if m is not None:
        mu_r = 1.0 + np.clip(np.asarray(m, float), 0.0, 1.0) * (mu_r - 1.0)
    return 1.0 / (MU0 * mu_r)


def magnetisation(problem) -> np.ndarray:
    """Multiplier m in [0, 1] of the magnetisation per element (1 without temperatures):
    B = mu0 H + m (B_material(H) - mu0 H); times ``problem.element_magnetisation`` when
    given."""
    m = np.ones(problem.mesh.mesh.t.shape[1])
    for name, elems in element_regions(problem).items():
        t = _temperature(problem, elems)
        if t is not None:
            m[elems] = problem.materials[name].magnetisation_at(t)
    extra = getattr(problem, "element_magnetisation", None)
    if extra is not None:
        m = m * np.clip(np.asarray(extra, float), 0.0, 1.0)
    return m


def eddy_conductivity(problem) -> np.ndarray:
    """sigma per element in S/m where eddy currents flow, 0 elsewhere (air, stranded windings)."""
    sigma = np.zeros(problem.mesh.mesh.t.shape[1])
    eddy = set(eddy_regions(problem))
    for name, elems in element_regions(problem).items():
        if name in eddy:
            t = _temperature(problem, elems)
            material = problem.materials[name]
            sigma[elems] = material.conductivity if t is None else material.conductivity_at(t)
    return sigma
