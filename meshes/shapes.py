"""Region shapes, registered by name.

Every shape is a plain, frozen data object in the model's length unit with two
duties: its bounding box (for the domain margin and the axis check) and the
gmsh OCC entity (or entities) that draw it. New shapes register themselves with
:func:`register_shape` under the name a case file uses.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

SHAPES: dict[str, type] = {}


def shifted(shape, dx: float, dy: float):
    """A copy of ``shape`` moved by (dx, dy) (length unit)."""
    return shape.shifted(dx, dy)


def register_shape(name: str):
    """Class decorator: make a shape available under ``name``."""

    def wrap(cls):
        cls.kind = name
        SHAPES[name] = cls
        return cls

    return wrap


@register_shape("rectangle")
@dataclass(frozen=True)
class Rectangle:
    """Axis-aligned rectangle from its lower-left ``corner`` and ``size`` (both > 0)."""

    corner: tuple[float, float]
    size: tuple[float, float]

    def bbox(self) -> tuple[float, float, float, float]:
        x, y = self.corner
        w, h = self.size
        return (x, y, x + w, y + h)

    def occ(self, occ) -> int:
        return occ.addRectangle(self.corner[0], self.corner[1], 0.0, self.size[0], self.size[1])

    def area(self) -> float:
        return self.size[0] * self.size[1]

    def shifted(self, dx: float, dy: float) -> Rectangle:
        return Rectangle((self.corner[0] + dx, self.corner[1] + dy), self.size)

    def thickness(self) -> float:
        """Least width: the shorter side (length unit)."""
        return min(self.size)

    def curvature_radius(self) -> float:
        """Smallest radius of curvature of the boundary (inf: straight sides)."""
        return math.inf


@register_shape("circle")
@dataclass(frozen=True)
class Circle:
    """Disk of ``radius`` about ``center``."""

    center: tuple[float, float]
    radius: float

    def bbox(self):
        (x, y), r = self.center, self.radius
        return (x - r, y - r, x + r, y + r)

    def occ(self, occ) -> int:
        return occ.addDisk(self.center[0], self.center[1], 0.0, self.radius, self.radius)

    def area(self) -> float:
        return math.pi * self.radius**2

    def shifted(self, dx: float, dy: float) -> Circle:
        return Circle((self.center[0] + dx, self.center[1] + dy), self.radius)

    def thickness(self) -> float:
        """Least width: the diameter (length unit)."""
        return 2.0 * self.radius

    def curvature_radius(self) -> float:
        """Smallest radius of curvature of the boundary (length unit)."""
        return self.radius


@register_shape("ring")
@dataclass(frozen=True)
class Ring:
    """Annulus between radii ``inner`` and ``outer`` about ``center``."""

    center: tuple[float, float]
    inner: float
    outer: float

    def bbox(self):
        (x, y), r = self.center, self.outer
        return (x - r, y - r, x + r, y + r)

    def occ(self, occ) -> int:
        x, y = self.center
        outer = occ.addDisk(x, y, 0.0, self.outer, self.outer)
        inner = occ.addDisk(x, y, 0.0, self.inner, self.inner)
        out, _ = occ.cut([(2, outer)], [(2, inner)])
        return out[0][1]

    def area(self) -> float:
        return math.pi * (self.outer**2 - self.inner**2)

    def shifted(self, dx: float, dy: float) -> Ring:
        return Ring((self.center[0] + dx, self.center[1] + dy), self.inner, self.outer)

    def thickness(self) -> float:
        """Least width: outer minus inner radius (length unit)."""
        return self.outer - self.inner

    def curvature_radius(self) -> float:
        """Smallest radius of curvature of the boundary: the inner radius."""
        return self.inner


@register_shape("polygon")
@dataclass(frozen=True)
class Polygon:
    """Simple polygon through ``points`` (either orientation, not closed explicitly)."""

    points: tuple[tuple[float, float], ...]

    def bbox(self):
        xs = [p[0] for p in self.points]
        ys = [p[1] for p in self.points]
        return (min(xs), min(ys), max(xs), max(ys))

    def occ(self, occ) -> int:
        tags = [occ.addPoint(x, y, 0.0) for x, y in self.points]
        lines = [occ.addLine(tags[i], tags[(i + 1) % len(tags)]) for i in range(len(tags))]
        loop = occ.addCurveLoop(lines)
        return occ.addPlaneSurface([loop])

    def shifted(self, dx: float, dy: float) -> Polygon:
        return Polygon(tuple((x + dx, y + dy) for x, y in self.points))

    def area(self) -> float:
        p = self.points
        n = len(p)
        s = sum(p[i][0] * p[(i + 1) % n][1] - p[(i + 1) % n][0] * p[i][1] for i in range(n))
        return abs(s) / 2

    def thickness(self) -> float:
        """Estimated width 2 area / perimeter (exact for a long strip; length unit)."""
        p = self.points
        perimeter = sum(math.dist(p[i], p[(i + 1) % len(p)]) for i in range(len(p)))
        return 2.0 * self.area() / perimeter

    def curvature_radius(self) -> float:
        """Smallest radius of curvature of the boundary (inf: straight sides)."""
        return math.inf
