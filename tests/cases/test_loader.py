"""Valid case files parse into the right objects with the right SI numbers."""

import cmath
import math

import pytest

from whorl.cases.cli import main
from whorl.cases.errors import CaseError
from whorl.cases.loader import load_case, parse_case
from whorl.cases.read_sweep import sweep_size
from whorl.meshes.shapes import Circle, Polygon, Rectangle, Ring
from whorl.solver.boundary import AppliedFieldSide, FluxNormal, FluxParallel, Open, Potential
from whorl.solver.sources import AppliedField, Massive, Shorted, Stranded

HEATER = """\
format = 1

[case]
name = "shaft-end-heater"
title = "Shaft end heating before upsetting"
notes = "an invented demonstration"

[model]
geometry = "axisymmetric"
length_unit = "mm"
order = 2

[parameters]
coil_gap = "6 mm"
freq = "3 kHz"
turns = 8
tube = "8 mm"
pitch = "tube + 1.5 mm"
r = "5 mm"

[material.tube-copper]
conductivity = "58 MS/m"

[material.bronze]
resistivity = "1.72e-8 ohm*m"
relative_permeability = 1

[[region]]
name = "shaft"
material = "carbon-steel"
shape = "rectangle"
corner = [0, -80]
size = [20, 160]
mesh_size = 2

[[region]]
name = "turn"
material = "tube-copper"
shape = "circle"
center = ["20 mm + coil_gap + tube/2", "-3.5*pitch"]
radius = "tube/2"
repeat = { count = "turns", step = [0, "pitch"] }

[[region]]
name = "collar"
material = "bronze"
shape = "ring"
center = [40, 100]
inner = "r"
outer = "2*r + 3 mm"

[domain]
shape = "rectangle"
margin = 4
material = "air"

[domain.boundary]
top = "flux-normal"
bottom = "flux-normal"
right = "flux-parallel"

[[source]]
name = "inductor"
kind = "massive"
regions = ["turn.*"]
connection = "series"
current = "1.8 kA"
phase = "-120 deg"

[study]
kind = "harmonic"
frequency = "freq"

[[loop]]
name = "search-coil"
at = [32, 0]
turns = 2

[[line]]
name = "radial"
from = [0, 0]
to = [60, 0]
samples = 241

[[point]]
name = "core"
at = [0, 0]

[output]
folder = "out"
fields = true
plots = true

[sweep]
mode = "grid"
freq = ["1 kHz", "3 kHz", "10 kHz"]
coil_gap = { from = 2, to = 10, count = 5 }
"""


@pytest.fixture
def heater(tmp_path):
    path = tmp_path / "heater.toml"
    path.write_text(HEATER, encoding="utf-8")
    return path


def region(case, name):
    return next(r for r in case.geometry.regions if r.name == name)


def test_heater_header(heater):
    case = load_case(heater)
    assert case.name == "shaft-end-heater"
    assert case.title.startswith("Shaft end")
    assert case.axisymmetric and case.geometry.axisymmetric
    assert case.length_unit == "mm" and case.unit_m == pytest.approx(1e-3)
    assert case.geometry.unit_m == pytest.approx(1e-3)
    assert case.order == 2 and case.geometry.options.order == 2
    assert case.path == heater
    assert case.document["case"]["name"] == "shaft-end-heater"


def test_parameters_in_si(heater):
    p = load_case(heater).parameters
    assert p == pytest.approx({"coil_gap": 0.006, "freq": 3000.0, "turns": 8.0,
                               "tube": 0.008, "pitch": 0.0095, "r": 0.005})


def test_materials(heater):
    case = load_case(heater)
    assert case.materials["tube-copper"].conductivity == pytest.approx(5.8e7)
    assert case.materials["bronze"].conductivity == pytest.approx(1 / 1.72e-8)
    assert case.materials["carbon-steel"].relative_permeability == 100
    assert case.region_material["shaft"] == "carbon-steel"
    assert case.region_material["turn.3"] == "tube-copper"
    assert case.region_material["domain"] == "air"
    assert set(case.materials) == {"carbon-steel", "tube-copper", "bronze", "air"}


def test_repeat_steps_the_centres(heater):
    case = load_case(heater)
    names = [r.name for r in case.geometry.regions]
    assert names == ["shaft"] + [f"turn.{k}" for k in range(1, 9)] + ["collar"]
    for k in range(1, 9):
        shape = region(case, f"turn.{k}").shape
        assert isinstance(shape, Circle)
        assert shape.center == pytest.approx((30.0, -3.5 * 9.5 + (k - 1) * 9.5))
        assert shape.radius == pytest.approx(4.0)
    assert all(r.skin_depth is None for r in case.geometry.regions)
    assert region(case, "shaft").mesh_size == 2


def test_expression_in_length_unit(heater):
    ring = region(load_case(heater), "collar").shape
    assert isinstance(ring, Ring)
    assert (ring.inner, ring.outer) == pytest.approx((5.0, 13.0))  # "2*r + 3 mm"


