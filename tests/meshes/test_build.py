"""build_mesh: shapes, overlay, sides, skin-depth grading, errors.

Exact areas are those of the shapes; a circle drawn with N straight segments
loses the fraction 1 - sin(2 pi / N) N / (2 pi) of its area (elementary geometry):
0.41 % for the 40 segments the sizing rule asks for, 0.5 % allowed.
"""

import math

import numpy as np
import pytest

from whorl.meshes import (
    Circle,
    DomainSpec,
    Geometry,
    MeshError,
    MeshOptions,
    Polygon,
    Rectangle,
    RegionSpec,
    Ring,
    build_mesh,
    sizing_plan,
)
from whorl.meshes.sizing import SEGMENTS_PER_CIRCLE, default_max_size, surface_size

BOX = DomainSpec("rectangle", corner=(-50.0, -50.0), size=(100.0, 100.0))
POLYGON_LOSS = 0.005


def areas(tagged):
    """Area of every region and of the background, in the length unit squared."""
    p = tagged.mesh.p / tagged.unit_m
    t = tagged.mesh.t
    d1, d2 = p[:, t[1]] - p[:, t[0]], p[:, t[2]] - p[:, t[0]]
    a = 0.5 * np.abs(d1[0] * d2[1] - d1[1] * d2[0])
    return {name: a[idx].sum() for name, idx in tagged.mesh.subdomains.items()}


def edge_lengths(tagged, facets):
    p = tagged.mesh.p / tagged.unit_m
    f = tagged.mesh.facets[:, facets]
    return np.linalg.norm(p[:, f[0]] - p[:, f[1]], axis=0)


def boundary_facets_of(tagged, name):
    """Facets between the elements of ``name`` and the others."""
    mesh = tagged.mesh
    inside = np.zeros(mesh.t.shape[1], dtype=bool)
    inside[tagged.elements(name)] = True
    f2t = mesh.f2t
    a = inside[f2t[0]]
    b = np.where(f2t[1] >= 0, inside[np.maximum(f2t[1], 0)], False)
    return np.nonzero(a != b)[0]


SHAPE_CASES = {
    "rectangle": (Rectangle((-10.0, -5.0), (20.0, 10.0)), 0.0),
    "circle": (Circle((5.0, 3.0), 8.0), POLYGON_LOSS),
    "ring": (Ring((0.0, 0.0), 6.0, 12.0), POLYGON_LOSS),
    "polygon": (Polygon(((-20.0, -10.0), (15.0, -12.0), (0.0, 20.0), (-5.0, 0.0))), 0.0),
}


def test_circle_segments_fit_the_area_tolerance():
    n = SEGMENTS_PER_CIRCLE - 1  # gmsh may round one segment away
    assert 1 - math.sin(2 * math.pi / n) * n / (2 * math.pi) < POLYGON_LOSS


@pytest.mark.parametrize("kind", SHAPE_CASES)
def test_each_shape_has_its_exact_area(kind):
    shape, loss = SHAPE_CASES[kind]
    tagged = build_mesh(Geometry((RegionSpec("part", shape),), BOX))
    a = areas(tagged)
    assert tagged.regions == ("part",)
    assert set(tagged.mesh.subdomains) == {"part", "domain"}
    assert a["part"] == pytest.approx(shape.area(), rel=loss + 1e-9)
    assert a["part"] + a["domain"] == pytest.approx(100.0 * 100.0, rel=1e-9)
    assert tagged.info["nodes"] == tagged.mesh.p.shape[1]
    assert tagged.info["elements"] == tagged.mesh.t.shape[1]
    assert 0.3 < tagged.info["quality_min"] <= tagged.info["quality_mean"] <= 1.0


def test_mesh_is_in_metres_and_uses_every_node():
    g = Geometry((RegionSpec("c", Circle((0.0, 0.0), 10.0)),), BOX, unit_m=1e-3)
    tagged = build_mesh(g)
    assert np.abs(tagged.mesh.p).max() == pytest.approx(0.05)
    assert np.array_equal(np.unique(tagged.mesh.t), np.arange(tagged.mesh.nvertices))


def test_later_region_covers_earlier_one():
    plate = RegionSpec("plate", Rectangle((-20.0, -5.0), (40.0, 10.0)))
    hole = RegionSpec("insert", Circle((0.0, 0.0), 4.0), mesh_size=0.5)
    slot = RegionSpec("slot", Rectangle((10.0, -10.0), (5.0, 30.0)))
    tagged = build_mesh(Geometry((plate, hole, slot), BOX))
    a = areas(tagged)
    assert tagged.regions == ("plate", "insert", "slot")
    assert a["slot"] == pytest.approx(150.0)
    assert a["plate"] == pytest.approx(400.0 - 50.0 - a["insert"])
    assert sum(a.values()) == pytest.approx(100.0 * 100.0)
    owners = np.concatenate(list(tagged.mesh.subdomains.values()))
    assert np.array_equal(np.sort(owners), np.arange(tagged.mesh.t.shape[1]))


