"""Element-size rules: skin depth at conductor surfaces, geometric growth away from them.

All sizes and distances are in the model's length unit.

The rule for a region's *surface size* ``h0`` (the element size on its boundary) is the
least of

- ``skin_depth / elements_per_skin_depth`` for conductors (about delta/2 for P2 and
  delta/4 for P1 elements: common practice),
- the region's ``mesh_size`` and the global maximum size,
- ``thickness / across`` for conductors and ``thickness`` for other regions, so a thin
  conductor gets at least ``across`` elements across and every region at least one,
- ``2 pi rho / SEGMENTS_PER_CIRCLE`` for a boundary with radius of curvature ``rho``,
  so round shapes are drawn with enough straight segments.

Away from the boundary, inward and outward, the size grows linearly with the distance
``d``, :math:`h(d) = h_0 + (g - 1) d`, which makes neighbouring elements differ by the
ratio ``g`` (``MeshOptions.growth``): elements stay small only where the field varies.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from whorl.meshes.geometry import DomainSpec, Geometry, MeshOptions, RegionSpec

#: Straight segments per full circle (area error about 0.4 %; gmsh may round down one).
SEGMENTS_PER_CIRCLE = 40

#: The default global maximum size is the domain's largest extent over this number.
DEFAULT_MAX_FRACTION = 20.0


@dataclass(frozen=True)
class RegionSizing:
    """Sizes of one region (length unit).

    Attributes
    ----------
    name : str
        Region name.
    surface : float
        Element size on the region's boundary.
    interior : float
        Upper bound inside the region (its ``mesh_size`` or the global maximum).
    """

    name: str
    surface: float
    interior: float


@dataclass(frozen=True)
class SizingPlan:
    """The sizes of a whole model (length unit).

    Attributes
    ----------
    max_size : float
        Global upper bound for the element size.
    growth : float
        Ratio between neighbouring element sizes away from a surface (> 1).
    regions : tuple of RegionSizing
        One entry per region, in geometry order.
    """

    max_size: float
    growth: float
    regions: tuple[RegionSizing, ...]

    def grading_distance(self, surface: float) -> float:
        """Distance from a surface of size ``surface`` at which the size reaches the maximum."""
        return grading_distance(surface, self.max_size, self.growth)


def domain_bbox(domain: DomainSpec, axisymmetric: bool) -> tuple[float, float, float, float]:
    """Bounding box ``(xmin, ymin, xmax, ymax)`` of the domain (length unit)."""
    if domain.shape == "circle":
        r = domain.radius
        return (0.0 if axisymmetric else -r, -r, r, r)
    x, y = domain.corner
    w, h = domain.size
    return (x, y, x + w, y + h)


def default_max_size(domain: DomainSpec, axisymmetric: bool) -> float:
    """A twentieth of the domain's largest extent (length unit)."""
    x0, y0, x1, y1 = domain_bbox(domain, axisymmetric)
    return max(x1 - x0, y1 - y0) / DEFAULT_MAX_FRACTION


def global_max_size(geometry: Geometry) -> float:
    """Global size cap: ``MeshOptions.max_size`` (or its default) and the domain's mesh_size."""
    h = geometry.options.max_size
    if h is None:
        h = default_max_size(geometry.domain, geometry.axisymmetric)
    if geometry.domain.mesh_size is not None:
        h = min(h, geometry.domain.mesh_size)
    return float(h)


def skin_depth_size(skin_depth: float, options: MeshOptions) -> float:
    """Element size at a conductor surface: ``skin_depth / elements_per_skin_depth``."""
    return skin_depth / options.elements_per_skin_depth()


def surface_size(region: RegionSpec, options: MeshOptions, max_size: float) -> float:
    """Element size on a region's boundary (length unit); see the module notes."""
    h = max_size
    if region.mesh_size is not None:
        h = min(h, region.mesh_size)
    shape = region.shape
    thickness = shape.thickness() if hasattr(shape, "thickness") else math.inf
    if region.skin_depth is not None and region.skin_depth > 0:
        h = min(h, skin_depth_size(region.skin_depth, options))
        h = min(h, thickness / max(options.across, 1))
    else:
        h = min(h, thickness)
    rho = shape.curvature_radius() if hasattr(shape, "curvature_radius") else math.inf
    if math.isfinite(rho):
        h = min(h, 2.0 * math.pi * rho / SEGMENTS_PER_CIRCLE)
    return float(h)


def size_at_distance(surface: float, distance, growth: float, max_size: float):
    """Size ``min(h0 + (g - 1) d, max_size)`` at ``distance`` from a surface (arrays work too)."""
    return np.minimum(surface + (growth - 1.0) * np.asarray(distance), max_size)


def grading_distance(surface: float, max_size: float, growth: float) -> float:
    """Distance at which the graded size ``h0 + (g - 1) d`` reaches ``max_size``."""
    if growth <= 1.0:
        return math.inf
    return max(max_size - surface, 0.0) / (growth - 1.0)


def sizing_plan(geometry: Geometry) -> SizingPlan:
    """Sizes of every region of ``geometry`` by the rules of this module.

    Returns
    -------
    SizingPlan
        Global maximum, growth ratio and per-region surface and interior sizes
        (length unit).
    """
    options = geometry.options
    if options.growth <= 1.0:
        raise ValueError(f"mesh growth must be > 1, got {options.growth}")
    hmax = global_max_size(geometry)
    regions = []
    for region in geometry.regions:
        interior = hmax if region.mesh_size is None else min(hmax, region.mesh_size)
        regions.append(RegionSizing(region.name, surface_size(region, options, hmax), interior))
    return SizingPlan(hmax, float(options.growth), tuple(regions))