def test_wildcard_and_phase(heater):
    (source,) = load_case(heater).sources
    assert isinstance(source, Massive)
    assert source.regions == tuple(f"turn.{k}" for k in range(1, 9))
    assert source.current == pytest.approx(1800 * cmath.exp(-1j * math.radians(120)))
    assert source.voltage is None


def test_margin_domain_axisymmetric(heater):
    case = load_case(heater)
    d = case.geometry.domain
    # regions span r 0..53 (collar to 40 + 13), z -80..113 (collar to 100 + 13)
    size = 193.0
    assert d.shape == "rectangle"
    assert d.corner == pytest.approx((0.0, -80 - 4 * size))
    assert d.size == pytest.approx((53 + 4 * size, 193 + 8 * size))
    assert d.sides(True)[0] == "axis"
    assert case.boundary == {"top": FluxNormal(), "bottom": FluxNormal(),
                             "right": FluxParallel()}


def test_study_outputs_sweep(heater):
    case = load_case(heater)
    assert case.study.kind == "harmonic" and case.study.frequencies == (3000.0,)
    assert case.loops[0].at == (32.0, 0.0) and case.loops[0].turns == 2
    assert case.lines[0].samples == 241 and case.lines[0].end == (60.0, 0.0)
    assert case.points[0].at == (0.0, 0.0)
    assert case.output.fields and case.output.plots and str(case.output.folder) == "out"
    assert case.sweep.mode == "grid"
    assert case.sweep.axes["freq"] == ["1 kHz", "3 kHz", "10 kHz"]
    assert case.sweep.axes["coil_gap"] == [2.0, 4.0, 6.0, 8.0, 10.0]
    assert sweep_size(case.sweep) == 15


def test_set_overrides(heater):
    case = load_case(heater, {"freq": "10 kHz", "coil_gap": "4"})
    assert case.parameters["freq"] == pytest.approx(1e4)
    assert case.parameters["coil_gap"] == pytest.approx(0.004)  # a bare 4 keeps the file's mm
    assert case.study.frequencies == (pytest.approx(1e4),)
    assert region(case, "turn.1").shape.center[0] == pytest.approx(28.0)
    assert case.document["_resolved"]["overrides"] == {"freq": "10 kHz", "coil_gap": "4"}


def test_set_override_feeds_dependents(heater):
    case = load_case(heater, {"tube": "10 mm"})
    assert case.parameters["pitch"] == pytest.approx(0.0115)


def test_unknown_override(heater):
    with pytest.raises(CaseError) as info:
        load_case(heater, {"nope": "1"})
    assert info.value.key == "--set nope"


PLANAR = """\
format = 1
[model]
geometry = "planar"
length_unit = "cm"
depth = "50 cm"
order = 1

[mesh]
per_skin_depth = 3
growth = 1.3
max_size = 5
across = 4

[[region]]
name = "go"
material = "copper"
shape = "rectangle"
corner = [-3, -1]
size = [2, 2]

[[region]]
name = "back"
material = "copper"
shape = "rectangle"
corner = [1, -1]
size = [2, 2]

[[region]]
name = "plate"
material = "aluminium"
shape = "polygon"
points = [[-5, 3], [5, 3], [5, 4], [-5, 4]]

[[region]]
name = "shield"
material = "aluminium"
shape = "rectangle"
corner = [-5, -5]
size = [10, 1]

[domain]
shape = "circle"
margin = 2

[domain.boundary]
outer = "open"

[[source]]
name = "pair"
kind = "stranded"
regions = ["go"]
return_regions = ["back"]
turns = 10
voltage = "12 V"
resistance = "0.5 ohm"

[[shorted]]
regions = ["plate", "shield"]

[study]
kind = "harmonic"
frequency = { from = "50 Hz", to = "5 kHz", count = 3, scale = "log" }

[[loop]]
name = "pickup"
from = [-4, 0]
to = [4, 0]
"""


def test_planar_case():
    case = parse_case(PLANAR)
    assert case.name == "case" and not case.axisymmetric
    assert case.unit_m == pytest.approx(0.01) and case.depth_m == pytest.approx(0.5)
    assert case.order == 1
    opts = case.geometry.options
    assert (opts.order, opts.per_skin_depth, opts.growth, opts.max_size, opts.across) == \
        (1, 3.0, 1.3, 5.0, 4)
    plate = region(case, "plate").shape
    assert isinstance(plate, Polygon) and plate.area() == pytest.approx(10.0)
    (source,) = case.sources
    assert isinstance(source, Stranded)
    assert source.voltage == pytest.approx(12) and source.current is None
    assert source.turns == 10 and source.resistance == 0.5
    assert source.return_regions == ("back",)
    assert case.shorted == (Shorted(("plate", "shield")),)
    assert case.study.frequencies == pytest.approx((50.0, 500.0, 5000.0))
    assert case.boundary == {"outer": Open()}
    assert case.loops[0].start == (-4.0, 0.0) and case.loops[0].at is None


