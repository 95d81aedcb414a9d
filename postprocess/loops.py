r"""Loops: the flux through a closed contour and the EMF around it (Faraday's law).

Four numbers per loop, which must agree where the contour lies in air
(Faraday's law in integral form, EMF = -d(flux)/dt; any electromagnetics text):

- ``flux_wb``: the flux through one turn, from A (the circulation of A around
  the contour);
- ``flux_from_b_wb``: the same flux per turn, B integrated over a surface the
  contour bounds;
- ``flux_linkage_wb``: turns x ``flux_wb`` (Wb-turns);
- ``emf_v``: -d(flux linkage)/dt, that is -j omega x flux linkage for phasors;
- ``emf_from_e_v``: the circulation of E, turns times, which in a massive
  conductor includes its electrostatic part (the applied voltage term).

Sign convention: the EMF is positive when it drives current along the loop's
direction of traversal, and the flux is positive along the normal that
direction gives by the right-hand rule; hence EMF = -d(flux linkage)/dt.

Orientation (right-hand rule):

- axisymmetric loop through (r, z): the circle of radius r, traversed along
  +phi; flux is positive along +z through the disk it bounds.
- planar loop with sides ``start`` and ``end`` of length ``depth``: traversed
  along +z on the ``start`` side and -z on the ``end`` side; flux is positive
  along the normal obtained by turning the direction start -> end by +90
  degrees (counter-clockwise). flux = depth (A(start) - A(end)).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.postprocess.probes import probe

SAMPLES = 2000  # Gauss points on the surface integral (composite Gauss-Legendre)


EMF_SIGN = ("EMF = -d(flux linkage)/dt (phasors: -j omega x flux linkage), positive along "
            "the loop's direction, which the flux's positive direction follows by the "
            "right-hand rule")


@dataclass
class LoopResult:
    """One loop's numbers: fluxes per turn (Wb), EMFs of all turns (V)."""

    name: str
    turns: float
    flux_wb: complex
    flux_from_b_wb: complex
    emf_v: complex
    emf_from_e_v: complex

    @property
    def flux_linkage_wb(self) -> complex:
        """Turns x flux per turn (Wb-turns)."""
        return self.turns * self.flux_wb


def _gauss(a, b, n):
    """Composite 2-point Gauss-Legendre nodes and weights on [a, b] with n/2 panels."""
    panels = max(n // 2, 1)
    edges = np.linspace(a, b, panels + 1)
    mid, half = 0.5 * (edges[1:] + edges[:-1]), 0.5 * (edges[1:] - edges[:-1])
    g = 1 / np.sqrt(3)
    nodes = np.concatenate([mid - half * g, mid + half * g])
    weights = np.concatenate([half, half])
    return nodes, weights


def axisymmetric_loop(solution, name, r, z, turns=1.0, surface=True) -> LoopResult:
    """The loop r = const, z = const (metres); ``surface=False`` skips the B integral
    (``flux_from_b_wb`` is then NaN), which time series do not need."""
    at = probe(solution, np.array([[r], [z]]))
    flux = 2 * np.pi * r * at.a[0]
    flux_b = complex(np.nan)
    if surface:
        rr, w = _gauss(0.0, r, SAMPLES)
        disk = probe(solution, np.array([rr, np.full_like(rr, z)]))
        flux_b = np.sum(disk.b[1] * 2 * np.pi * rr * w)
    emf_e = 2 * np.pi * r * at.e[0]
    emf = -2 * np.pi * r * at.a_rate[0]
    return LoopResult(name, turns, flux, flux_b, turns * emf, turns * emf_e)


def planar_loop(solution, name, start, end, turns=1.0, surface=True) -> LoopResult:
    """The loop with long sides through ``start`` and ``end`` (metres), length = depth;
    ``surface`` as for :func:`axisymmetric_loop`."""
    depth = solution.problem.depth_m
    ends = probe(solution, np.array([[start[0], end[0]], [start[1], end[1]]]))
    flux = depth * (ends.a[0] - ends.a[1])
    flux_b = complex(np.nan)
    if surface:
        s, w = _gauss(0.0, 1.0, SAMPLES)
        p0, p1 = np.asarray(start, float), np.asarray(end, float)
        length = np.hypot(*(p1 - p0))
        t = (p1 - p0) / length
        normal = np.array([-t[1], t[0]])
        pts = p0[:, None] + (p1 - p0)[:, None] * s[None, :]
        strip = probe(solution, pts)
        flux_b = depth * length * np.sum((strip.b[0] * normal[0] + strip.b[1] * normal[1]) * w)
    emf_e = depth * (ends.e[0] - ends.e[1])
    emf = -depth * (ends.a_rate[0] - ends.a_rate[1])
    return LoopResult(name, turns, flux, flux_b, turns * emf, turns * emf_e)
