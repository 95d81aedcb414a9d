"""A conducting slab between two air gaps in a uniform tangential field (planar).

The slab fills |x| < d/2; the sides x = +-X carry the applied field's potential
A = -B0 x; top and bottom are flux-normal, so the field is one-dimensional.
The surface field follows from flux conservation across the gaps and the slab:
    2 B0 X = mu0 H_s (2X - d) + mu H_s (2/k) tanh(k d/2).
"""

from __future__ import annotations

import numpy as np
from analytic import MU0, slab_loss_per_area, slab_propagation
from meshing import graded, tensor_mesh

from whorl.solver import (
    BUILTIN,
    AppliedField,
    AppliedFieldSide,
    FluxNormal,
    Material,
    Problem,
    skin_depth,
)

B0 = 1e-3  # T, RMS


def slab_problem(xs, thickness, sigma, mu_r, height, order):
    tm = tensor_mesh(xs, np.linspace(0, height, 2),
                     {"slab": lambda x, y: np.abs(x) < thickness / 2})
    return Problem(tm, {"slab": Material("metal", sigma, mu_r), "domain": BUILTIN["air"]},
                   sources=(AppliedField("ext", (0.0, B0)),),
                   boundary={"left": AppliedFieldSide(), "right": AppliedFieldSide(),
                             "top": FluxNormal(), "bottom": FluxNormal()},
                   order=order)


def graded_slab_nodes(thickness, delta, per_delta, gap):
    """Nodes graded from delta/per_delta at both faces (the mesher's skin-depth rule)."""
    d = thickness
    h = min(delta / per_delta, d / 6)
    return np.concatenate([graded(-d / 2 - gap, -d / 2, h, gap, 1.5, "b")[:-1],
                           graded(-d / 2, d / 2, h, d / 6, 1.25),
                           graded(d / 2, d / 2 + gap, h, gap, 1.5, "a")[1:]])


def exact_loss(thickness, half_width, sigma, mu_r, frequency, height):
    """Loss (W per metre of depth) of the slab model by the closed form."""
    k = slab_propagation(sigma, mu_r, frequency)
    d, X = thickness, half_width
    h_s = 2 * B0 * X / (MU0 * (2 * X - d) + MU0 * mu_r * (2 / k) * np.tanh(k * d / 2))
    return slab_loss_per_area(h_s, d, sigma, mu_r, frequency) * height


__all__ = ["B0", "exact_loss", "graded_slab_nodes", "skin_depth", "slab_problem"]
