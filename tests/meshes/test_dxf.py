"""The DXF reader on its own: every supported entity, holes and islands, chains, units,
and the errors (drawings made here with ezdxf)."""

import math

import ezdxf
import numpy as np
import pytest

from whorl.meshes.dxf import DrawingError, Placement, read_drawing

MM = Placement(1e-3)


def drawing(tmp_path, fill, unit=4):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = unit
    fill(doc.modelspace())
    path = tmp_path / "d.dxf"
    doc.saveas(path)
    return path


def test_chain_of_lines_and_arcs_with_a_hole_and_an_island(tmp_path):
    def fill(msp):
        a = {"layer": "P"}
        msp.add_line((0, 0), (20, 0), dxfattribs=a)
        msp.add_arc((20, 10), 10, -90, 90, dxfattribs=a)        # a round right end
        msp.add_line((0, 20), (20, 20), dxfattribs=a)          # drawn the other way round
        msp.add_line((0, 20), (0, 0), dxfattribs=a)
        msp.add_circle((10, 10), 6, dxfattribs=a)               # hole
        msp.add_circle((10, 10), 2, dxfattribs=a)               # island in the hole

    shapes, factor = read_drawing(drawing(tmp_path, fill), "p", MM)  # letter case ignored
    assert factor == 1.0 and len(shapes) == 2
    plate, island = shapes
    assert plate.area() == pytest.approx(400 + math.pi * 50 - math.pi * 36)
    assert island.area() == pytest.approx(math.pi * 4)


def test_ellipse_and_spline_stay_within_the_tolerance(tmp_path):
    points = [(0, 0), (10, -3), (20, 0), (20, 10), (10, 13), (0, 10), (0, 0)]

    def fill(msp):
        msp.add_ellipse((0, 0), (10, 0), 0.5, dxfattribs={"layer": "E"})
        msp.add_spline(points, dxfattribs={"layer": "S"}).closed = False

    path = drawing(tmp_path, fill)
    (ellipse,), _ = read_drawing(path, "E", Placement(1e-3, tolerance=1e-3))
    # chords inside the convex ellipse: area short by at most perimeter x tolerance
    exact = math.pi * 10 * 5
    assert exact - 48.5 * 1e-3 <= ellipse.area() <= exact
    (coarse,), _ = read_drawing(path, "S", Placement(1e-3, tolerance=1e-2))
    (fine,), _ = read_drawing(path, "S", Placement(1e-3, tolerance=1e-5))
    assert abs(coarse.area() - fine.area()) <= coarse.perimeter() * 1e-2
    assert len(fine.vertices) > len(coarse.vertices)


def test_units_from_the_header_and_without(tmp_path):
    def fill(msp):
        msp.add_circle((0, 0), 1, dxfattribs={"layer": "C"})

    (inch,), f = read_drawing(drawing(tmp_path, fill, unit=1), "C", MM)
    assert f == pytest.approx(25.4) and inch.area() == pytest.approx(math.pi * 25.4**2)
    (plain,), f = read_drawing(drawing(tmp_path, fill, unit=0), "C", Placement(1e-3, 2.0))
    assert f == 2.0 and plain.area() == pytest.approx(math.pi * 4)


def test_polyline_with_bulges_both_ways(tmp_path):
    def fill(msp):
        # a 10 x 10 square with a bump out (bulge 1) at the bottom and a bite in at the top
        msp.add_lwpolyline([(0, 0, 1), (10, 0, 0), (10, 10, -1), (0, 10, 0)], format="xyb",
                           close=True, dxfattribs={"layer": "B"})

    (shape,), _ = read_drawing(drawing(tmp_path, fill), "B", MM)
    # bottom: from (0,0) to (10,0) counter-clockwise passes below (outward);
    # top: from (10,10) to (0,10) clockwise (bulge < 0) passes below (inward)
    assert shape.area() == pytest.approx(100.0)
    assert shape.bbox()[1] == pytest.approx(-5.0)


@pytest.mark.parametrize("build,words", [
    (lambda m: m.add_lwpolyline([(0, 0), (10, 10), (10, 0), (0, 10)], close=True,
                                dxfattribs={"layer": "X"}), "crosses itself"),
    (lambda m: [m.add_line((0, 0), (10, 0), dxfattribs={"layer": "X"}),
                m.add_line((10, 0), (5, 5), dxfattribs={"layer": "X"})], "not closed"),
    (lambda m: [m.add_line((0, 0), (10, 0), dxfattribs={"layer": "X"}),
                m.add_line((10, 0), (5, 5), dxfattribs={"layer": "X"}),
                m.add_line((10, 0), (5, -5), dxfattribs={"layer": "X"})], "three or more"),
    (lambda m: m.add_point((3, 4), dxfattribs={"layer": "X"}), "POINT at (3, 4)"),
    (lambda m: m.add_circle((0, 0), 1, dxfattribs={"layer": "Y"}), "'Defpoints', 'Y'"),
])
def test_errors_name_the_layer_and_the_entity(tmp_path, build, words):
    with pytest.raises(DrawingError, match=None) as err:
        read_drawing(drawing(tmp_path, build), "X", MM)
    assert words in str(err.value)


def test_curved_mesh_survives_the_sweep_mesh_cache(tmp_path):
    from whorl.cases.sweep.meshcache import load_mesh, save_mesh
    from whorl.meshes import Circle, DomainSpec, Geometry, RegionSpec, build_mesh

    tagged = build_mesh(Geometry((RegionSpec("c", Circle((0.0, 0.0), 5.0)),),
                                 DomainSpec("circle", radius=20.0)))
    back = load_mesh(save_mesh(tagged, tmp_path / "m.npz"))
    assert type(back.mesh) is type(tagged.mesh)
    assert np.array_equal(back.mesh.p, tagged.mesh.p)
    assert np.array_equal(back.mesh.t, tagged.mesh.t)
