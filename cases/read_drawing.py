"""``shape = "drawing"``: region outlines from one layer of a DXF file.

Keys: ``file`` (a DXF file inside the case file's folder), ``layer``, and optional
``scale`` (> 0, default 1), ``offset`` ([x, y], length unit, default [0, 0]),
``rotate`` (degrees counter-clockwise about the drawing's origin, default 0) and
``tolerance`` (how far the straight pieces of a spline or ellipse may stray from the
curve, length unit; default a thousandth of the length unit). Several separate
outlines on the layer become regions ``NAME.1``, ``NAME.2``, ... (largest first).
"""

from __future__ import annotations

from pathlib import Path

from whorl.cases.reader import Table
from whorl.meshes.dxf import DrawingError, Placement, read_drawing
from whorl.meshes.outline import half_disk

DRAWING_KEYS = {"file", "layer", "scale", "offset", "rotate", "tolerance"}


def data_file(table: Table, key: str) -> Path:
    """The file named by ``key``, relative to the case file's folder and inside it."""
    raw = table.string(key)
    folder = (table.ctx.folder or Path.cwd()).resolve()
    path = (folder / Path(raw).expanduser()).resolve()
    if not path.is_relative_to(folder):
        raise table.error(key, f"{raw!r} lies outside the case file's folder {folder}: "
                               "keep data files beside the case")
    if not path.is_file():
        raise table.error(key, f"no file {raw!r} in {folder}")
    return path


def read_drawn(table: Table, axisymmetric: bool) -> list:
    """The shapes drawn on the table's layer (one or more)."""
    path = data_file(table, "file")
    layer = table.string("layer")
    scale = table.positive("scale", "dimensionless", 1.0)
    offset = table.point("offset", (0.0, 0.0))
    rotate = table.value("rotate", "angle", 0.0)
    tolerance = table.positive("tolerance", "length", 1e-3, geometry=True)
    placement = Placement(table.ctx.unit_m, scale, offset, rotate, tolerance)
    try:
        shapes, _ = read_drawing(path, layer, placement)
    except DrawingError as err:
        raise table.error("layer" if "layer" in str(err) else "file", str(err)) from None
    if axisymmetric:
        shapes = [_on_axis(s) for s in shapes]
    return shapes


def _on_axis(shape):
    """A drawn circle centred on the axis of an axisymmetric model is a sphere."""
    arcs = getattr(shape, "arcs", None)
    if (arcs is None or len(arcs) != 2 or not all(arcs)
            or arcs[0].center != arcs[1].center):
        return shape
    cx, cz = arcs[0].center
    radius = arcs[0].radius(shape.vertices[0])
    if abs(cx) > 1e-9 * radius:
        return shape
    return half_disk(cz, radius)
