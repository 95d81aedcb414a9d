"""Closed-form and semi-analytic references for moving conductors, each with its source."""

from __future__ import annotations

import numpy as np
from scipy.integrate import quad
from scipy.special import jv

MU0 = 4e-7 * np.pi


def transverse_cylinder_power(b0, radius, outer, sigma, frequency):
    r"""Loss per unit length (W/m) of a solid non-magnetic cylinder of ``radius`` in a
    uniform transverse field of RMS value ``b0`` alternating at ``frequency``, inside a
    coaxial circle of radius ``outer`` on which A is that of the applied field.

    Inside, A = C J1(kr) sin(theta) with k^2 = -j omega mu0 sigma; outside,
    A = alpha (r + beta/r) sin(theta) (the Bessel solution for a cylinder in a
    transverse field: R. L. Stoll, *The Analysis of Eddy Currents*, 1974). With
    g = ka J1'(ka)/J1(ka) = ka J0(ka)/J1(ka) - 1, matching A and dA/dr at r = a gives
    b = beta/a^2 = (1 - g)/(1 + g), and A = b0 outer sin(theta) at r = outer gives
    alpha = b0 / (1 + b a^2/outer^2) (alpha -> b0 as outer -> infinity). The power
    flowing in is P' = Re(j omega pi a^2 |alpha|^2 (1 + b)(1 - b)^* / mu0). Low-frequency
    limit: sigma omega^2 b0^2 pi a^4 / 4.
    """
    omega = 2 * np.pi * frequency
    ka = np.sqrt(-1j * omega * MU0 * sigma) * radius
    g = ka * jv(0, ka) / jv(1, ka) - 1
    b = (1 - g) / (1 + g)
    alpha = b0 / (1 + b * radius**2 / outer**2)
    return float(np.real(1j * omega * np.pi * radius**2 * abs(alpha) ** 2 * (1 + b)
                         * np.conj(1 - b) / MU0))


def plate_reflection(k, thickness, sigma, speed):
    r"""Reflection coefficient R(k) of a plate of ``thickness`` moving at ``speed`` along
    x for the Fourier mode exp(jkx) (k > 0) of a static field from above.

    In the plate d^2A/dy^2 = (k^2 + j k mu0 sigma v) A (from curl curl A / mu0 =
    sigma v x curl A); with gamma^2 = k^2 + j k mu0 sigma v, q = exp(-2 gamma d)
    (gamma - k)/(gamma + k) and Z = gamma (1 - q)/(1 + q), R = (k - Z)/(k + Z)
    (continuity of A and dA/dy on both faces; R = -1 for a perfect conductor,
    0 without one). The exact finite-thickness version of the thin-plate analysis of
    J. R. Reitz, J. Appl. Phys. 41, 2067 (1970).
    """
    gamma = np.sqrt(k * k + 1j * k * MU0 * sigma * speed)
    q = np.exp(-2 * gamma * thickness) * (gamma - k) / (gamma + k)
    z = gamma * (1 - q) / (1 + q)
    return (k - z) / (k + z)


def plate_force(wires, height, thickness, sigma, speed):
    r"""Force (Fx, Fy) in N per metre on an infinite plate (top face y = 0) moving at
    ``speed`` along +x under straight wires ``[(x_i, I_i), ...]`` (A, DC) at y = height.

    The plate's field at wire i from wire j is the reflected Fourier modes
    A_r = (mu0 I_j / 4 pi) int R(k)/|k| exp(-|k|(y + h) + jk(x - x_j)) dk; the force on
    the wires is I_i (dA_r/dx, dA_r/dy) and the plate takes the opposite. Integrals by
    adaptive quadrature over k > 0 (R(-k) = R(k)^*).
    """
    fx = fy = 0.0
    for xi, ii in wires:
        for xj, ij in wires:
            shift = xi - xj

            def integral(part, shift=shift):
                def f(k):
                    return part(plate_reflection(k, thickness, sigma, speed)
                                * np.exp(-2 * k * height + 1j * k * shift))
                return quad(f, 0, np.inf, limit=500)[0]

            c = MU0 * ii * ij / (4 * np.pi)
            fx += 2 * c * integral(lambda z: (1j * z).real)
            fy -= 2 * c * integral(lambda z: z.real)
    return -fx, -fy


def reitz_thin_plate(current, height, sigma, thickness, speed):
    r"""Drag and lift (N/m) on a thin plate under one wire (J. R. Reitz, J. Appl. Phys.
    41, 2067, 1970): the image recedes at w = 2/(mu0 sigma d); with F0 = mu0 I^2/(4 pi h),
    lift = F0 v^2/(v^2 + w^2) and drag = F0 v w/(v^2 + w^2)."""
    w = 2 / (MU0 * sigma * thickness)
    f0 = MU0 * current**2 / (4 * np.pi * height)
    v = speed
    return f0 * v * w / (v * v + w * w), f0 * v * v / (v * v + w * w)