def test_circle_margin_domain():
    d = parse_case(PLANAR).geometry.domain
    # farthest point: the shield's corners at (+-5, -5) -> sqrt(50); bbox size 10
    assert d.shape == "circle"
    assert d.radius == pytest.approx(math.sqrt(50) + 2 * 10)


def test_planar_margin_rectangle():
    text = PLANAR.replace('shape = "circle"\nmargin = 2', "margin = 1").replace(
        'outer = "open"', 'top = { potential = "1e-3 Wb/m" }\nleft = "flux-normal"')
    case = parse_case(text)
    d = case.geometry.domain
    assert d.corner == pytest.approx((-15.0, -15.0))
    assert d.size == pytest.approx((30.0, 29.0))
    assert case.boundary["top"] == Potential(1e-3)
    assert case.boundary["left"] == FluxNormal()


def test_static_and_applied_field():
    text = """\
format = 1
[model]
geometry = "planar"
[[region]]
name = "can"
material = "stainless-304"
shape = "ring"
center = [0, 0]
inner = 9
outer = 10
[domain]
corner = [-50, -50]
size = [100, 100]
[domain.boundary]
left = "applied-field"
right = "applied-field"
[[source]]
name = "stray"
kind = "applied-field"
flux_density = ["0 T", "10 mT"]
[study]
kind = "static"
"""
    case = parse_case(text)
    assert case.study.frequencies == (0.0,)
    (src,) = case.sources
    assert isinstance(src, AppliedField)
    assert src.flux_density == pytest.approx((0.0, 0.01))
    assert case.boundary["left"] == AppliedFieldSide()
    assert case.geometry.domain.corner == (-50.0, -50.0)


def test_transient_waveforms_in_document():
    text = """\
format = 1
[model]
geometry = "axisymmetric"
[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [10, -5]
size = [5, 10]
[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
turns = 100
drive = "voltage"
resistance = "2 ohm"
waveform = { shape = "table", points = [[0, 0], ["1 ms", "5 V"], ["3 ms", "5 V"]] }
[study]
kind = "transient"
end = "20 ms"
step = "50 us"
scheme = "implicit-euler"
save_every = 5
"""
    case = parse_case(text)
    st = case.study
    assert (st.kind, st.end_s, st.step_s, st.scheme, st.save_every) == \
        ("transient", pytest.approx(0.02), pytest.approx(5e-5), "implicit-euler", 5)
    (src,) = case.sources
    assert src.current is None and src.voltage is None
    wave = case.document["_resolved"]["waveforms"]["coil"]
    assert wave["drive"] == "voltage" and wave["shape"] == "table"
    assert wave["points"] == [(0.0, 0.0), (pytest.approx(1e-3), 5.0), (pytest.approx(3e-3), 5.0)]
    d = case.geometry.domain
    assert d.corner[0] == 0.0


def test_axisymmetric_circle_domain_is_half_disk():
    text = HEATER.replace('shape = "rectangle"\nmargin = 4', 'shape = "circle"\nradius = 500')
    text = text.replace('top = "flux-normal"\nbottom = "flux-normal"\nright = "flux-parallel"',
                        'outer = "open"')
    case = parse_case(text)
    assert case.geometry.domain.radius == 500
    assert case.geometry.domain.sides(True) == ("outer", "axis")


def test_zip_sweep_and_log_range():
    text = HEATER.replace('mode = "grid"', 'mode = "zip"').replace(
        'coil_gap = { from = 2, to = 10, count = 5 }',
        'coil_gap = { from = "2 mm", to = "8 mm", count = 3, scale = "log" }')
    case = parse_case(text)
    assert sweep_size(case.sweep) == 3
    values = case.sweep.axes["coil_gap"]
    overridden = [parse_case(HEATER, overrides={"coil_gap": v}).parameters["coil_gap"]
                  for v in values]
    assert overridden == pytest.approx([0.002, 0.004, 0.008])


def test_check_prints_summary(heater, capsys):
    assert main(["check", str(heater), "--set", "freq=10 kHz"]) == 0
    out = capsys.readouterr().out
    assert "axisymmetric" in out and "turn.1..8" in out
    assert "harmonic at 10000 Hz" in out
    assert "15 points" in out
    assert sorted(p.name for p in heater.parent.iterdir()) == ["heater.toml"]


def test_materials_command(capsys):
    assert main(["materials"]) == 0
    out = capsys.readouterr().out
    for name in ("air", "copper", "aluminium", "brass", "stainless-304", "carbon-steel",
                 "water"):
        assert f"\n{name} " in out
    assert "resistivity ohm*m" in out


def test_shapes_types(heater):
    case = load_case(heater)
    assert isinstance(region(case, "shaft").shape, Rectangle)
