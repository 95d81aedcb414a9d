"""The mesh-size estimate against gmsh's real counts, and the shape sanity checks
(issue 10, items 5 and 8)."""

from __future__ import annotations

from pathlib import Path

import pytest

from whorl.cases.loader import load_case
from whorl.cases.model import sized_geometry
from whorl.meshes.build import build_mesh
from whorl.meshes.estimate import estimate_elements, shape_perimeter
from whorl.meshes.geometry import DomainSpec, Geometry, MeshOptions, RegionSpec
from whorl.meshes.shapes import Circle, Polygon, Rectangle, Ring
from whorl.meshes.validate import ShapeProblem, check_geometry, polygon_problem

ROOT = Path(__file__).resolve().parents[2] / "cases"


@pytest.mark.parametrize("name", ["examples/busbar-cover-plate.toml",
                                  "examples/shaft-heater-overnight.toml",
                                  "verification/coil-inductance-open.toml",
                                  "verification/two-wire-line.toml",
                                  "verification/slab-in-field.toml"])
def test_estimate_is_within_a_factor_of_three_of_gmsh(name):
    geometry = sized_geometry(load_case(ROOT / name))
    estimate = estimate_elements(geometry).total
    real = build_mesh(geometry).info["elements"]
    assert real / 3 <= estimate <= real * 3, (estimate, real)


def test_estimate_grows_as_the_inverse_square_of_the_size():
    def count(h):
        g = Geometry((RegionSpec("a", Rectangle((0, 0), (10, 10)), mesh_size=h),),
                     DomainSpec("rectangle", corner=(-5, -5), size=(20, 20)),
                     options=MeshOptions(max_size=1.0))
        return estimate_elements(g).total
    assert count(0.01) / count(0.02) == pytest.approx(4, rel=0.05)


def test_perimeters_of_every_shape():
    assert shape_perimeter(Rectangle((0, 0), (2, 3))) == pytest.approx(10)
    assert shape_perimeter(Circle((0, 0), 1)) == pytest.approx(6.283185)
    assert shape_perimeter(Ring((0, 0), 1, 2)) == pytest.approx(3 * 6.283185)
    assert shape_perimeter(Polygon(((0, 0), (3, 0), (3, 4)))) == pytest.approx(12)


@pytest.mark.parametrize("points, problem", [
    ([(0, 0), (1, 0), (1, 1), (0, 1)], None),
    ([(0, 0), (1, 1), (1, 0), (0, 1)], "crosses itself"),
    ([(0, 0), (1, 0), (1, 1), (1, 0), (0, 1)], "repeats"),
    ([(0, 0), (2, 0), (2, 2), (1, 0), (0, 2)], "crosses itself"),  # touches at a corner
    ([(0, 0), (4, 0), (4, 4), (2, 1), (0, 4)], None),  # concave, simple
])
def test_polygon_problems(points, problem):
    found = polygon_problem(points)
    if problem is None:
        assert found is None
    else:
        assert problem in found[1]


def test_a_large_simple_polygon_is_checked_quickly():
    import math
    import time
    points = [(math.cos(2 * math.pi * k / 10000), math.sin(2 * math.pi * k / 10000))
              for k in range(10000)]
    start = time.perf_counter()
    assert polygon_problem(points) is None
    assert time.perf_counter() - start < 5.0


def test_covered_region_and_absurd_domain():
    domain = DomainSpec("rectangle", corner=(-50, -50), size=(100, 100))
    inner = RegionSpec("inner", Circle((0, 0), 1))
    outer = RegionSpec("outer", Rectangle((-2, -2), (4, 4)))
    with pytest.raises(ShapeProblem, match="covered entirely") as info:
        check_geometry(Geometry((inner, outer), domain))
    assert info.value.region == "inner"
    check_geometry(Geometry((outer, inner), domain))  # the later one is drawn on top: fine
    sliver = RegionSpec("partly", Rectangle((-2, -2), (4.001, 4)))
    check_geometry(Geometry((sliver, RegionSpec("o", Rectangle((-2, -2), (4, 4)))), domain))
    huge = DomainSpec("rectangle", corner=(-1e9, -1e9), size=(2e9, 2e9))
    with pytest.raises(ShapeProblem, match="times the size") as info:
        check_geometry(Geometry((outer,), huge))
    assert info.value.region == "domain"
