"""Closed-form solutions the tests compare against, each with its source."""

from __future__ import annotations

import numpy as np
from scipy.special import jv

MU0 = 4e-7 * np.pi


def slab_loss_per_area(h_surface, thickness, sigma, mu_r, frequency):
    r"""Eddy loss per unit face area (W/m^2) of a slab of ``thickness`` with the
    same tangential RMS field ``h_surface`` on both faces.

    P = (2 H^2 / (sigma delta)) (sinh b - sin b) / (cosh b + cos b), b = d / delta
    (R. L. Stoll, *The Analysis of Eddy Currents*, 1974, ch. 2; J. Lammeraner and
    M. Stafl, *Eddy Currents*, 1966). Limits: 2 H^2/(sigma delta) for b >> 1 (two
    faces of a half-space) and sigma omega^2 mu^2 H^2 d^3 / 12 for b << 1.
    """
    omega = 2 * np.pi * frequency
    delta = np.sqrt(2 / (omega * MU0 * mu_r * sigma))
    b = thickness / delta
    return 2 * abs(h_surface) ** 2 / (sigma * delta) * (np.sinh(b) - np.sin(b)) / (
        np.cosh(b) + np.cos(b))


def slab_propagation(sigma, mu_r, frequency):
    """k with k^2 = j omega mu sigma: fields vary as cosh(k x) inside the slab."""
    omega = 2 * np.pi * frequency
    return np.sqrt(1j * omega * MU0 * mu_r * sigma)


def cylinder_power_per_length(h0, radius, sigma, mu_r, frequency):
    r"""Time-average power per unit length (W/m) induced in a long solid
    cylinder of ``radius`` in a uniform axial RMS field ``h0`` at its surface.

    H_z(r) = H0 J0(kr)/J0(ka) with k^2 = -j omega mu sigma; E_phi = -(1/sigma) dH_z/dr;
    the Poynting vector E_phi H_z* points outwards (phi x z = r), so the power flowing
    in is P' = -Re(2 pi a E_phi(a) H0*) (E. J. Davies and P. Simpson, *Induction Heating
    Handbook*, 1979; also Stoll 1974). High-frequency limit 2 pi a H0^2/(sigma delta).
    """
    omega = 2 * np.pi * frequency
    k = np.sqrt(-1j * omega * MU0 * mu_r * sigma)
    e_phi = (h0 * k * jv(1, k * radius) / jv(0, k * radius)) / sigma
    return float(-np.real(2 * np.pi * radius * e_phi * np.conj(h0)))


def round_wire_impedance(radius, sigma, frequency):
    r"""Internal impedance per unit length (ohm/m, complex) of a round wire of ``radius``
    (m) and conductivity ``sigma`` (S/m) with its return far away:
    Z' = k J0(ka) / (2 pi a sigma J1(ka)), k^2 = -j omega mu0 sigma (S. Ramo,
    J. R. Whinnery, T. Van Duzer, *Fields and Waves in Communication Electronics*, 1965,
    skin effect in round wires). Re Z' is the AC resistance, Im Z' / omega the internal
    inductance.
    """
    k = np.sqrt(-1j * 2 * np.pi * frequency * MU0 * sigma)
    return complex(k / (2 * np.pi * radius * sigma) * jv(0, k * radius) / jv(1, k * radius))


def cylinder_field(r, h0, radius, sigma, mu_r, frequency):
    """H_z(r) inside the cylinder (A/m, complex RMS), same source as above."""
    omega = 2 * np.pi * frequency
    k = np.sqrt(-1j * omega * MU0 * mu_r * sigma)
    return h0 * jv(0, k * np.asarray(r)) / jv(0, k * radius)


def slab_step_flux(t, half_thickness, sigma, mu_r, h0, terms=200):
    r"""Flux per metre of height (Wb/m) in half a slab (0 < x < L) after its surface field
    steps from 0 to ``h0`` at t = 0 (instantaneous values).

    The diffusion equation dH/dt = (1/(mu sigma)) d2H/dx2 is the heat equation; with
    the surface held at h0 (H. S. Carslaw and J. C. Jaeger, *Conduction of Heat in
    Solids*, 2nd ed., 1959, section 3.3):
    H(x, t) = h0 [1 - (4/pi) sum (-1)^n/(2n+1) exp(-(2n+1)^2 pi^2 D t / (4 L^2))
                                                      cos((2n+1) pi x/(2L))]
    and its integral over 0 < x < L gives
    Phi(t) = mu h0 L [1 - sum 8/((2n+1)^2 pi^2) exp(-(2n+1)^2 pi^2 D t / (4 L^2))].
    """
    L = half_thickness
    D = 1 / (MU0 * mu_r * sigma)
    k = 2 * np.arange(terms) + 1
    t = np.atleast_1d(np.asarray(t, dtype=float))
    s = np.sum(8 / (k[None, :] ** 2 * np.pi**2)
               * np.exp(-(k[None, :] ** 2) * np.pi**2 * D * t[:, None] / (4 * L**2)), axis=1)
    return MU0 * mu_r * h0 * L * (1 - s)


def rlc_discharge(t, capacitance, inductance, resistance, v0):
    """Current (A) of a capacitor charged to v0 discharging through series R and L
    (underdamped): i = v0/(omega_d L) exp(-alpha t) sin(omega_d t), alpha = R/(2L),
    omega_d = sqrt(1/(LC) - alpha^2) (any circuits text)."""
    alpha = resistance / (2 * inductance)
    wd = np.sqrt(1 / (inductance * capacitance) - alpha**2)
    return v0 / (wd * inductance) * np.exp(-alpha * t) * np.sin(wd * t)
