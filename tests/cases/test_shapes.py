"""Arcs, fillets, chamfers, holes and spheres from the case file, and their bad input."""

import math

import pytest

from whorl.cases.cli import main
from whorl.cases.loader import parse_case
from whorl.cases.run import solve_case

BAR = """\
format = 1
[model]
geometry = "planar"
length_unit = "mm"
[[region]]
name = "bar"
material = "copper"
{shape}
[domain]
shape = "circle"
radius = 40
[[source]]
name = "feed"
kind = "massive"
regions = ["bar"]
current = "1 A"
[study]
kind = "static"
"""

FILLETED = """shape = "rectangle"
corner = [-6, -3]
size = [12, 6]
fillet = 1.5"""


def resistance(text):
    results, _, _ = solve_case(parse_case(text))
    return results["solutions"][0]["sources"]["feed"]["resistance_ohm"]


def test_filleted_bar_dc_resistance():
    """R = 1/(sigma A) per metre of depth with A = w h - (4 - pi) r^2 (plane geometry);
    to 1e-4 with curved quadratic elements."""
    case = parse_case(BAR.format(shape=FILLETED))
    sigma = case.materials["copper"].conductivity
    area = (12 * 6 - (4 - math.pi) * 1.5**2) * 1e-6
    assert resistance(BAR.format(shape=FILLETED)) == pytest.approx(1 / (sigma * area), rel=1e-4)


@pytest.mark.parametrize("arc", ["center = [0, 0]", "through = [4, 0]"])
def test_polygon_with_an_arc_a_chamfer_and_a_hole(arc):
    """A D-shaped bar (a half disk of radius 4 on a 6 x 8 rectangle, one corner cut by 1,
    a hole of radius 1): the read area is exact and the DC resistance follows it (1e-4)."""
    shape = f"""shape = "polygon"
points = [{{at = [-6, 4], chamfer = 1}}, [-6, -4], [0, -4], {{arc_to = [0, 4], {arc}}}]
subtract = [{{shape = "circle", center = [1, 0], radius = 1}}]"""
    case = parse_case(BAR.format(shape=shape))
    want = 6 * 8 - 0.5 + 8 * math.pi - math.pi
    assert case.geometry.regions[0].shape.area() == pytest.approx(want, rel=1e-12)
    sigma = case.materials["copper"].conductivity
    assert resistance(BAR.format(shape=shape)) == pytest.approx(1 / (sigma * want * 1e-6),
                                                                rel=1e-4)


def test_sphere_and_shell_on_the_axis(tmp_path):
    text = """\
format = 1
[model]
geometry = "axisymmetric"
[[region]]
name = "ball"
material = "copper"
shape = "circle"
center = [0, 10]
radius = 3
[[region]]
name = "shell"
material = "aluminium"
shape = "ring"
center = [0, -10]
inner = 2
outer = 4
[study]
kind = "harmonic"
frequency = "1 kHz"
"""
    case = parse_case(text)
    ball, shell = (r.shape for r in case.geometry.regions)
    assert ball.kind == "outline" and ball.area() == pytest.approx(math.pi * 9 / 2)
    assert shell.area() == pytest.approx(math.pi * 12 / 2)
    path = tmp_path / "ball.toml"
    path.write_text(text)
    assert main(["mesh", str(path), "--out", str(tmp_path), "-q"]) == 0


@pytest.mark.parametrize("shape,key,words", [
    ("""shape = "polygon"
points = [[0, 0], [10, 0], {arc_to = [10, 8], center = [10, 5]}]""",
     "region[1].points[3]", "does not fit"),
    ("""shape = "rectangle"
corner = [0, 0]
size = [10, 4]
fillet = 2.5""", "region[1].fillet", "does not fit"),
    ("""shape = "rectangle"
corner = [0, 0]
size = [10, 4]
fillet = 0""", "region[1].fillet", "must be > 0"),
    ("""shape = "polygon"
points = [[0, 0], [10, 10], [10, 0], [0, 10]]
fillet = 1""", "region[1].points", "crosses itself"),
    ("""shape = "rectangle"
corner = [0, 0]
size = [10, 4]
fillet = [1, 1, 1]""", "region[1].fillet", "list of 4"),
    ("""shape = "polygon"
points = [[0, 0], [10, 0], {arc_to = [10, 8], center = [10, 4], through = [12, 4]}]""",
     "region[1].points[3]", "either center"),
])
def test_bad_shapes_exit_2_with_the_key(tmp_path, capsys, shape, key, words):
    path = tmp_path / "bad.toml"
    path.write_text(BAR.format(shape=shape))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert key in err and words in err
