"""A picture of the regions as drawn (before meshing): every outline and hole, filled
in the mesh picture's colours, each region named on it. ``whorl check --picture`` writes
it so a user sees at once that a drawing was read as meant.

Drawn on a bare :class:`matplotlib.figure.Figure` (Agg canvas).
"""

from __future__ import annotations

import os

import numpy as np

from whorl.meshes.validate import _outline
from whorl.postprocess.meshplot import BACKGROUND_COLOUR, PALETTE, unit_name


def boundaries(shape) -> tuple[np.ndarray, list[np.ndarray]]:
    """The outer boundary (m, 2) and the holes' boundaries of a shape (length unit)."""
    holes = getattr(shape, "holes", ())
    outer = getattr(shape, "outer", shape) if holes else shape
    if getattr(shape, "kind", None) == "ring":
        t = np.linspace(0.0, 2 * np.pi, 721)[:-1]
        inner = np.c_[shape.center[0] + shape.inner * np.cos(t),
                      shape.center[1] + shape.inner * np.sin(t)]
        return _outline(shape), [inner]
    return _outline(outer), [boundaries(h)[0] for h in holes]


def plot_outlines(geometry, path, title=None, dpi=150) -> None:
    """Write a PNG of the regions of ``geometry`` (a :class:`~whorl.meshes.Geometry`) to
    ``path``: outlines filled in region colours, holes outlined, names at each region."""
    from matplotlib.figure import Figure
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MplPath

    fig = Figure(figsize=(8, 6.5))
    ax = fig.add_subplot()
    ax.set_facecolor(BACKGROUND_COLOUR)
    lo, hi = np.array([np.inf, np.inf]), np.array([-np.inf, -np.inf])
    for k, region in enumerate(geometry.regions):
        outer, holes = boundaries(region.shape)
        loops = [outer, *holes]
        verts = np.concatenate([np.vstack([p, p[:1]]) for p in loops])
        codes = np.concatenate([[MplPath.MOVETO] + [MplPath.LINETO] * (len(p) - 1)
                                + [MplPath.CLOSEPOLY] for p in loops])
        colour = PALETTE[k % len(PALETTE)]
        ax.add_patch(PathPatch(MplPath(verts, codes), facecolor=colour, alpha=0.55,
                               edgecolor="black", linewidth=0.8))
        x0, y0, x1, y1 = region.shape.bbox()
        spot = _label_spot(region.shape, outer, (x0, y0, x1, y1))
        ax.annotate(region.name, spot, ha="center", va="center", fontsize="small",
                    bbox={"boxstyle": "round,pad=0.2", "facecolor": "white", "alpha": 0.8,
                          "linewidth": 0})
        lo, hi = np.minimum(lo, (x0, y0)), np.maximum(hi, (x1, y1))
    pad = 0.08 * max(hi - lo)
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad, hi[1] + pad)
    ax.set_aspect("equal")
    unit = unit_name(geometry.unit_m)
    names = ("r", "z") if geometry.axisymmetric else ("x", "y")
    ax.set_xlabel(f"{names[0]} [{unit}]")
    ax.set_ylabel(f"{names[1]} [{unit}]")
    ax.set_title(title or f"{len(geometry.regions)} regions as drawn")
    fig.tight_layout()
    fig.savefig(os.fspath(path), dpi=dpi)


def _label_spot(shape, outer, box):
    """A point inside the shape near the middle of its box (the box centre if inside)."""
    from whorl.meshes.validate import contains

    x0, y0, x1, y1 = box
    gx, gy = np.meshgrid(np.linspace(x0, x1, 21), np.linspace(y0, y1, 21))
    inside = contains(shape, gx.ravel(), gy.ravel())
    if inside is None or not inside.any():
        return ((x0 + x1) / 2, (y0 + y1) / 2)
    px, py = gx.ravel()[inside], gy.ravel()[inside]
    k = np.argmin((px - (x0 + x1) / 2) ** 2 + (py - (y0 + y1) / 2) ** 2)
    return (float(px[k]), float(py[k]))
