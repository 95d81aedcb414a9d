r"""Planar formulation: A_z(x, y), currents along z.

Strong form, with RMS phasors and time factor exp(j omega t):

.. math::

    -\nabla\cdot(\nu \nabla A) + j\omega\sigma A - \sigma u_k = J_s

where :math:`u_k` is the voltage per unit length of massive conductor k
(E_z = -j omega A + u_k). Weak form, for every test function v:

.. math::

    \int \nu \nabla A\cdot\nabla v + j\omega \int \sigma A v
    - \sum_k u_k \int_k \sigma v = \int J_s v

and the current of conductor k, I_k = -j omega int_k sigma A + u_k int_k sigma.

Flux density: B = (dA/dy, -dA/dx). Totals are per metre and multiplied by the
model depth (``measure``).
"""

from __future__ import annotations

from skfem import BilinearForm, Functional, LinearForm
from skfem.helpers import dot, grad

AXISYMMETRIC = False


@BilinearForm
def stiffness(u, v, w):
    """int nu grad u . grad v  (reluctivity ``w.nu`` in m/H)."""
    return w.nu * dot(grad(u), grad(v))


@BilinearForm
def conductor_mass(u, v, w):
    """int sigma u v  (conductivity ``w.sigma`` in S/m)."""
    return w.sigma * u * v


@LinearForm
def source_load(v, w):
    """int J v for a unit-weighted density ``w.j``."""
    return w.j * v


@LinearForm
def voltage_coupling(v, w):
    """int_k sigma v: couples u_k into the field equation."""
    return w.sigma * v


@Functional
def voltage_conductance(w):
    """int_k sigma: the current per unit u_k of a conductor at DC (S, per metre of depth)."""
    return w.sigma


@Functional
def cross_section(w):
    """int dS: area of the cross-section in m^2."""
    return 1.0 + 0.0 * w.x[0]


def flux_density(a, grad_a, x):
    """(Bx, By) = (dA/dy, -dA/dx) from A and its gradient at points ``x``."""
    return grad_a[1], -grad_a[0]


def voltage_field(u, x):
    """The applied part of E_z in a massive conductor: u (V/m)."""
    return u + 0.0 * x[0]


def weight(x):
    """Integration weight for totals per metre of depth: 1."""
    return 1.0 + 0.0 * x[0]


def applied_potential(b, x, y):
    """A_z of the uniform field (Bx, By) = b: A = Bx y - By x (Wb/m)."""
    bx, by = b
    return bx * y - by * x
