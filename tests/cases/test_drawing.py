"""Regions from a DXF drawing (made here with ezdxf): the same numbers as the same shapes
typed in the case file, areas that show in the DC resistance, and clear errors."""

import math

import ezdxf
import pytest

from whorl.cases.cli import main
from whorl.cases.loader import load_case
from whorl.cases.run import solve_case

CASE = """\
format = 1
[model]
geometry = "planar"
length_unit = "mm"
{regions}
[domain]
shape = "circle"
radius = 60
[[source]]
name = "feed"
kind = "massive"
regions = ["bar"]
current = "1 A"
[[source]]
name = "wire-feed"
kind = "massive"
regions = ["wire"]
current = "1 A"
[study]
kind = "{kind}"
{frequency}
"""

DRAWN = """
[[region]]
name = "bar"
material = "copper"
shape = "drawing"
file = "part.dxf"
layer = "BAR"
offset = [-10, 0]
[[region]]
name = "wire"
material = "copper"
shape = "drawing"
file = "part.dxf"
layer = "WIRE"
"""

TYPED = """
[[region]]
name = "bar"
material = "copper"
shape = "polygon"
points = [[-16, -3], [-4, -3], { arc_to = [-4, 3], center = [-4, 0] }, [-16, 3]]
[[region]]
name = "wire"
material = "copper"
shape = "circle"
center = [20, 0]
radius = 4
"""


def make_drawing(path, unit=4, size=1.0):
    """A circle (radius 4) on layer WIRE; on layer BAR a closed polyline: a 12 x 6 bar
    whose right end is a half circle (bulge 1). ``unit`` is $INSUNITS (4: mm)."""
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = unit
    msp = doc.modelspace()
    msp.add_circle((20 * size, 0), 4 * size, dxfattribs={"layer": "WIRE"})
    msp.add_lwpolyline([(-6 * size, -3 * size, 0), (6 * size, -3 * size, 1),
                        (6 * size, 3 * size, 0), (-6 * size, 3 * size, 0)],
                       format="xyb", close=True, dxfattribs={"layer": "BAR"})
    msp.add_line((0, 20), (10, 20), dxfattribs={"layer": "OPEN"})
    msp.add_text("note", dxfattribs={"layer": "NOTES", "insert": (3, 4)})
    doc.saveas(path)


def run(tmp_path, regions, kind="static", frequency=""):
    path = tmp_path / f"case-{kind}-{len(regions)}.toml"
    path.write_text(CASE.format(regions=regions, kind=kind, frequency=frequency))
    results, _, _ = solve_case(load_case(path))
    return results["solutions"][0]


def test_drawing_equals_typed_shapes_and_its_area_gives_the_dc_resistance(tmp_path):
    make_drawing(tmp_path / "part.dxf")
    drawn = run(tmp_path, DRAWN)
    typed = run(tmp_path, TYPED)
    sigma = 1 / 1.68e-8  # built-in copper
    area = 12 * 6 + math.pi * 9 / 2  # the bar with its round end, mm^2
    bar = drawn["sources"]["feed"]["resistance_ohm"]
    assert bar == pytest.approx(1 / (sigma * area * 1e-6), rel=1e-4)
    wire = drawn["sources"]["wire-feed"]["resistance_ohm"]
    assert wire == pytest.approx(1 / (sigma * math.pi * 16e-6), rel=1e-4)
    for name in ("feed", "wire-feed"):
        assert drawn["sources"][name]["resistance_ohm"] == pytest.approx(
            typed["sources"][name]["resistance_ohm"], rel=1e-6)


def test_drawing_at_ac_matches_typed_shapes(tmp_path):
    make_drawing(tmp_path / "part.dxf")
    f = 'frequency = "2 kHz"'
    drawn, typed = run(tmp_path, DRAWN, "harmonic", f), run(tmp_path, TYPED, "harmonic", f)
    for name in ("feed", "wire-feed"):
        a = complex(*drawn["sources"][name]["impedance_ohm"])
        b = complex(*typed["sources"][name]["impedance_ohm"])
        assert abs(a - b) < 1e-4 * abs(b)


