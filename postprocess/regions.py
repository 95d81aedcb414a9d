"""Totals per region: current, loss, stored energy, Lorentz force; for moving regions
the torque and the mechanical power that keeps them moving."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.postprocess.fields import quadrature_fields
from whorl.postprocess.projected import is_reduced, peak_fields, region_values
from whorl.solver.motion import moving_regions


@dataclass
class RegionTotals:
    """Totals of one region (time averages; planar per model depth, axisymmetric full turn).

    current_a : complex net current through the cross-section (A, RMS)
    loss_w : eddy-current loss (W)
    magnetic_energy_j : time-average stored magnetic energy (J)
    force_n : (Fx, Fy) or (Fr, Fz) time-average Lorentz force (N); Fr of a full ring is 0
    radial_load_n : axisymmetric only: the radial force density summed as a scalar over
        the ring, int f_r dV (N): > 0 bursts the ring outwards, < 0 crushes it inwards
    mean_radial_pressure_pa : axisymmetric only: radial_load_n over the ring's outer
        lateral area 2 pi r_max h (Pa), the mean pressure that holds the load
    mechanical_power_w : moving regions only: the time-average power that keeps the
        motion going, -int f . v dV (W): -F . v for a translation, -torque x angular
        velocity for a rotation; > 0 when the field brakes the body
    torque_nm : rotating regions only: the time-average Lorentz torque about the centre of
        rotation, int ((x - c) x f)_z dV (N m, per model depth), counter-clockwise positive
    """

    name: str
    current_a: complex
    loss_w: float
    magnetic_energy_j: float
    force_n: tuple[float, float]
    area_m2: float
    peak_loss_density_w_per_m3: float = 0.0
    peak_loss_at_m: tuple[float, float] | None = None
    radial_load_n: float | None = None
    mean_radial_pressure_pa: float | None = None
    mechanical_power_w: float | None = None
    torque_nm: float | None = None
    peak_flux_density_t: float = 0.0


def peak_flux_density(solution, q) -> np.ndarray:
    """Per element, the largest |B(t)| over its quadrature points (T): for RMS phasors the
    peak of the rotating or pulsating field, sqrt(|Bx|^2 + |By|^2 + |Bx^2 + By^2|); for a
    static or transient state (instantaneous values) |B|."""
    bx, by = q.b[0], q.b[1]
    if solution.frequency_hz > 0:
        mag = np.abs(bx) ** 2 + np.abs(by) ** 2 + np.abs(bx * bx + by * by)
    else:
        mag = np.real(bx) ** 2 + np.real(by) ** 2
    return np.sqrt(mag).max(axis=1)


def region_totals(solution, fields=None) -> dict[str, RegionTotals]:
    """Totals of the background (``domain``) and every region of the solution's mesh
    (for a reduced solution from projections, see :mod:`.projected`)."""
    if is_reduced(solution):
        return _projected_totals(solution)
    q = fields if fields is not None else quadrature_fields(solution)
    tagged = solution.problem.mesh
    names = (tagged.background, *tagged.regions)
    index = tagged.region_of_element()
    n = len(names)

    def per_region(values):
        return np.bincount(index, weights=values, minlength=n)

    current = per_region((q.j * q.ds).sum(1).real) + 1j * per_region((q.j * q.ds).sum(1).imag)
    loss = per_region((q.loss * q.dv).sum(1))
    energy = per_region((q.energy * q.dv).sum(1))
    area = per_region(q.ds.sum(1))
    axisymmetric = solution.problem.axisymmetric
    if axisymmetric:
        fx = np.zeros(n)  # the radial forces of a full ring cancel
        radial = per_region((q.force[0] * q.dv).sum(1))
    else:
        fx = per_region((q.force[0] * q.dv).sum(1))
    fy = per_region((q.force[1] * q.dv).sum(1))
    peak = q.loss.max(axis=1)
    b_peak = peak_flux_density(solution, q)
    moving = moving_regions(solution.problem)
    mechanical = None
    if moving and q.velocity is not None:
        mechanical = per_region((-(q.force[0] * q.velocity[0] + q.force[1] * q.velocity[1])
                                 * q.dv).sum(1))
    out = {}
    for i, name in enumerate(names):
        elems = tagged.elements(name)  # the mesh's own element lists, not a search
        top, at = 0.0, None
        if elems.size and peak[elems].max() > 0:
            e = elems[np.argmax(peak[elems])]
            k = np.argmax(q.loss[e])
            top, at = float(q.loss[e, k]), (float(q.x[0, e, k]), float(q.x[1, e, k]))
        load = pressure = None
        if axisymmetric and elems.size and i > 0:
            mesh = solution.problem.mesh.mesh
            pts = mesh.p[:, mesh.t[:, elems]]
            r_max, height = pts[0].max(), pts[1].max() - pts[1].min()
            load = float(radial[i])
            pressure = load / (2 * np.pi * r_max * height) if r_max * height > 0 else None
        mech = torque = None
        if name in moving:
            mech = float(mechanical[i])
            centre = getattr(moving[name], "center", None)
            if centre is not None:
                arm = (q.x[0, elems] - centre[0], q.x[1, elems] - centre[1])
                torque = float(((arm[0] * q.force[1, elems] - arm[1] * q.force[0, elems])
                                * q.dv[elems]).sum())
        out[name] = RegionTotals(name, complex(current[i]), float(loss[i]), float(energy[i]),
                                 (float(fx[i]), float(fy[i])), float(area[i]), top, at,
                                 load, pressure, mech, torque,
                                 float(b_peak[elems].max()) if elems.size else 0.0)
    return out


def _ring(solution, elems):
    """(largest radius, height) of an axisymmetric region's elements (m)."""
    mesh = solution.problem.mesh.mesh
    pts = mesh.p[:, mesh.t[:, elems]]
    return pts[0].max(), pts[1].max() - pts[1].min()


def _projected_totals(solution) -> dict[str, RegionTotals]:
    """:func:`region_totals` of a reduced solution: sums from the projected operators,
    the peaks over elements from the potential at the quadrature points."""
    tagged = solution.problem.mesh
    values = region_values(solution)
    loss_q, x, b_peak = peak_fields(solution)
    peak = loss_q.max(axis=1)
    axisymmetric = solution.problem.axisymmetric
    out = {}
    for i, (name, (area, current, loss, energy, flux_j)) in enumerate(values.items()):
        elems = tagged.elements(name)
        if axisymmetric:  # f = (Re J conj(Bz), -Re J conj(Br)); a ring's Fr cancels
            force, radial = (0.0, float(-flux_j[0].real)), float(flux_j[1].real)
        else:             # f = (-Re J conj(By), Re J conj(Bx))
            force, radial = (float(-flux_j[1].real), float(flux_j[0].real)), None
        top, at = 0.0, None
        if elems.size and peak[elems].max() > 0:
            e = elems[np.argmax(peak[elems])]
            k = np.argmax(loss_q[e])
            top, at = float(loss_q[e, k]), (float(x[0, e, k]), float(x[1, e, k]))
        load = pressure = None
        if axisymmetric and elems.size and i > 0:
            r_max, height = _ring(solution, elems)
            load = radial
            pressure = load / (2 * np.pi * r_max * height) if r_max * height > 0 else None
        out[name] = RegionTotals(name, complex(current), float(loss), float(energy), force,
                                 area, top, at, load, pressure, None, None,
                                 float(b_peak[elems].max()) if elems.size else 0.0)
    return out