def test_touching_regions_are_conforming():
    left = RegionSpec("left-bar", Rectangle((-10.0, 0.0), (10.0, 5.0)))
    right = RegionSpec("right-bar", Rectangle((0.0, 0.0), (10.0, 5.0)))
    tagged = build_mesh(Geometry((left, right), BOX))
    a = areas(tagged)
    assert a["left-bar"] == pytest.approx(50.0) and a["right-bar"] == pytest.approx(50.0)
    # a conforming mesh has boundary facets only on the domain's outline
    p = tagged.mesh.p[:, tagged.mesh.facets[:, tagged.mesh.boundary_facets()]] / 1e-3
    assert np.all(np.isclose(np.abs(p), 50.0).any(axis=0).all(axis=0))


def test_rectangle_sides_are_tagged_on_their_lines():
    tagged = build_mesh(Geometry((RegionSpec("c", Circle((0.0, 0.0), 5.0)),), BOX))
    mesh = tagged.mesh
    where = {"left": (0, -50.0), "right": (0, 50.0), "bottom": (1, -50.0), "top": (1, 50.0)}
    tagged_facets = []
    for side, (axis, value) in where.items():
        facets = mesh.boundaries[side]
        assert len(facets) > 0
        x = mesh.p[axis, mesh.facets[:, facets]] / tagged.unit_m
        assert np.allclose(x, value)
        assert edge_lengths(tagged, facets).sum() == pytest.approx(100.0)
        tagged_facets.append(facets)
    assert np.array_equal(np.sort(np.concatenate(tagged_facets)), mesh.boundary_facets())


def test_axisymmetric_half_disk_has_axis_and_outer():
    shaft = RegionSpec("shaft", Rectangle((0.0, -20.0), (5.0, 40.0)))
    turn = RegionSpec("turn", Circle((10.0, 0.0), 2.0))
    domain = DomainSpec("circle", radius=60.0)
    tagged = build_mesh(Geometry((shaft, turn), domain, axisymmetric=True))
    mesh = tagged.mesh
    assert tagged.axisymmetric
    assert set(mesh.boundaries) == {"axis", "outer"}
    axis = mesh.p[:, mesh.facets[:, mesh.boundaries["axis"]]] / tagged.unit_m
    assert np.allclose(axis[0], 0.0)
    assert edge_lengths(tagged, mesh.boundaries["axis"]).sum() == pytest.approx(120.0)
    outer = mesh.p[:, mesh.facets[:, mesh.boundaries["outer"]]] / tagged.unit_m
    assert np.allclose(np.hypot(outer[0], outer[1]), 60.0)
    assert mesh.p[0].min() == pytest.approx(0.0, abs=1e-15)
    both = np.concatenate([mesh.boundaries["axis"], mesh.boundaries["outer"]])
    assert np.array_equal(np.sort(both), mesh.boundary_facets())
    assert sum(areas(tagged).values()) == pytest.approx(math.pi * 60.0**2 / 2, rel=2e-3)


def test_axisymmetric_rectangle_names_axis_instead_of_left():
    domain = DomainSpec("rectangle", corner=(0.0, -30.0), size=(40.0, 60.0))
    g = Geometry((RegionSpec("bar", Rectangle((0.0, -5.0), (5.0, 10.0))),), domain,
                 axisymmetric=True)
    tagged = build_mesh(g)
    assert set(tagged.mesh.boundaries) == {"axis", "right", "bottom", "top"}
    x = tagged.mesh.p[0, tagged.mesh.facets[:, tagged.mesh.boundaries["axis"]]]
    assert np.allclose(x, 0.0)


@pytest.mark.parametrize("order, per_delta", [(2, 2.0), (1, 4.0)])
def test_skin_depth_grading(order, per_delta):
    delta = 1.0
    block = RegionSpec("block", Rectangle((-10.0, -10.0), (20.0, 20.0)), skin_depth=delta)
    domain = DomainSpec("rectangle", corner=(-100.0, -100.0), size=(200.0, 200.0))
    tagged = build_mesh(Geometry((block,), domain, options=MeshOptions(order=order)))
    surface = edge_lengths(tagged, boundary_facets_of(tagged, "block"))
    assert np.median(surface) == pytest.approx(delta / per_delta, rel=0.1)
    outline = edge_lengths(tagged, tagged.mesh.boundary_facets())
    assert np.median(outline) > 10 * np.median(surface)
    # the inside is graded too: the centre is coarser than the surface
    p = tagged.mesh.p / tagged.unit_m
    f = tagged.mesh.facets
    mid = 0.5 * (p[:, f[0]] + p[:, f[1]])
    centre = np.max(np.abs(mid), axis=0) < 2.0
    assert np.median(edge_lengths(tagged, np.nonzero(centre)[0])) > 3 * np.median(surface)


