"""How many triangles a geometry will need, estimated from the sizing rules before meshing.

gmsh asked for a mesh far finer than the model needs (a tiny ``mesh_size``, a
frequency of 1e15 Hz, coordinates typed in metres in a millimetre model) runs
until the machine's memory is gone. This module predicts the element count from
the same rules :mod:`.sizing` hands to gmsh, so the caller can refuse such a
geometry at once and name what drives the count.

The estimate
------------
A triangle of side ``h`` covers ``sqrt(3)/4 h^2`` (equilateral; gmsh's
Frontal-Delaunay triangles are close to it), so a patch of area ``A`` at size
``h`` holds about ``A / (0.433 h^2)`` triangles. The model is made of

- the **background**: the domain's area at the global maximum size (twice the
  area with an open boundary's exterior disk);
- each region's **interior** at its interior size (``mesh_size`` or the global
  maximum);
- each region's **graded band** around its boundary of perimeter ``P``: the size
  grows as ``h(d) = h0 + (g - 1) d`` from the surface size ``h0`` up to the
  maximum ``H``, which holds, on each side of the boundary,
  ``integral_0^D P dd / (0.433 h(d)^2) = P (1/h0 - 1/H) / (0.433 (g - 1))``
  triangles. The inner band is capped at the region's area filled at ``h0``.

The result is an estimate, not a bound: checked against gmsh on the examples
and test cases (``tests/meshes/test_estimate.py``) it lies within a factor of 3 of
the real count, which is what a limit meant to stop runaway meshes needs.
Shapes are handled through what every shape offers (``bbox``, and ``area``,
``perimeter`` or ``points`` where present), so shapes added later are estimated
from their bounding box at worst.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from whorl.meshes.geometry import Geometry, RegionSpec
from whorl.meshes.sizing import domain_bbox, sizing_plan

#: Area of an equilateral triangle of unit side.
TRIANGLE_AREA = math.sqrt(3.0) / 4.0

#: Default largest estimated element count accepted (about 7 GiB of memory for a
#: second-order solve at this size on the benchmarks of docs/performance.md).
DEFAULT_MAX_ELEMENTS = 2_000_000


@dataclass(frozen=True)
class Part:
    """One contribution to the estimate.

    ``where`` is ``"background"`` or a region name; ``what`` is ``"interior"``,
    ``"surface"`` (its graded band) or ``"background"``; ``rule`` names the
    sizing rule that set the size: ``max_size``, ``domain mesh_size``,
    ``mesh_size``, ``skin depth``, ``thickness`` or ``curvature``; ``size`` is that
    size (length unit) and ``count`` the estimated triangles.
    """

    where: str
    what: str
    rule: str
    size: float
    count: float


@dataclass(frozen=True)
class Estimate:
    """Estimated triangle count of a geometry and where it comes from."""

    total: float
    parts: tuple[Part, ...] = field(default_factory=tuple)

    def largest(self) -> Part | None:
        """The part with the most triangles (what to change first)."""
        return max(self.parts, key=lambda p: p.count, default=None)


def shape_area(shape) -> float:
    """Area of a shape (length unit squared); its bounding box when it has no ``area``."""
    if hasattr(shape, "area"):
        return float(shape.area())
    x0, y0, x1, y1 = shape.bbox()
    return (x1 - x0) * (y1 - y0)


def shape_perimeter(shape) -> float:
    """Length of a shape's boundary (length unit), from what the shape offers."""
    if hasattr(shape, "perimeter"):
        return float(shape.perimeter())
    points = getattr(shape, "points", None)
    if points:
        return sum(math.dist(points[i], points[(i + 1) % len(points)])
                   for i in range(len(points)))
    if hasattr(shape, "inner") and hasattr(shape, "outer"):
        return 2.0 * math.pi * (shape.inner + shape.outer)
    if hasattr(shape, "radius"):
        return 2.0 * math.pi * shape.radius
    x0, y0, x1, y1 = shape.bbox()
    return 2.0 * ((x1 - x0) + (y1 - y0))


def _count(area: float, size: float) -> float:
    if not size > 0:
        return math.inf
    return area / (TRIANGLE_AREA * size * size)


def _surface_rule(region: RegionSpec, geometry: Geometry, surface: float, hmax: float) -> str:
    """Which sizing rule set a region's surface size (see :func:`.sizing.surface_size`)."""
    options, shape = geometry.options, region.shape
    candidates = [("max_size", hmax)]
    if region.mesh_size is not None:
        candidates.append(("mesh_size", region.mesh_size))
    thickness = shape.thickness() if hasattr(shape, "thickness") else math.inf
    if region.skin_depth is not None and region.skin_depth > 0:
        candidates.append(("skin depth", region.skin_depth / options.elements_per_skin_depth()))
        candidates.append(("thickness", thickness / max(options.across, 1)))
    else:
        candidates.append(("thickness", thickness))
    rho = shape.curvature_radius() if hasattr(shape, "curvature_radius") else math.inf
    if math.isfinite(rho):
        candidates.append(("curvature", 2.0 * math.pi * rho / 40))
    return min(candidates, key=lambda c: c[1])[0]


def estimate_elements(geometry: Geometry) -> Estimate:
    """Estimate the number of triangles gmsh will make for ``geometry``.

    Returns
    -------
    Estimate
        ``total`` (may be ``inf`` for a zero or non-finite size) and its parts.

    Raises
    ------
    ValueError
        When the sizing rules themselves cannot be applied (growth <= 1).
    """
    plan = sizing_plan(geometry)
    hmax, growth = plan.max_size, plan.growth
    parts = []
    x0, y0, x1, y1 = domain_bbox(geometry.domain, geometry.axisymmetric)
    domain_area = (x1 - x0) * (y1 - y0)
    if geometry.domain.shape == "circle":
        domain_area *= math.pi / 4.0
    if geometry.domain.open_boundary:
        domain_area *= 2.0
    max_rule = ("max_size" if geometry.domain.mesh_size is None
                or (geometry.options.max_size is not None
                    and geometry.options.max_size <= geometry.domain.mesh_size)
                else "domain mesh_size")
    parts.append(Part("background", "background", max_rule, hmax, _count(domain_area, hmax)))
    for region, sizes in zip(geometry.regions, plan.regions, strict=True):
        area = shape_area(region.shape)
        interior_rule = "mesh_size" if sizes.interior < hmax else max_rule
        parts.append(Part(region.name, "interior", interior_rule, sizes.interior,
                          _count(area, sizes.interior)))
        h0 = sizes.surface
        if h0 < hmax:
            perimeter = shape_perimeter(region.shape)
            if h0 > 0:
                one_side = perimeter * (1.0 / h0 - 1.0 / hmax) / (TRIANGLE_AREA * (growth - 1))
            else:
                one_side = math.inf
            band = min(one_side, _count(area, h0)) + min(one_side, _count(domain_area, h0))
            parts.append(Part(region.name, "surface",
                              _surface_rule(region, geometry, h0, hmax), h0, band))
    total = sum(p.count for p in parts)
    if math.isnan(total):
        total = math.inf
    return Estimate(total, tuple(parts))
