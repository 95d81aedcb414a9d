"""Shape keys of a ``[[region]]`` (or of one of its ``subtract`` entries), length unit.

Shapes and their keys:

- ``rectangle``: ``corner``, ``size``; optional ``fillet`` / ``chamfer`` (one value for
  every corner, or a list of 4 from the lower-left corner counter-clockwise; 0 leaves a
  corner sharp).
- ``circle``: ``center``, ``radius``; ``ring``: ``center``, ``inner``, ``outer``. In an
  axisymmetric model a circle or ring centred on the axis is a sphere or spherical shell
  (its half at r >= 0).
- ``polygon``: ``points``, each ``[x, y]``, ``{ at = [x, y], fillet = r }``,
  ``{ at = [x, y], chamfer = c }``, ``{ arc_to = [x, y], center = [cx, cy] }`` (an arc
  from the previous point about that centre, counter-clockwise unless ``clockwise =
  true``) or ``{ arc_to = [x, y], through = [x, y] }``; optional ``fillet`` / ``chamfer``
  for every corner between two straight sides.
- any shape: ``subtract = [{ shape = ..., ... }, ...]`` cuts holes.
"""

from __future__ import annotations

import math

from whorl.cases.limits import MAX_POLYGON_POINTS, check_count
from whorl.cases.reader import Table
from whorl.meshes.outline import (
    Arc,
    Outline,
    WithHoles,
    arc_through,
    check_arc,
    half_disk,
    half_ring,
    rounded,
)
from whorl.meshes.shapes import Circle, Polygon, Rectangle, Ring

SHAPE_KEYS = {
    "rectangle": {"corner", "size", "fillet", "chamfer"},
    "circle": {"center", "radius"},
    "ring": {"center", "inner", "outer"},
    "polygon": {"points", "fillet", "chamfer"},
}
REQUIRED = {"rectangle": ("corner", "size"), "circle": ("center", "radius"),
            "ring": ("center", "inner", "outer"), "polygon": ("points",)}
#: Axisymmetric: a centre closer to the axis than this fraction of the radius is on it.
ON_AXIS = 1e-9


def read_shape(table: Table, shape_name: str, axisymmetric: bool):
    """The shape drawn by ``table`` (holes included)."""
    shape = _READERS[shape_name](table, axisymmetric)
    if table.has("subtract"):
        shape = WithHoles(shape, tuple(_holes(table, axisymmetric)))
    return shape


def _holes(table: Table, axisymmetric: bool) -> list:
    raw = table.raw("subtract")
    if isinstance(raw, dict):
        raw = [raw]
    if not isinstance(raw, list) or not raw:
        raise table.error("subtract", "expected a list of shapes [{ shape = \"circle\", ... }]")
    holes = []
    for i, item in enumerate(raw, start=1):
        sub = Table(table.ctx, item, table.key(f"subtract[{i}]"), table.block)
        name = sub.string("shape", choices=tuple(_READERS))
        sub.allow(SHAPE_KEYS[name] | {"shape"}, required=REQUIRED[name])
        holes.append(_READERS[name](sub, axisymmetric))
    return holes


def _corner_values(table: Table, key: str, count: int) -> list[float]:
    """One value for every corner, or a list of ``count``; 0 means none."""
    raw = table.raw(key)
    if isinstance(raw, list):
        if len(raw) != count:
            raise table.error(key, f"expected one value or a list of {count} (one per "
                                   f"corner), got {len(raw)} values")
        values = [table.convert(v, f"{table.key(key)}[{i}]", "length", True, key)
                  for i, v in enumerate(raw, start=1)]
    else:
        values = [table.positive(key, "length", geometry=True)] * count
    for i, v in enumerate(values, start=1):
        if v < 0:
            raise table.error(f"{key}[{i}]" if isinstance(raw, list) else key,
                              f"must be >= 0, got {v:g}")
    return values


def _treated(table: Table, count: int) -> list:
    """Per-corner ``("fillet", r)`` / ``("chamfer", c)`` / None from the table's keys."""
    corners = [None] * count
    if table.has("fillet") and table.has("chamfer") and not isinstance(
            table.raw("fillet"), list) and not isinstance(table.raw("chamfer"), list):
        raise table.error("chamfer", "give either fillet or chamfer for every corner, or "
                                     "lists with 0 where a corner has the other")
    for kind in ("fillet", "chamfer"):
        if not table.has(kind):
            continue
        for i, v in enumerate(_corner_values(table, kind, count)):
            if v > 0 and corners[i] is not None:
                raise table.error(kind, f"corner {i + 1} has both a fillet and a chamfer")
            if v > 0:
                corners[i] = (kind, v)
    return corners


def _rectangle(table: Table, axisymmetric: bool):
    corner = table.point("corner")
    size = table.point("size")
    for i, s in enumerate(size, start=1):
        if s <= 0:
            raise table.error(f"size[{i}]", f"sizes must be > 0, got {s:g}")
    if not (table.has("fillet") or table.has("chamfer")):
        return Rectangle(corner, size)
    (x, y), (w, h) = corner, size
    vertices = ((x, y), (x + w, y), (x + w, y + h), (x, y + h))
    corners = _treated(table, 4)
    try:
        return rounded(vertices, (None,) * 4, corners)
    except ValueError as err:
        raise table.error("fillet" if table.has("fillet") else "chamfer", str(err)) from None


def _circle(table: Table, axisymmetric: bool):
    center = table.point("center")
    radius = table.positive("radius", "length", geometry=True)
    if axisymmetric and abs(center[0]) <= ON_AXIS * radius:
        return half_disk(center[1], radius)
    return Circle(center, radius)


