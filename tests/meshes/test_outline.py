"""Outlines with arcs, fillets, chamfers and holes: exact areas, errors, curved meshes."""

import math

import numpy as np
import pytest
import skfem

from whorl.meshes import DomainSpec, Geometry, MeshOptions, RegionSpec, build_mesh
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
from whorl.meshes.shapes import Circle

SQUARE = ((0.0, 0.0), (10.0, 0.0), (10.0, 10.0), (0.0, 10.0))


def mesh_area(tagged, name):
    basis = skfem.Basis(tagged.mesh, skfem.ElementTriP1(), intorder=4)
    dx = basis.dx[tagged.elements(name)]
    return float(dx.sum()) / tagged.unit_m**2


def test_filleted_square_area_is_exact():
    """A = w h - (4 - pi) r^2 (plane geometry)."""
    shape = rounded(SQUARE, (None,) * 4, [("fillet", 2.0)] * 4)
    assert len(shape.vertices) == 8 and sum(a is not None for a in shape.arcs) == 4
    assert shape.area() == pytest.approx(100 - (4 - math.pi) * 4, rel=1e-14)
    assert shape.perimeter() == pytest.approx(40 - 16 + 2 * math.pi * 2, rel=1e-14)
    assert shape.curvature_radius() == pytest.approx(2.0)
    assert not shape.problems()


def test_fillet_tangent_points_and_centre_at_an_obtuse_corner():
    # corner of 135 degrees at (10, 0): the fillet centre lies at distance r from both sides
    pts = ((0.0, 0.0), (10.0, 0.0), (20.0, 10.0), (0.0, 10.0))
    shape = rounded(pts, (None,) * 4, [None, ("fillet", 3.0), None, None])
    arc = next(a for a in shape.arcs if a is not None)
    c = np.array(arc.center)
    assert c[1] == pytest.approx(3.0)  # distance to the bottom side y = 0
    # distance to the slanted side x - y - 10 = 0
    assert abs(c[0] - c[1] - 10) / math.sqrt(2) == pytest.approx(3.0)
    assert arc.ccw  # a left turn of a counter-clockwise outline


def test_chamfer_cuts_a_triangle():
    shape = rounded(SQUARE, (None,) * 4, [("chamfer", 1.0), None, None, None])
    assert shape.area() == pytest.approx(100 - 0.5)


def test_fillet_that_does_not_fit_is_named():
    with pytest.raises(ValueError, match="corner 1 and 2: the fillet does not fit"):
        rounded(SQUARE, (None,) * 4, [("fillet", 6.0), ("fillet", 6.0), None, None])


def test_rounded_ends_meet_as_a_slot():
    """Two fillets of half the width leave a full round end: the straight bit vanishes."""
    pts = ((0.0, 0.0), (30.0, 0.0), (30.0, 10.0), (0.0, 10.0))
    shape = rounded(pts, (None,) * 4, [None, ("fillet", 5.0), ("fillet", 5.0), None])
    assert len(shape.vertices) == 5
    assert shape.area() == pytest.approx(25 * 10 + math.pi * 25 / 2)


def test_arc_helpers():
    arc = arc_through((1.0, 0.0), (0.0, 1.0), (-1.0, 0.0))
    assert arc.center == pytest.approx((0.0, 0.0)) and arc.ccw
    assert arc.sweep((1.0, 0.0), (-1.0, 0.0)) == pytest.approx(math.pi)
    assert Arc((0.0, 0.0), False).sweep((1.0, 0.0), (0.0, 1.0)) == pytest.approx(-1.5 * math.pi)
    with pytest.raises(ValueError, match="one line"):
        arc_through((0.0, 0.0), (1.0, 0.0), (2.0, 0.0))
    with pytest.raises(ValueError, match="does not fit"):
        check_arc((1.0, 0.0), (0.0, 2.0), Arc((0.0, 0.0)))


def test_outline_with_an_arc_side_area():
    # a 10 x 10 square whose right side bulges out as a half circle of radius 5
    shape = Outline(SQUARE, (None, Arc((10.0, 5.0), True), None, None))
    assert shape.area() == pytest.approx(100 + math.pi * 25 / 2)
    assert shape.bbox() == pytest.approx((0.0, 0.0, 15.0, 10.0), abs=1e-9)
    assert list(shape.contains([14.0, 16.0], [5.0, 5.0])) == [True, False]


def test_self_intersection_is_found():
    bow = Outline(((0.0, 0.0), (10.0, 10.0), (10.0, 0.0), (0.0, 10.0)), (None,) * 4)
    assert any("crosses itself" in p for p in bow.problems())


def test_half_disk_and_half_ring_areas():
    assert half_disk(3.0, 2.0).area() == pytest.approx(math.pi * 2.0)
    assert half_ring(0.0, 1.0, 2.0).area() == pytest.approx(math.pi * 3 / 2)
    assert half_disk(0.0, 2.0).bbox() == pytest.approx((0.0, -2.0, 2.0, 2.0), abs=1e-9)


@pytest.mark.parametrize("order,limit", [(2, 1e-5), (1, 1e-2)])
def test_curved_mesh_area_of_a_round_conductor(order, limit):
    """Quadratic elements put the mid-edge nodes on the circle: the area error falls
    below 1e-5 at the default size (40 segments per circle); straight edges (order 1)
    stay at the chord error of about 0.4 % (2 pi^2 / (3 n^2) at n = 40)."""
    region = RegionSpec("wire", Circle((0.0, 0.0), 5.0))
    g = Geometry((region,), DomainSpec("circle", radius=20.0), options=MeshOptions(order=order))
    tagged = build_mesh(g)
    error = abs(mesh_area(tagged, "wire") / (math.pi * 25) - 1)
    assert error < limit
    if order == 1:
        assert error > 1e-3  # the straight-edge error is really there


def test_holes_and_filleted_outline_mesh_to_their_exact_area():
    outer = rounded(SQUARE, (None,) * 4, [("fillet", 2.0)] * 4)
    shape = WithHoles(outer, (Circle((5.0, 5.0), 2.0), half_disk(5.0, 1.0).shifted(1.0, 0.0)))
    g = Geometry((RegionSpec("plate", shape),),
                 DomainSpec("rectangle", corner=(-10.0, -10.0), size=(30.0, 30.0)))
    tagged = build_mesh(g)
    want = 100 - (4 - math.pi) * 4 - math.pi * 4 - math.pi / 2
    assert shape.area() == pytest.approx(want, rel=1e-12)
    assert mesh_area(tagged, "plate") == pytest.approx(want, rel=1e-5)
