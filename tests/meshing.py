"""Small structured meshes for solver tests that should not depend on gmsh."""

from __future__ import annotations

import numpy as np
from skfem import MeshTri

from whorl.meshes.tagged import TaggedMesh


def graded(a, b, h_min, h_max, growth=1.15, towards="both"):
    """Nodes from a to b, size h_min at the chosen end(s), growing geometrically to h_max."""
    def one_side(length):
        xs, x, h = [0.0], 0.0, h_min
        while x + h < length:
            x += h
            xs.append(x)
            h = min(h * growth, h_max)
        xs.append(length)
        return np.array(xs)

    if towards == "a":
        return a + one_side(b - a)
    if towards == "b":
        return b - one_side(b - a)[::-1]
    mid = 0.5 * (a + b)
    left = a + one_side(mid - a)
    return np.concatenate([left, (a + b - left)[::-1][1:]])


def tensor_mesh(xs, ys, regions, axisymmetric=False, sides=True):
    """A TaggedMesh on the grid xs x ys (metres).

    ``regions`` maps a name to a predicate on element centroids (x, y);
    the first matching region wins; everything else is the background.
    """
    m = MeshTri.init_tensor(np.asarray(xs), np.asarray(ys))
    centre = m.p[:, m.t].mean(axis=1)
    taken = np.zeros(m.t.shape[1], dtype=bool)
    subdomains = {}
    for name, inside in regions.items():
        sel = inside(centre[0], centre[1]) & ~taken
        subdomains[name] = np.flatnonzero(sel)
        taken |= sel
    subdomains["domain"] = np.flatnonzero(~taken)
    m = m.with_subdomains(subdomains)
    x0, x1, y0, y1 = xs[0], xs[-1], ys[0], ys[-1]
    eps = 1e-12 * max(x1 - x0, y1 - y0)
    bnd = {
        "left": lambda x: np.abs(x[0] - x0) < eps,
        "right": lambda x: np.abs(x[0] - x1) < eps,
        "bottom": lambda x: np.abs(x[1] - y0) < eps,
        "top": lambda x: np.abs(x[1] - y1) < eps,
    }
    if axisymmetric and abs(x0) < eps:
        bnd["axis"] = bnd.pop("left")
    m = m.with_boundaries(bnd)
    return TaggedMesh(m, tuple(regions), 1.0, axisymmetric)