def _ring(table: Table, axisymmetric: bool):
    center = table.point("center")
    inner = table.positive("inner", "length", geometry=True)
    outer = table.positive("outer", "length", geometry=True)
    if inner >= outer:
        raise table.error("inner", f"the inner radius ({inner:g}) must be less than the "
                                   f"outer radius ({outer:g})")
    if axisymmetric and abs(center[0]) <= ON_AXIS * outer:
        return half_ring(center[1], inner, outer)
    return Ring(center, inner, outer)


def _polygon(table: Table, axisymmetric: bool):
    raw = table.raw("points")
    if not isinstance(raw, list) or len(raw) < 2:
        raise table.error("points", "a polygon needs a list of points [[x, y], ...]")
    check_count(table, "points", len(raw), MAX_POLYGON_POINTS, "points")
    key = table.key("points")
    vertices, arcs, corners, through = [], [], [], []
    for i, item in enumerate(raw, start=1):
        where = f"points[{i}]"
        if isinstance(item, list):
            vertices.append(_xy(table, item, f"{key}[{i}]", where))
            arcs.append(None)
            corners.append(None)
            through.append(None)
            continue
        if not isinstance(item, dict):
            raise table.error(where, f"expected a point [x, y] or a table, got {item!r}")
        sub = Table(table.ctx, item, f"{key}[{i}]", table.block)
        if "arc_to" in item:
            sub.allow({"arc_to", "center", "through", "clockwise"}, required=("arc_to",))
            if ("center" in item) == ("through" in item):
                raise sub.error(None, "an arc gives either center = [x, y] or "
                                      "through = [x, y]")
            vertices.append(sub.point("arc_to"))
            if "center" in item:
                arcs.append(("center", sub.point("center"), not sub.boolean("clockwise", False)))
            else:
                if "clockwise" in item:
                    raise sub.error("clockwise", "an arc through a point needs no direction")
                arcs.append(("through", sub.point("through"), None))
            corners.append(None)
            through.append(sub)
        else:
            sub.allow({"at", "fillet", "chamfer"}, required=("at",))
            if "fillet" in item and "chamfer" in item:
                raise sub.error("chamfer", "a corner has a fillet or a chamfer, not both")
            vertices.append(sub.point("at"))
            arcs.append(None)
            kind = "fillet" if "fillet" in item else "chamfer" if "chamfer" in item else None
            corners.append(None if kind is None else
                           (kind, sub.positive(kind, "length", geometry=True)))
            through.append(None)
    n = len(vertices)
    # arcs[i] describes the side arriving at vertex i; Outline wants the side leaving it.
    sides = []
    for i in range(n):
        j = (i + 1) % n
        spec = arcs[j]
        if spec is None:
            sides.append(None)
            continue
        try:
            if spec[0] == "center":
                arc = Arc(spec[1], spec[2])
                check_arc(vertices[i], vertices[j], arc)
            else:
                arc = arc_through(vertices[i], spec[1], vertices[j])
        except ValueError as err:
            raise through[j].error(None, str(err)) from None
        sides.append(arc)
    if not any(sides):
        if n < 3:
            raise table.error("points", "a polygon needs at least 3 points")
        if not any(corners) and not table.has("fillet") and not table.has("chamfer"):
            polygon = Polygon(tuple(vertices))
            if polygon.area() <= 1e-12 * _extent(polygon) ** 2:
                raise table.error("points", "the polygon has no area (all points on one line?)")
            return polygon
    for kind in ("fillet", "chamfer"):
        if not table.has(kind):
            continue
        if isinstance(table.raw(kind), list):
            raise table.error(kind, "a polygon takes one value here; give a corner its own "
                                    "with { at = [x, y], fillet = r }")
        if table.has("fillet") and table.has("chamfer"):
            raise table.error("chamfer", "give either fillet or chamfer for every corner")
        size = table.positive(kind, "length", geometry=True)
        for i in range(n):
            if (corners[i] is None and sides[i - 1] is None and sides[i] is None
                    and _is_corner(vertices, i)):
                corners[i] = (kind, size)
    try:
        outline = rounded(vertices, sides, corners) if any(corners) else Outline(
            tuple(vertices), tuple(sides))
    except ValueError as err:
        raise table.error("points", str(err)) from None
    problems = outline.problems()
    if problems:
        raise table.error("points", "; ".join(problems))
    return outline


def _is_corner(vertices, i) -> bool:
    """Whether vertex i is a real corner (its two sides are not in line)."""
    n = len(vertices)
    p, c, q = vertices[i - 1], vertices[i], vertices[(i + 1) % n]
    cross = (c[0] - p[0]) * (q[1] - c[1]) - (c[1] - p[1]) * (q[0] - c[0])
    return abs(cross) > 1e-9 * math.dist(p, c) * math.dist(c, q)


def _xy(table: Table, item, key: str, where: str) -> tuple[float, float]:
    if len(item) != 2:
        raise table.error(where, f"expected a point [x, y], got {item!r}")
    return tuple(table.convert(v, f"{key}[{j}]", "length", True, "points")
                 for j, v in enumerate(item, start=1))


def _extent(shape) -> float:
    x0, y0, x1, y1 = shape.bbox()
    return max(abs(x0), abs(x1), abs(y0), abs(y1), x1 - x0, y1 - y0)


_READERS = {"rectangle": _rectangle, "circle": _circle, "ring": _ring, "polygon": _polygon}