def test_units_scale_rotate_and_offset(tmp_path):
    """A drawing in inches scaled by 0.5 and turned 90 degrees: the wire's centre moves to
    (0, 20 * 25.4 * 0.5) mm and its radius is 4 * 25.4 * 0.5 mm."""
    make_drawing(tmp_path / "part.dxf", unit=1)
    text = CASE.format(regions=DRAWN.replace('layer = "WIRE"', 'layer = "WIRE"\nscale = 0.5\n'
                                             'rotate = "90 deg"\noffset = [1, 2]'),
                       kind="static", frequency="").replace("radius = 60", "radius = 2000")
    (tmp_path / "c.toml").write_text(text)
    case = load_case(tmp_path / "c.toml")
    wire = next(r.shape for r in case.geometry.regions if r.name == "wire")
    r = 4 * 25.4 * 0.5
    assert wire.area() == pytest.approx(math.pi * r**2)
    x0, y0, x1, y1 = wire.bbox()
    assert ((x0 + x1) / 2, (y0 + y1) / 2) == pytest.approx((1.0, 2.0 + 20 * 25.4 * 0.5))


@pytest.mark.parametrize("change,key,words", [
    ('layer = "BAR"', "region[1].layer", "nothing on layer 'SHAFT'; the drawing's layers"),
    ('layer = "BAR"', "region[1].layer", "'WIRE'"),
    ('layer = "WIRE"', "region[2].layer", "not closed"),
    ('layer = "WIRE"', "region[2].layer", "TEXT at (3, 4) is not supported"),
    ('file = "part.dxf"', "region[1].file", "no file"),
    ('file = "part.dxf"', "region[1].file", "outside the case file's folder"),
    ('file = "part.dxf"', "region[1].file", "not a DXF file"),
])
def test_bad_drawings_exit_2_with_the_key(tmp_path, capsys, change, key, words):
    folder = tmp_path / "case"
    folder.mkdir()
    make_drawing(folder / "part.dxf")
    (folder / "junk.dxf").write_text("this is not a drawing\n")
    replacement = {"nothing on": 'layer = "SHAFT"', "'WIRE'": 'layer = "SHAFT"',
                   "not closed": 'layer = "OPEN"', "TEXT": 'layer = "NOTES"',
                   "no file": 'file = "missing.dxf"', "outside": 'file = "../part.dxf"',
                   "not a DXF": 'file = "junk.dxf"'}
    new = next(v for k, v in replacement.items() if k in words)
    if "outside" in words:
        make_drawing(tmp_path / "part.dxf")
    regions = DRAWN.replace(change, new, 1) if change != 'layer = "WIRE"' else \
        DRAWN.replace(change, new)
    path = folder / "bad.toml"
    path.write_text(CASE.format(regions=regions, kind="static", frequency=""))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert key in err and words in err


def test_check_and_mesh_show_the_drawn_regions(tmp_path, capsys):
    """`whorl check --picture` draws the outlines with their names before meshing; `whorl
    mesh` adds a close-up of the meshed regions, named."""
    make_drawing(tmp_path / "part.dxf")
    path = tmp_path / "drawn.toml"
    path.write_text(CASE.format(regions=DRAWN, kind="static", frequency=""))
    picture = tmp_path / "outlines.png"
    assert main(["check", str(path), "--picture", str(picture)]) == 0
    out = capsys.readouterr().out
    assert "bar" in out and "outline of 4 sides (1 arcs)" in out
    assert picture.read_bytes().startswith(b"\x89PNG")
    assert main(["mesh", str(path), "--out", str(tmp_path / "m"), "-q"]) == 0
    assert (tmp_path / "m" / "drawn" / "mesh-regions.png").read_bytes().startswith(b"\x89PNG")
