"""A picture of a tagged mesh: element edges, regions filled and named, a legend.

Drawn on a bare :class:`matplotlib.figure.Figure` (Agg canvas): no display and no
global pyplot state are touched.
"""

from __future__ import annotations

import os

import numpy as np

#: Region fill colours (cycled); the background is drawn in ``BACKGROUND_COLOUR``.
PALETTE = (
    "#e07b39", "#3b7dd8", "#4fa36b", "#c94f7c", "#8a6fd1", "#d4b23a",
    "#3aa6a6", "#a0522d", "#7f9c2b", "#5c6b8a", "#e0a2b8", "#2e8b57",
)
BACKGROUND_COLOUR = "#f2f2ee"
EDGE_COLOUR = "#30303080"

_UNIT_NAMES = {1.0: "m", 1e-1: "dm", 1e-2: "cm", 1e-3: "mm", 1e-6: "um", 0.0254: "in",
               0.3048: "ft"}


def region_colours(count: int) -> list:
    """``count`` distinct fill colours: the palette, and for more regions than it holds
    evenly spaced hues (so no two regions share a colour)."""
    if count <= len(PALETTE):
        return list(PALETTE[:count])
    from matplotlib import colormaps

    return [colormaps["hsv"](k / count) for k in range(count)]


def unit_name(unit_m: float) -> str:
    """Name of a length unit given in metres (``1e-3`` -> ``"mm"``)."""
    for value, name in _UNIT_NAMES.items():
        if abs(unit_m - value) <= 1e-12 * value:
            return name
    return f"{unit_m:g} m"


def region_label_spot(xy, t, elements):
    """Where to write a region's name: the centroid of its element nearest to the mean
    of its element centroids (always on the region, even for a ring or a hole)."""
    if not len(elements):
        return None
    centres = xy[t[:, elements]].mean(axis=0)  # (E, 2)
    mean = centres.mean(axis=0)
    k = int(((centres - mean) ** 2).sum(axis=1).argmin())
    return tuple(centres[k])


def plot_mesh(tagged, path, title=None, unit=None, dpi=150, zoom=False) -> None:
    """Write a PNG of ``tagged`` to ``path``: edges, regions in colour, a legend.

    Parameters
    ----------
    tagged : TaggedMesh
        Mesh in metres; drawn in the case's length unit (``tagged.unit_m``).
    path : str or path-like
        The PNG file to write.
    title : str, optional
        Figure title.
    unit : str, optional
        Name of the length unit for the axis labels (default from ``unit_m``).
    dpi : int
        Resolution in dots per inch.
    zoom : bool
        Show only the regions (their bounding box and a margin), not the whole domain.
    """
    from matplotlib.collections import LineCollection, PolyCollection
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch

    mesh = tagged.mesh
    xy = mesh.p.T / tagged.unit_m
    unit = unit or unit_name(tagged.unit_m)
    fig = Figure(figsize=(8, 6.5))
    ax = fig.add_subplot()
    names = [tagged.background, *tagged.regions]
    colours = [BACKGROUND_COLOUR] + region_colours(len(tagged.regions))
    # the exterior disk of an open boundary is a device of the method: not drawn
    hidden = (tagged.elements(tagged.kelvin.subdomain) if tagged.kelvin is not None
              else np.zeros(0, dtype=np.int64))
    shown = np.setdiff1d(np.arange(mesh.t.shape[1]), hidden)
    handles = []
    for name, colour in zip(names, colours, strict=True):
        elements = np.setdiff1d(tagged.elements(name), hidden)
        if len(elements):
            ax.add_collection(PolyCollection(xy[mesh.t[:, elements].T], facecolors=colour,
                                             edgecolors="none"))
        edgecolor = "#888888" if name == tagged.background else "none"
        handles.append(Patch(facecolor=colour, edgecolor=edgecolor, label=name))
    for name in tagged.regions:
        spot = region_label_spot(xy, mesh.t, tagged.elements(name))
        if spot is not None:
            ax.annotate(name, spot, ha="center", va="center", fontsize="x-small",
                        bbox={"boxstyle": "round,pad=0.2", "facecolor": "white",
                              "alpha": 0.75, "linewidth": 0})
    width = 0.2 if mesh.t.shape[1] < 20000 else 0.08
    edges = np.unique(mesh.t2f[:, shown])
    ax.add_collection(LineCollection(xy[mesh.facets[:, edges].T], colors=EDGE_COLOUR,
                                     linewidths=width))
    frame = xy[np.unique(mesh.t[:3, shown])]  # the model, without the exterior disk
    visible = frame
    if zoom and tagged.regions:
        used = np.concatenate([tagged.elements(n) for n in tagged.regions])
        visible = xy[np.unique(mesh.t[:, used])] if used.size else frame
    lo, hi = visible.min(axis=0), visible.max(axis=0)
    pad = 0.1 * (hi - lo).max() if zoom else 0.0
    ax.set_xlim(max(lo[0] - pad, frame[:, 0].min()), min(hi[0] + pad, frame[:, 0].max()))
    ax.set_ylim(max(lo[1] - pad, frame[:, 1].min()), min(hi[1] + pad, frame[:, 1].max()))
    ax.set_aspect("equal")
    if tagged.axisymmetric:
        ax.set_xlabel(f"r [{unit}]")
        ax.set_ylabel(f"z [{unit}]")
    else:
        ax.set_xlabel(f"x [{unit}]")
        ax.set_ylabel(f"y [{unit}]")
    ax.set_title(title or f"{mesh.t.shape[1]} elements, {mesh.p.shape[1]} nodes")
    ax.legend(handles=handles, loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize="small",
              frameon=False)
    fig.tight_layout()
    fig.savefig(os.fspath(path), dpi=dpi)

