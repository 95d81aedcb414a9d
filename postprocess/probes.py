"""Values at points and along lines: A, B, H, E, J and loss density."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.meshes.curved import is_curved, straight
from whorl.postprocess.fields import element_sources
from whorl.solver.motion import element_velocity


@dataclass
class Probe:
    """Field values at points (arrays over the points; complex RMS phasors).

    ``x`` (2, P) in m; ``b`` and ``h`` (2, P); ``inside`` False where a point
    lies outside the mesh (its values are NaN).
    """

    x: np.ndarray
    a: np.ndarray
    a_rate: np.ndarray  # dA/dt (j omega A for phasors), V/m
    b: np.ndarray
    h: np.ndarray
    e: np.ndarray
    j: np.ndarray
    loss: np.ndarray
    inside: np.ndarray
    grad_a: np.ndarray | None = None  # (2, P) gradient of A, Wb/m^2


def _locate(basis, points, exclude=None):
    """Element of every point (-1 outside, or inside an element listed in ``exclude``)."""
    mesh = basis.mesh
    if is_curved(mesh):  # found in the straight mesh through the same vertices
        finder = straight(mesh).element_finder()
    else:
        finder = mesh.element_finder(mapping=basis.mapping)
    try:
        cells = np.asarray(finder(points[0], points[1]), dtype=np.int64)
    except ValueError:  # some point is outside: find them one by one
        cells = None
    if cells is not None:
        if exclude is not None:
            cells[np.isin(cells, exclude)] = -1
        return cells
    cells = np.full(points.shape[1], -1, dtype=np.int64)
    for k in range(points.shape[1]):
        try:
            cells[k] = finder(points[0, k:k + 1], points[1, k:k + 1])[0]
        except ValueError:
            cells[k] = -1
    if exclude is not None:
        cells[np.isin(cells, exclude)] = -1
    return cells


def probe(solution, points_m) -> Probe:
    """Evaluate the solution at ``points_m`` (2, P) in metres."""
    basis = solution.system.basis
    points = np.asarray(points_m, dtype=float).reshape(2, -1)
    kelvin = solution.problem.mesh.kelvin
    exclude = solution.problem.mesh.elements(kelvin.subdomain) if kelvin else None
    cells = _locate(basis, points, exclude)
    inside = cells >= 0
    ref = np.zeros_like(points)
    if inside.any():
        ref[:, inside] = basis.mapping.invF(points[:, inside, None], tind=cells[inside])[:, :, 0]
    return evaluate(solution, cells, ref, points)


def evaluate(solution, cells, ref, x=None) -> Probe:
    """The solution at reference coordinates ``ref`` (2, P) of elements ``cells`` (P,;
    -1: no element, values NaN). ``x`` (2, P) are the points in metres; by default the
    elements' (isoparametric) maps of ``ref``, so points on curved edges lie on the curve.
    A reduced solution is evaluated through its projected interpolation rows.
    """
    from whorl.postprocess.projected import is_reduced, point_values

    system = solution.system
    basis, form = system.basis, system.form
    cells = np.asarray(cells, dtype=np.int64)
    npts = cells.size
    inside = cells >= 0
    a = np.full(npts, np.nan, dtype=complex)
    a_rate = np.full(npts, np.nan, dtype=complex)
    grad = np.full((2, npts), np.nan, dtype=complex)
    if x is None:
        x = np.full((2, npts), np.nan)
    if inside.any():
        c = cells[inside]
        pts = np.asarray(ref, dtype=float)[:, inside, None]  # (2, P, 1): one point per cell
        if not np.all(np.isfinite(x[:, inside])):
            x[:, inside] = basis.mapping.F(pts, tind=c)[:, :, 0]
        if is_reduced(solution):  # projected interpolation rows (see .projected)
            val, g = point_values(solution, c, pts)
            a[inside], a_rate[inside], grad[:, inside] = val, 1j * solution.omega * val, g
        else:
            dofs = basis.element_dofs[:, c]
            coeff = solution.a[dofs]  # (Nbfun, P)
            coeff_rate = solution.a_rate[dofs]
            val = np.zeros(c.size, dtype=complex)
            rate = np.zeros(c.size, dtype=complex)
            g = np.zeros((2, c.size), dtype=complex)
            for k in range(basis.Nbfun):
                phi = basis.elem.gbasis(basis.mapping, pts, k, tind=c)[0]
                val += coeff[k] * np.asarray(phi)[:, 0]
                rate += coeff_rate[k] * np.asarray(phi)[:, 0]
                g += coeff[k] * phi.grad[:, :, 0]
            a[inside], a_rate[inside], grad[:, inside] = val, rate, g
    bx, by = form.flux_density(a, grad, x)
    b = np.array([bx, by])
    nu = np.where(inside, system.nu[np.maximum(cells, 0)], np.nan)
    sigma = np.where(inside, system.sigma[np.maximum(cells, 0)], 0.0)
    u, js = element_sources(solution)
    cu = np.maximum(cells, 0)
    e = -a_rate + np.where(sigma > 0, form.voltage_field(u[cu], x), 0)
    driving = e
    if getattr(solution.problem, "motions", ()):  # J = sigma (E + v x B) in moving conductors
        vel = element_velocity(solution.problem, x, cells)
        driving = e - np.where(sigma > 0, vel[0] * grad[0] + vel[1] * grad[1], 0)
    j = sigma * driving + np.where(inside, js[cu], np.nan)
    loss = sigma * np.abs(driving) ** 2
    return Probe(x, a, a_rate, b, nu * b, e, j, loss, inside, grad)


def line_points(start_m, end_m, samples: int) -> np.ndarray:
    """Evenly spaced points from ``start_m`` to ``end_m`` inclusive, shape (2, samples)."""
    t = np.linspace(0.0, 1.0, samples)
    s, e = np.asarray(start_m, float), np.asarray(end_m, float)
    return (s[:, None] + (e - s)[:, None] * t[None, :])