def test_thin_conductor_gets_elements_across():
    thickness, across = 0.6, 3
    strip = RegionSpec("foil", Rectangle((-20.0, -0.3), (40.0, thickness)), skin_depth=50.0)
    g = Geometry((strip,), BOX, options=MeshOptions(across=across))
    tagged = build_mesh(g)
    assert areas(tagged)["foil"] == pytest.approx(40.0 * thickness)
    # count the elements a line across the strip passes through
    for x in (-12.3, 0.7, 9.1):
        y = np.linspace(-0.299, 0.299, 400)
        pts = np.vstack([np.full_like(y, x), y]) * tagged.unit_m
        hit = np.unique(tagged.mesh.element_finder()(*pts))
        assert np.all(np.isin(hit, tagged.elements("foil")))
        assert len(hit) >= across


def test_region_outside_domain_is_named():
    stray = RegionSpec("stray-bar", Rectangle((40.0, 0.0), (20.0, 5.0)))
    with pytest.raises(MeshError, match="stray-bar"):
        build_mesh(Geometry((RegionSpec("ok", Circle((0.0, 0.0), 3.0)), stray), BOX))


def test_region_left_of_axis_is_named():
    ring = RegionSpec("ring", Ring((0.0, 0.0), 2.0, 5.0))
    with pytest.raises(MeshError, match="ring"):
        build_mesh(Geometry((ring,), DomainSpec("circle", radius=50.0), axisymmetric=True))


def test_region_covered_entirely_is_named():
    small = RegionSpec("hidden", Circle((0.0, 0.0), 2.0))
    big = RegionSpec("cover", Rectangle((-5.0, -5.0), (10.0, 10.0)))
    with pytest.raises(MeshError, match="hidden"):
        build_mesh(Geometry((small, big), BOX))


def test_duplicate_and_reserved_names():
    c = Circle((0.0, 0.0), 2.0)
    with pytest.raises(MeshError, match="twice"):
        build_mesh(Geometry((RegionSpec("a", c), RegionSpec("a", c)), BOX))
    with pytest.raises(MeshError, match="reserved"):
        build_mesh(Geometry((RegionSpec("domain", c),), BOX))


def test_progress_messages():
    messages = []
    build_mesh(Geometry((RegionSpec("a", Circle((0.0, 0.0), 2.0)),), BOX), messages.append)
    assert len(messages) >= 3 and all(isinstance(m, str) for m in messages)
    assert "elements" in messages[-1]


def test_sizing_rules():
    opts = MeshOptions(order=2, max_size=5.0, across=3)
    rect = Rectangle((0.0, 0.0), (30.0, 40.0))
    assert surface_size(RegionSpec("r", rect, skin_depth=2.0), opts, 5.0) == pytest.approx(1.0)
    p1 = MeshOptions(order=1)
    assert surface_size(RegionSpec("r", rect, skin_depth=2.0), p1, 5.0) == pytest.approx(0.5)
    assert surface_size(RegionSpec("r", rect, mesh_size=0.7, skin_depth=9.0), opts, 5.0) == 0.7
    thin = Rectangle((0.0, 0.0), (30.0, 0.3))
    assert surface_size(RegionSpec("t", thin, skin_depth=9.0), opts, 5.0) == pytest.approx(0.1)
    assert surface_size(RegionSpec("t", thin), opts, 5.0) == pytest.approx(0.3)
    disk = Circle((0.0, 0.0), 40.0)
    assert surface_size(RegionSpec("d", disk), opts, 50.0) == pytest.approx(2 * math.pi)
    assert default_max_size(BOX, False) == pytest.approx(5.0)
    plan = sizing_plan(Geometry((RegionSpec("r", rect, skin_depth=2.0),), BOX))
    assert plan.max_size == pytest.approx(5.0)
    assert plan.grading_distance(1.0) == pytest.approx(4.0 / 0.25)


def test_shape_thickness():
    assert Rectangle((0.0, 0.0), (3.0, 7.0)).thickness() == 3.0
    assert Circle((0.0, 0.0), 2.0).thickness() == 4.0
    assert Ring((0.0, 0.0), 2.0, 5.0).thickness() == 3.0
    strip = Polygon(((0.0, 0.0), (100.0, 0.0), (100.0, 1.0), (0.0, 1.0)))
    assert strip.thickness() == pytest.approx(1.0, rel=0.02)


def test_planar_circle_domain_has_outer_only():
    domain = DomainSpec("circle", radius=30.0)
    tagged = build_mesh(Geometry((RegionSpec("c", Circle((5.0, 0.0), 3.0)),), domain))
    mesh = tagged.mesh
    assert set(mesh.boundaries) == {"outer"}
    assert np.array_equal(np.sort(mesh.boundaries["outer"]), mesh.boundary_facets())


def test_gmsh_is_left_finalized_after_success_and_failure():
    import gmsh

    build_mesh(Geometry((RegionSpec("a", Circle((0.0, 0.0), 2.0)),), BOX))
    assert not gmsh.isInitialized()
    with pytest.raises(MeshError):
        build_mesh(Geometry((RegionSpec("a", Circle((60.0, 0.0), 2.0)),), BOX))
    assert not gmsh.isInitialized()
