r"""Axisymmetric formulation: A_phi(r, z), currents along phi.

Every volume integral is :math:`2\pi\int\cdot\, r\,dr\,dz`; the forms below
leave out the factor 2 pi (they are per radian) and totals put it back.
With curl A = (-dA/dz, dA/dr + A/r):

.. math::

    \int \nu \left[\partial_z A\,\partial_z v
        + (\partial_r A + A/r)(\partial_r v + v/r)\right] r
    + j\omega\int\sigma A v\, r - \sum_k u_k \int_k \sigma v = \int J_s v\, r

with u_k = V_k / (2 pi) for massive conductor k (E_phi = -j omega A + V_k/(2 pi r))
and its current through the cross-section

.. math::

    I_k = -j\omega\int_k \sigma A\,dr\,dz + u_k \int_k \frac{\sigma}{r}\,dr\,dz.

Quadrature points never lie on the axis, so the 1/r terms stay finite; A = 0
is imposed on the axis. B_r = -dA/dz, B_z = dA/dr + A/r.
"""

from __future__ import annotations

import numpy as np
from skfem import BilinearForm, Functional, LinearForm

AXISYMMETRIC = True


@BilinearForm
def stiffness(u, v, w):
    """int nu (curl u . curl v) r dr dz."""
    r = w.x[0]
    return w.nu * (u.grad[1] * v.grad[1] + (u.grad[0] + u / r) * (v.grad[0] + v / r)) * r


@BilinearForm
def conductor_mass(u, v, w):
    """int sigma u v r dr dz."""
    return w.sigma * u * v * w.x[0]


@LinearForm
def source_load(v, w):
    """int J v r dr dz."""
    return w.j * v * w.x[0]


@LinearForm
def voltage_coupling(v, w):
    """int_k sigma v dr dz (unweighted: u_k/r times the weight r)."""
    return w.sigma * v


@Functional
def voltage_conductance(w):
    """int_k sigma / r dr dz (S per radian)."""
    return w.sigma / w.x[0]


@Functional
def cross_section(w):
    """int dr dz: area of the cross-section in m^2."""
    return 1.0 + 0.0 * w.x[0]


def _over_r(value, r, at_axis):
    """value / r, with ``at_axis`` where r = 0 (probes may sit on the axis;
    quadrature points never do)."""
    r = np.asarray(r)
    safe = np.where(r > 0, r, 1.0)
    return np.where(r > 0, value / safe, at_axis)


def flux_density(a, grad_a, x):
    """(Br, Bz) = (-dA/dz, dA/dr + A/r); on the axis A/r -> dA/dr."""
    return -grad_a[1], grad_a[0] + _over_r(a, x[0], grad_a[0])


def voltage_field(u, x):
    """The applied part of E_phi in a massive conductor: u / r = V / (2 pi r) (0 on the axis,
    where no finite current density can be driven)."""
    return _over_r(u, x[0], 0.0)


def weight(x):
    """Integration weight of totals per radian: r."""
    return x[0]


def applied_potential(b, r, z):
    """A_phi of a uniform axial field Bz = b: A = b r / 2 (Wb/m)."""
    return b * r / 2
