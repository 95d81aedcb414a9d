"""A picture of a tagged mesh: element edges, regions filled, a legend of region names.

Drawn on a bare :class:`matplotlib.figure.Figure` (Agg canvas): no display and no
global pyplot state are touched.
"""

from __future__ import annotations

import os

#: Region fill colours (cycled); the background is drawn in ``BACKGROUND_COLOUR``.
PALETTE = (
    "#e07b39", "#3b7dd8", "#4fa36b", "#c94f7c", "#8a6fd1", "#d4b23a",
    "#3aa6a6", "#a0522d", "#7f9c2b", "#5c6b8a", "#e0a2b8", "#2e8b57",
)
BACKGROUND_COLOUR = "#f2f2ee"
EDGE_COLOUR = "#30303080"

_UNIT_NAMES = {1.0: "m", 1e-1: "dm", 1e-2: "cm", 1e-3: "mm", 1e-6: "um", 0.0254: "in",
               0.3048: "ft"}


def unit_name(unit_m: float) -> str:
    """Name of a length unit given in metres (``1e-3`` -> ``"mm"``)."""
    for value, name in _UNIT_NAMES.items():
        if abs(unit_m - value) <= 1e-12 * value:
            return name
    return f"{unit_m:g} m"


def plot_mesh(tagged, path, title=None, unit=None, dpi=150) -> None:
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
    colours = [BACKGROUND_COLOUR] + [PALETTE[k % len(PALETTE)] for k in range(len(tagged.regions))]
    handles = []
    for name, colour in zip(names, colours, strict=True):
        elements = tagged.elements(name)
        if len(elements):
            ax.add_collection(PolyCollection(xy[mesh.t[:, elements].T], facecolors=colour,
                                             edgecolors="none"))
        edgecolor = "#888888" if name == tagged.background else "none"
        handles.append(Patch(facecolor=colour, edgecolor=edgecolor, label=name))
    width = 0.2 if mesh.t.shape[1] < 20000 else 0.08
    ax.add_collection(LineCollection(xy[mesh.facets.T], colors=EDGE_COLOUR, linewidths=width))
    ax.set_xlim(xy[:, 0].min(), xy[:, 0].max())
    ax.set_ylim(xy[:, 1].min(), xy[:, 1].max())
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

