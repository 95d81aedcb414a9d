"""Closed-form heat-conduction solutions for the heating checks.

Sources: H. S. Carslaw and J. C. Jaeger, *Conduction of Heat in Solids*, 2nd ed.,
Oxford 1959: the long solid cylinder with uniform heat generation and surface
heat transfer (steady state and the series of Bessel modes, chapter VII), and
the semi-infinite solid with a constant surface flux (chapter II). Radiation
cooling of a lumped body: the closed-form integral of
dT/dt = -eps sigma_SB A (T^4 - Ta^4) / (rho c V) (standard calculus).
"""

from __future__ import annotations

import math

import numpy as np
from scipy.integrate import quad
from scipy.optimize import brentq
from scipy.special import j0, j1, jn_zeros

SIGMA_SB = 5.670374419e-8


def cylinder_steady(r, a, q, h, k, t_amb):
    """T = Ta + q a/(2h) + q (a^2 - r^2)/(4k)."""
    return t_amb + q * a / (2 * h) + q * (a * a - np.asarray(r) ** 2) / (4 * k)


def cylinder_transient(r, t, a, q, h, k, alpha, t_amb, modes: int = 40):
    """Temperature of the cylinder starting at Ta: steady state plus Bessel modes
    theta = sum C_n J0(beta_n r/a) exp(-beta_n^2 alpha t/a^2), beta J1(beta) = Bi J0(beta)."""
    bi = h * a / k
    z0 = jn_zeros(0, modes)
    z1 = np.concatenate([[0.0], jn_zeros(1, modes - 1)])
    out = cylinder_steady(r, a, q, h, k, t_amb)
    for n in range(modes):
        beta = brentq(lambda b: b * j1(b) - bi * j0(b), z1[n] + 1e-12, z0[n])

        def theta0(x):
            return -(cylinder_steady(x * a, a, q, h, k, t_amb) - t_amb)

        num = quad(lambda x, b=beta: theta0(x) * j0(b * x) * x, 0, 1, limit=200)[0]
        c = num / (0.5 * (j0(beta) ** 2 + j1(beta) ** 2))
        out = out + c * j0(beta * np.asarray(r) / a) * math.exp(-beta ** 2 * alpha * t / a ** 2)
    return out


def semi_infinite_surface(flux, t, k, alpha):
    """Surface temperature rise under a constant flux: 2 F sqrt(alpha t / pi) / k."""
    return 2 * flux * np.sqrt(alpha * np.asarray(t) / math.pi) / k


def radiation_time(t_from, t_to, t_amb, eps, area, rho_c_volume):
    """Time for a lumped body to cool by radiation from t_from to t_to (K)."""
    def f(temp):
        return (math.log((temp + t_amb) / (temp - t_amb)) + 2 * math.atan(temp / t_amb)) \
            / (4 * t_amb ** 3)
    return rho_c_volume / (eps * SIGMA_SB * area) * (f(t_to) - f(t_from))
