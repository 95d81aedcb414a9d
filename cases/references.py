"""Closed-form results the shipped verification cases are checked against.

Each function names its published source. Units SI; fields RMS.
"""

from __future__ import annotations

import numpy as np
from scipy.special import ellipe, ellipk, jv

MU0 = 4e-7 * np.pi


def slab_loss_per_area(h_surface, thickness, sigma, mu_r, frequency):
    r"""Eddy loss per unit face area (W/m^2) of a slab with the tangential RMS field
    ``h_surface`` on both faces: (2 H^2 / (sigma delta)) (sinh b - sin b)/(cosh b + cos b),
    b = d / delta (R. L. Stoll, *The Analysis of Eddy Currents*, 1974, ch. 2)."""
    delta = np.sqrt(2 / (2 * np.pi * frequency * MU0 * mu_r * sigma))
    b = thickness / delta
    return 2 * abs(h_surface) ** 2 / (sigma * delta) * (np.sinh(b) - np.sin(b)) / (
        np.cosh(b) + np.cos(b))


def slab_propagation(sigma, mu_r, frequency):
    """k with k^2 = j omega mu sigma (Stoll 1974)."""
    return np.sqrt(1j * 2 * np.pi * frequency * MU0 * mu_r * sigma)


def cylinder_power_per_length(h0, radius, sigma, mu_r, frequency):
    """Power per unit length (W/m) in a long solid cylinder in a uniform axial RMS field h0:
    -Re(2 pi a E_phi(a) H0*) with H_z = H0 J0(kr)/J0(ka), k^2 = -j omega mu sigma
    (E. J. Davies and P. Simpson, *Induction Heating Handbook*, 1979)."""
    k = np.sqrt(-1j * 2 * np.pi * frequency * MU0 * mu_r * sigma)
    e_phi = (h0 * k * jv(1, k * radius) / jv(0, k * radius)) / sigma
    return float(-np.real(2 * np.pi * radius * e_phi * np.conj(h0)))


def round_wire_impedance(radius, sigma, frequency):
    """Internal impedance per metre (ohm/m) of a round wire: k/(2 pi a sigma) J0(ka)/J1(ka),
    k^2 = -j omega mu0 sigma (S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in
    Communication Electronics*, 1994, sec. 5.12)."""
    k = np.sqrt(-1j * 2 * np.pi * frequency * MU0 * sigma)
    return complex(k / (2 * np.pi * radius * sigma) * jv(0, k * radius) / jv(1, k * radius))


def sphere_loss(radius, sigma, b_rms, frequency):
    """Time-average loss (W) of a conducting sphere in a uniform RMS field B: from its
    magnetic polarizability alpha = -2 pi a^3 [1 - 3/(k a)^2 + 3 cot(k a)/(k a)],
    k = (1 + j)/delta, P = omega mu0 Im(alpha) H0^2 (L. D. Landau, E. M. Lifshitz,
    *Electrodynamics of Continuous Media*, 2nd ed., 1984, sec. 59, problem 1)."""
    omega = 2 * np.pi * frequency
    delta = np.sqrt(2 / (omega * MU0 * sigma))
    ka = (1 + 1j) / delta * radius
    alpha = -2 * np.pi * radius**3 * (1 - 3 / ka**2 + 3 / (ka * np.tan(ka)))
    return float(omega * MU0 * alpha.imag * (b_rms / MU0) ** 2)


def two_wire_inductance(spacing, radius):
    """Inductance per metre of a two-wire line at low frequency: (mu0/pi)(ln(D/a) + 1/4)
    (F. W. Grover, *Inductance Calculations*, 1946)."""
    return MU0 / np.pi * (np.log(spacing / radius) + 0.25)


def parallel_force_per_length(current, spacing):
    """Force per metre between two long parallel conductors: mu0 I1 I2 / (2 pi d), RMS
    currents, time average (Ampere's force law)."""
    return MU0 * current * current / (2 * np.pi * spacing)


def _maxwell_mutual(r1, r2, dz):
    """Mutual inductance (H) of coaxial circular filaments (Maxwell 1873; Grover 1946)."""
    k2 = 4 * r1 * r2 / ((r1 + r2) ** 2 + dz**2)
    k = np.sqrt(k2)
    return MU0 * np.sqrt(r1 * r2) * ((2 / k - k) * ellipk(k2) - 2 / k * ellipe(k2))


def coil_inductance(r_in, r_out, height, turns, n=40):
    """Self-inductance of a coil of rectangular section with uniform current density:
    Maxwell's filament formula integrated over both sections with n x n and (n+1) x (n+1)
    Gauss points, Richardson-extrapolated from n and 2n (its n^-2 error below 1e-4)."""
    def once(m):
        def points(q):
            x, w = np.polynomial.legendre.leggauss(q)
            r = (r_in + r_out) / 2 + (r_out - r_in) / 2 * x
            z = height / 2 * x
            rr, zz = np.meshgrid(r, z, indexing="ij")
            return rr.ravel(), zz.ravel(), np.outer(w * (r_out - r_in) / 2, w * height / 2).ravel()

        r1, z1, w1 = points(m)
        r2, z2, w2 = points(m + 1)
        total = 0.0
        for start in range(0, r1.size, 400):
            s = slice(start, start + 400)
            total += np.sum(w1[s, None] * w2[None, :]
                            * _maxwell_mutual(r1[s, None], r2[None, :], z1[s, None] - z2[None, :]))
        return turns**2 / ((r_out - r_in) * height) ** 2 * total

    coarse, fine = once(n), once(2 * n)
    return fine + (fine - coarse) / 3
