"""The ``[domain]`` table and its ``[domain.boundary]`` side conditions (length unit)."""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass

from whorl.cases.reader import Context, Table
from whorl.meshes.geometry import DomainSpec
from whorl.meshes.shapes import Circle, Polygon, Rectangle, Ring
from whorl.solver.boundary import AppliedFieldSide, FluxNormal, FluxParallel, Open, Potential

DEFAULT_MARGIN = 4.0
CONDITIONS = {"flux-parallel": FluxParallel, "flux-normal": FluxNormal,
              "applied-field": AppliedFieldSide, "open": Open}


@dataclass(frozen=True)
class DomainInfo:
    spec: DomainSpec
    material: str
    boundary: dict


def bounding_box(shapes) -> tuple[float, float, float, float]:
    """Bounding box (xmin, ymin, xmax, ymax) of shapes, in the length unit."""
    boxes = [s.bbox() for s in shapes]
    return (min(b[0] for b in boxes), min(b[1] for b in boxes),
            max(b[2] for b in boxes), max(b[3] for b in boxes))


def reach(shape) -> float:
    """Largest distance from the origin to a point of ``shape``."""
    if isinstance(shape, Circle | Ring):
        r = shape.radius if isinstance(shape, Circle) else shape.outer
        return math.hypot(*shape.center) + r
    if isinstance(shape, Rectangle):
        (x, y), (w, h) = shape.corner, shape.size
        return max(math.hypot(px, py) for px in (x, x + w) for py in (y, y + h))
    if isinstance(shape, Polygon):
        return max(math.hypot(x, y) for x, y in shape.points)
    x0, y0, x1, y1 = shape.bbox()
    return max(math.hypot(px, py) for px in (x0, x1) for py in (y0, y1))


def margin_domain(shape: str, shapes, margin: float, axisymmetric: bool, mesh_size=None):
    """The domain at ``margin`` times the regions' bounding-box size from them.

    The size is the larger side of the bounding box, so thin parts still get
    room on every side. A rectangle surrounds the box at that distance (from
    r = 0 in axisymmetric models); a circle about the origin reaches that
    distance beyond the farthest point of any region.
    """
    x0, y0, x1, y1 = bounding_box(shapes)
    distance = margin * max(x1 - x0, y1 - y0)
    if shape == "circle":
        return DomainSpec("circle", radius=max(reach(s) for s in shapes) + distance,
                          mesh_size=mesh_size)
    left = 0.0 if axisymmetric else x0 - distance
    right = x1 + distance
    return DomainSpec("rectangle", corner=(left, y0 - distance),
                      size=(right - left, y1 - y0 + 2 * distance), mesh_size=mesh_size)


def read_domain(ctx: Context, table: Table, shapes) -> DomainInfo:
    """``[domain]``: ``shape`` (rectangle or circle), ``margin`` (default 4) or explicit
    ``corner``/``size`` or ``radius``, ``material`` (default air), ``mesh_size``,
    ``boundary``."""
    shape = table.string("shape", "rectangle", ("rectangle", "circle"))
    explicit = {"rectangle": ("corner", "size"), "circle": ("radius",)}[shape]
    wrong = {"rectangle": ("radius",), "circle": ("corner", "size")}[shape]
    for key in wrong:
        if table.has(key):
            raise table.error(key, f"{key!r} does not belong to a {shape} domain")
    table.allow({"shape", "margin", "material", "mesh_size", "boundary", *explicit})
    mesh_size = table.positive("mesh_size", "length", None, geometry=True)
    given = [k for k in explicit if table.has(k)]
    if given and table.has("margin"):
        raise table.error("margin", f"give either margin or {' and '.join(explicit)}, not both")
    if given and len(given) != len(explicit):
        missing = [k for k in explicit if k not in given][0]
        raise table.error(missing, "an explicit rectangle domain needs both corner and size "
                                   "(or use margin)")
    if given:
        spec = _explicit(ctx, table, shape, mesh_size)
    else:
        margin = table.positive("margin", "dimensionless", DEFAULT_MARGIN)
        spec = margin_domain(shape, shapes, margin, ctx.axisymmetric, mesh_size)
    material = table.string("material", "air")
    boundary = read_boundary(ctx, table.table("boundary", None), spec)
    return DomainInfo(spec, material, boundary)


def _explicit(ctx: Context, table: Table, shape: str, mesh_size) -> DomainSpec:
    if shape == "circle":
        return DomainSpec("circle", radius=table.positive("radius", "length", geometry=True),
                          mesh_size=mesh_size)
    corner, size = table.point("corner"), table.point("size")
    for i, s in enumerate(size, start=1):
        if s <= 0:
            raise table.error(f"size[{i}]", f"sizes must be > 0, got {s:g}")
    if ctx.axisymmetric and corner[0] < 0:
        raise table.error("corner[1]", f"an axisymmetric domain starts at r >= 0 (usually "
                                       f"r = 0), got r = {corner[0]:g}")
    return DomainSpec("rectangle", corner=corner, size=size, mesh_size=mesh_size)


def read_boundary(ctx: Context, table: Table | None, spec: DomainSpec) -> dict:
    """Side conditions by side name; sides not listed stay flux-parallel (A = 0)."""
    if table is None:
        return {}
    sides = spec.sides(ctx.axisymmetric)
    axis_side = ctx.axisymmetric and "axis" in sides and spec.shape == "rectangle"
    names = set(sides) - {"axis"} | ({"left"} if axis_side else set())
    table.allow(names, hint="" if spec.shape == "rectangle" else " (a circle has one side)")
    out = {}
    for side, raw in table.data.items():
        if axis_side and side == "left":
            if raw != "flux-parallel":
                raise table.error(side, "the left side lies on the axis r = 0, where A = 0 "
                                        "always; remove this entry")
            continue
        out[side] = _condition(table, side, raw, spec)
    return out


def _condition(table: Table, side: str, raw, spec: DomainSpec):
    if isinstance(raw, dict):
        sub = table.table(side)
        sub.allow({"potential", "phase"}, required=("potential",))
        value = sub.value("potential", "potential")
        phase = math.radians(sub.value("phase", "angle", 0.0))
        return Potential(value * cmath.exp(1j * phase) if phase else value)
    if not isinstance(raw, str) or raw not in CONDITIONS:
        raise table.error(side, f"expected one of {', '.join(map(repr, CONDITIONS))} or "
                                f"{{ potential = VALUE }}, got {raw!r}")
    if raw == "open" and spec.shape != "circle":
        raise table.error(side, "'open' needs a circle domain ([domain] shape = \"circle\")")
    return CONDITIONS[raw]()


def contains(spec: DomainSpec, x: float, y: float, slack: float = 1e-9) -> bool:
    """True if (x, y) lies in the domain (with a relative ``slack``)."""
    if spec.shape == "circle":
        return math.hypot(x, y) <= spec.radius * (1 + slack)
    (cx, cy), (w, h) = spec.corner, spec.size
    tol = slack * max(w, h)
    return cx - tol <= x <= cx + w + tol and cy - tol <= y <= cy + h + tol


def check_regions_inside(spec: DomainSpec, entries) -> None:
    """Every region must lie inside the domain; an error names the first that does not."""
    for entry in entries:
        shape = entry.spec.shape
        if spec.shape == "circle":
            inside = reach(shape) <= spec.radius * (1 + 1e-9)
        else:
            x0, y0, x1, y1 = shape.bbox()
            inside = contains(spec, x0, y0) and contains(spec, x1, y1)
        if not inside:
            raise entry.table.error(None, f"region {entry.spec.name!r} reaches outside the "
                                          "domain: enlarge [domain] or use margin")
