r"""The saturable part of a problem: the elements whose material has a B-H curve.

Only this part of the stiffness changes with the field, so only it is
re-assembled: the rest of S0 is assembled once (:func:`base_matrix` removes the
saturable elements' linear stiffness from the assembled S0).

Weak forms over the saturable elements, with curl v = (dv/dy, -dv/dx) in planar
models and (-dv/dz, dv/dr + v/r) with the weight r in axisymmetric ones:

- residual (the field's internal force): :math:`\int \mathbf H(\mathbf B)\cdot\nabla\times v`
  with H = nu(|B|) B;
- consistent tangent: :math:`\int \nabla\times\delta A\cdot
  \frac{\partial\mathbf H}{\partial\mathbf B}\nabla\times v` with the differential
  reluctivity tensor nu I + 2 dnu/d(B^2) B B^T (see :mod:`.bh`);
- per-element stiffness: :math:`\int \nu_e\,\nabla\times u\cdot\nabla\times v` (harmonic
  studies with an effective reluctivity per element).

The material is evaluated at every quadrature point (Newton) or per element
(effective permeability). An optional magnetisation multiplier m per element
(``Problem.element_magnetisation``) scales the curve's magnetisation:
B = mu0 H + m (B_curve(H) - mu0 H).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from skfem import BilinearForm, LinearForm, asm

from whorl.solver.coefficients import element_regions, magnetisation


def _curl(u, x, axisymmetric):
    if axisymmetric:
        return -u.grad[1], u.grad[0] + u / x[0]
    return u.grad[1], -u.grad[0]


def _weight(x, axisymmetric):
    return x[0] if axisymmetric else 1.0 + 0.0 * x[0]


def forms(axisymmetric: bool):
    """(residual, tangent, stiffness) weak forms for the geometry."""

    @LinearForm
    def residual(v, w):
        """int (Hx curl_x v + Hy curl_y v) (r)."""
        cx, cy = _curl(v, w.x, axisymmetric)
        return (w.hx * cx + w.hy * cy) * _weight(w.x, axisymmetric)

    @BilinearForm
    def tangent(u, v, w):
        """int [nu curl u . curl v + (H' - nu)(n . curl u)(n . curl v)] (r)."""
        ux, uy = _curl(u, w.x, axisymmetric)
        vx, vy = _curl(v, w.x, axisymmetric)
        along = (w.nx * ux + w.ny * uy) * (w.nx * vx + w.ny * vy)
        return (w.nu * (ux * vx + uy * vy) + w.extra * along) * _weight(w.x, axisymmetric)

    @BilinearForm
    def stiffness(u, v, w):
        """int nu curl u . curl v (r)."""
        ux, uy = _curl(u, w.x, axisymmetric)
        vx, vy = _curl(v, w.x, axisymmetric)
        return w.nu * (ux * vx + uy * vy) * _weight(w.x, axisymmetric)

    return residual, tangent, stiffness


def has_saturable(problem) -> bool:
    """True when any material of the problem has a B-H curve."""
    return any(getattr(m, "bh_curve", None) is not None for m in problem.materials.values())


@dataclass
class Saturable:
    """The elements with a B-H curve and what the solvers need of them.

    ``elements`` are mesh element indices; ``groups`` maps each curve (after the
    magnetisation multiplier) to positions in ``elements``; ``basis`` is the
    field basis restricted to ``elements`` (global dof numbering); ``size`` is the
    system's number of unknowns.
    """

    elements: np.ndarray
    groups: list
    basis: object
    axisymmetric: bool
    size: int
    regions: dict = field(default_factory=dict)  # region name -> positions in elements
    curves: list = field(default_factory=list)  # (unscaled curve, positions), one per region
    multiplier: np.ndarray | None = None  # m per saturable element (1 when None)
    _curl: tuple | None = None  # see curl_operator
    _volumes: np.ndarray | None = None  # see volumes

    def __post_init__(self):
        self.residual_form, self.tangent_form, self.stiffness_form = forms(self.axisymmetric)
        self.n_field = self.basis.N

    # -- fields at the quadrature points -----------------------------------------------

    def flux_density(self, x):
        """(Bx, By) at the quadrature points of the saturable elements, shape (2, E, Q)."""
        a = self.basis.interpolate(np.asarray(x[: self.n_field]).real)
        qx = np.asarray(self.basis.global_coordinates())
        return np.array(_curl(a, qx, self.axisymmetric))

    def material(self, b):
        """nu(|B|) and dH/dB(|B|) at quadrature points ``b`` (2, E, Q)."""
        mag = np.sqrt(b[0] ** 2 + b[1] ** 2)
        nu = np.empty_like(mag)
        slope = np.empty_like(mag)
        for curve, pos in self.groups:
            nu[pos] = curve.reluctivity(mag[pos])
            slope[pos] = curve.field_strength_slope(mag[pos])
        return mag, nu, slope

    # -- assembled pieces (full system numbering, field block only) ----------------------

    def _pad_vector(self, v):
        out = np.zeros(self.size)
        out[: self.n_field] = v
        return out

    def _pad_matrix(self, k):
        k = k.tocoo()
        return sp.csr_matrix((k.data, (k.row, k.col)), shape=(self.size, self.size))

    def residual(self, x):
        """int H(B(x)) . curl v over the saturable elements, for every unknown."""
        b = self.flux_density(x)
        _, nu, _ = self.material(b)
        return self._pad_vector(asm(self.residual_form, self.basis, hx=nu * b[0], hy=nu * b[1]))

    def tangent(self, x):
        """The consistent tangent of :meth:`residual` at ``x`` (sparse, system size)."""
        b = self.flux_density(x)
        mag, nu, slope = self.material(b)
        safe = np.where(mag > 0, mag, 1.0)
        nx, ny = np.where(mag > 0, b[0] / safe, 0.0), np.where(mag > 0, b[1] / safe, 0.0)
        k = asm(self.tangent_form, self.basis, nu=nu, extra=slope - nu, nx=nx, ny=ny)
        return self._pad_matrix(k)

    def stiffness(self, nu_elements):
        """int nu_e curl u . curl v with one reluctivity per saturable element (m/H)."""
        nu_q = np.repeat(np.asarray(nu_elements, float)[:, None], self.basis.X.shape[1], axis=1)
        return self._pad_matrix(asm(self.stiffness_form, self.basis, nu=nu_q))

    def curl_operator(self):
        """Sparse (Cx, Cy) with (Cx @ a, Cy @ a) = curl a at the quadrature points of the
        saturable elements (flattened element by element) for field dofs ``a``; built
        once (the element-wise interpolation is the same at every solution)."""
        if self._curl is None:
            basis = self.basis
            n_q = basis.dx.shape[1]
            qx = np.asarray(basis.global_coordinates())
            rows = np.arange(self.elements.size * n_q).reshape(self.elements.size, n_q)
            parts = ([], [], [], [])
            for k in range(basis.Nbfun):
                phi = basis.basis[k][0]
                cx, cy = _curl(phi, qx, self.axisymmetric)
                dofs = np.broadcast_to(basis.element_dofs[k][:, None], rows.shape)
                parts[0].append(rows.ravel())
                parts[1].append(dofs.ravel())
                parts[2].append(np.broadcast_to(cx, rows.shape).ravel())
                parts[3].append(np.broadcast_to(cy, rows.shape).ravel())
            r, c = np.concatenate(parts[0]), np.concatenate(parts[1])
            shape = (rows.size, self.n_field)
            self._curl = tuple(sp.csr_matrix((np.concatenate(v), (r, c)), shape=shape)
                               for v in parts[2:])
        return self._curl

    def volumes(self):
        """Volume of each saturable element per radian (axisymmetric) or per metre (m^3),
        computed once."""
        if self._volumes is None:
            r = np.asarray(self.basis.global_coordinates())[0] if self.axisymmetric else 1.0
            self._volumes = (self.basis.dx * r).sum(axis=1)
        return self._volumes

    def element_flux_density(self, x):
        """Per saturable element: the RMS of |B| over the element (area mean of |B|^2), T.
        For complex phasors ``x`` (RMS), both parts count."""
        return rms_flux_density(self.curl_operator(), self.basis.dx, x[: self.n_field])


def rms_flux_density(curl, dx, a):
    """Per element: the RMS of |B| over it (T) for field dofs ``a``, from the curl operator
    ``curl`` = (Cx, Cy) at its quadrature points (flattened element by element, see
    :meth:`Saturable.curl_operator`) and their weights ``dx`` (elements, points)."""
    a = np.asarray(a)
    cx, cy = curl
    total = (np.abs(cx @ a) ** 2 + np.abs(cy @ a) ** 2).reshape(dx.shape)
    return np.sqrt((total * dx).sum(axis=1) / dx.sum(axis=1))


def saturable_part(system) -> Saturable | None:
    """The :class:`Saturable` of an assembled system, or None when every material is linear."""
    problem = system.problem
    if not has_saturable(problem):
        return None
    regions = element_regions(problem)
    chosen, names = [], []
    for name, elems in regions.items():
        material = problem.materials[name]
        if getattr(material, "bh_curve", None) is not None and elems.size:
            chosen.append(elems)
            names.append(name)
    if not chosen:
        return None
    elements = np.concatenate(chosen)
    m = magnetisation(problem)  # Curie transition from temperatures, and any explicit m
    if np.all(m == 1.0):
        m = None
    groups, curves, positions, start = [], [], {}, 0
    for name, elems in zip(names, chosen, strict=True):
        pos = np.arange(start, start + elems.size)
        positions[name] = pos
        start += elems.size
        curve = problem.materials[name].bh_curve
        curves.append((curve, pos))
        if m is None:
            groups.append((curve, pos))
            continue
        # Newton's scaled curves: m rounded to 1e-3 (at most a thousand curves)
        values = np.round(np.clip(np.asarray(m, float)[elems], 0.0, 1.0), 3)
        for value in np.unique(values):
            groups.append((curve if value == 1.0 else curve.scaled(float(value)),
                           pos[values == value]))
    basis = system.basis.with_elements(elements)
    multiplier = None if m is None else np.clip(np.asarray(m, float)[elements], 0.0, 1.0)
    return Saturable(elements, groups, basis, problem.axisymmetric, system.size, positions,
                     curves, multiplier)


def base_matrix(system, saturable: Saturable):
    """S0 without the saturable elements' stiffness (it was assembled with ``system.nu``)."""
    return (system.S0 - saturable.stiffness(system.nu[saturable.elements])).tocsr()
