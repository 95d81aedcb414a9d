"""Malformed case files: `whorl check` exits 2, names the key path, writes nothing."""

import pytest

from whorl.cases.cli import main

GOOD = """\
format = 1

[model]
geometry = "planar"

[parameters]
gap = "2 mm"

[[region]]
name = "bar"
material = "copper"
shape = "rectangle"
corner = [0, 0]
size = [10, "gap"]

[[source]]
name = "coil"
kind = "stranded"
regions = ["bar"]
current = "1 A"

[study]
kind = "harmonic"
frequency = "50 Hz"
"""

REGION2 = """
[[region]]
name = "bar"
material = "copper"
shape = "circle"
center = [30, 0]
radius = 2
"""

CU = """
[material.cu]
conductivity = "58 MS/m"
"""


def edit(old, new, text=GOOD):
    assert old in text
    return text.replace(old, new, 1)


def add(extra, text=GOOD):
    return text + extra


AXI = edit('geometry = "planar"', 'geometry = "axisymmetric"')

BAD = {
    "unknown top-level key": (edit("format = 1", "format = 1\ncolour = 1"), "colour"),
    "unknown region key": (edit('size = [10, "gap"]', 'size = [10, "gap"]\ncolour = "red"'),
                           "region[1].colour"),
    "unknown source key": (edit('current = "1 A"', 'currant = "1 A"'), "source.coil.currant"),
    "unknown model key": (edit('geometry = "planar"', 'geometry = "planar"\nunits = "mm"'),
                          "model.units"),
    "wrong unit dimension": (edit('frequency = "50 Hz"', 'frequency = "50 mm"'),
                             "study.frequency"),
    "wrong unit in a list": (edit('size = [10, "gap"]', 'size = [10, "3 kHz"]'),
                             "region[1].size[2]"),
    "negative conductivity": (add('\n[material.cu]\nconductivity = "-5 MS/m"\n'),
                              "material.cu.conductivity"),
    "conductivity and resistivity": (add(CU + 'resistivity = "1.7e-8 ohm*m"\n'),
                                     "material.cu.resistivity"),
    "zero permeability": (add(CU + "relative_permeability = 0\n"),
                          "material.cu.relative_permeability"),
    "duplicate region names": (add(REGION2), "region[2].name"),
    "duplicate source names": (add('\n[[source]]\nname = "coil"\nkind = "stranded"\n'
                                   'regions = ["bar"]\ncurrent = "1 A"\n'), "source.coil.name"),
    "duplicate material tables": (add(CU + CU), "material.cu"),
    "region across the axis": (edit("corner = [0, 0]", "corner = [-1, 0]", AXI), "region[1]"),
    "undefined parameter": (edit('size = [10, "gap"]', 'size = [10, "gapp"]'),
                            "region[1].size[2]"),
    "undefined name in a parameter": (edit('gap = "2 mm"', 'gap = "gapp + 1 mm"'),
                                      "parameters.gap"),
    "cyclic parameters": (edit('gap = "2 mm"', 'gap = "b + 1 mm"\nb = "2*gap"'),
                          "parameters.gap"),
    "call to __import__": (edit('size = [10, "gap"]', "size = [10, \"__import__('os')\"]"),
                           "region[1].size[2]"),
    "call to open": (edit('size = [10, "gap"]', "size = [10, \"open('x')\"]"),
                     "region[1].size[2]"),
    "attribute access": (edit('size = [10, "gap"]', 'size = [10, "gap.real"]'),
                         "region[1].size[2]"),
    "length plus bare number": (edit('size = [10, "gap"]', 'size = [10, "20 + gap"]'),
                                "region[1].size[2]"),
    "missing material": (edit('material = "copper"', 'material = "unobtainium"'),
                         "region[1].material"),
    "empty model": ("format = 1\n\n[study]\nkind = \"static\"\n", "region"),
    "format 2": (edit("format = 1", "format = 2"), "format"),
    "no format": (edit("format = 1", ""), "format"),
    "zip sweep of unequal lengths": (add('\n[sweep]\nmode = "zip"\ngap = ["1 mm", "2 mm"]\n'
                                         'f = [1, 2, 3]\n', edit('gap = "2 mm"',
                                                                 'gap = "2 mm"\nf = 50')),
                                     "sweep.f"),
    "unknown sweep parameter": (add('\n[sweep]\nfreq = ["1 kHz", "2 kHz"]\n'), "sweep.freq"),
    "sweep value of the wrong dimension": (add('\n[sweep]\ngap = ["1 mm", "2 kHz"]\n'),
                                           "sweep.gap[2]"),
    "circle keys on a rectangle": (edit("corner = [0, 0]", "corner = [0, 0]\nradius = 3"),
                                   "region[1].radius"),
    "missing shape key": (edit('size = [10, "gap"]', ""), "region[1].size"),
    "unknown shape": (edit('shape = "rectangle"', 'shape = "hexagon"'), "region[1].shape"),
    "ring inner >= outer": (add('\n[[region]]\nname = "tube"\nmaterial = "air"\n'
                                'shape = "ring"\ncenter = [0, 20]\ninner = 5\nouter = 4\n'),
                            "region[2].inner"),
    "polygon of two points": (add('\n[[region]]\nname = "p"\nmaterial = "air"\n'
                                  'shape = "polygon"\npoints = [[0, 20], [5, 20]]\n'),
                              "region[2].points"),
    "negative size": (edit('size = [10, "gap"]', 'size = [-10, "gap"]'), "region[1].size[1]"),
    "negative radius": (add('\n[[region]]\nname = "c"\nmaterial = "air"\nshape = "circle"\n'
                            'center = [0, 20]\nradius = "-2 mm"\n'), "region[2].radius"),
    "unknown region in a source": (edit('regions = ["bar"]', 'regions = ["bar", "baz.*"]'),
                                   "source.coil.regions[2]"),
    "current and voltage": (edit('current = "1 A"', 'current = "1 A"\nvoltage = "2 V"'),
                            "source.coil.current"),
    "massive source on an insulator": (edit('material = "copper"', 'material = "air"',
                                            edit('"stranded"', '"massive"')),
                                       "source.coil.regions"),
    "applied-field side without source": (add('\n[domain.boundary]\ntop = "applied-field"\n'),
                                          "domain.boundary.top"),
    "open side on a rectangle": (add('\n[domain.boundary]\ntop = "open"\n'),
                                 "domain.boundary.top"),
    "unknown side": (add('\n[domain.boundary]\nouter = "flux-normal"\n'),
                     "domain.boundary.outer"),
    "margin and explicit size": (add("\n[domain]\nmargin = 3\ncorner = [-50, -50]\n"
                                     "size = [100, 100]\n"), "domain.margin"),
    "region outside the domain": (add("\n[domain]\ncorner = [-5, -5]\nsize = [8, 8]\n"),
                                  "region[1]"),
    "bad case name": (add('\n[case]\nname = "my case!"\n'), "case.name"),
    "element order 3": (edit('geometry = "planar"', 'geometry = "planar"\norder = 3'),
                        "model.order"),
    "depth in an axisymmetric model": (edit('geometry = "axisymmetric"',
                                            'geometry = "axisymmetric"\ndepth = "1 m"', AXI),
                                       "model.depth"),
    "transient source without waveform": (edit('kind = "harmonic"\nfrequency = "50 Hz"',
                                               'kind = "transient"\nend = "1 ms"\n'
                                               'step = "10 us"',
                                               edit('current = "1 A"', "")),
                                          "source.coil.waveform"),
    "duplicate loop names": (add('\n[[loop]]\nname = "l"\nfrom = [1, 1]\nto = [2, 1]\n' * 2),
                             "loop[2].name"),
    "loop point outside the domain": (add('\n[[point]]\nname = "p"\nat = [1e6, 0]\n'),
                                      "point[1].at"),
    "return regions in an axisymmetric model": (add(REGION2.replace('"bar"', '"back"'),
                                                    edit('regions = ["bar"]',
                                                         'regions = ["bar"]\n'
                                                         'return_regions = ["back"]', AXI)),
                                                "source.coil.return_regions"),
    "invalid TOML": (add("\n[[region]\nname = 1\n"), "not valid TOML"),
    "text where a number belongs": (edit('frequency = "50 Hz"', "frequency = true"),
                                    "study.frequency"),
}


def run_check(tmp_path, text, capsys, *extra):
    case = tmp_path / "case.toml"
    case.write_text(text, encoding="utf-8")
    status = main(["check", str(case), *extra])
    out = capsys.readouterr()
    return status, out


def test_good_case_passes(tmp_path, capsys):
    status, out = run_check(tmp_path, GOOD, capsys)
    assert status == 0, out.err
    assert "ok: the case is valid" in out.out
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case.toml"]


@pytest.mark.parametrize("text, key", BAD.values(), ids=BAD.keys())
def test_bad_case(tmp_path, capsys, text, key):
    status, out = run_check(tmp_path, text, capsys)
    assert status == 2, out.out
    assert out.err.startswith("whorl: bad input: ")
    assert key in out.err
    assert [p.name for p in tmp_path.iterdir()] == ["case.toml"]


def test_at_least_twenty_bad_cases():
    assert len(BAD) >= 20


@pytest.mark.parametrize("args, key", [
    (["--set", "nope=3"], "--set nope"),
    (["--set", "gap"], "--set"),
    (["--set", "gap=3 kHz"], "--set gap"),  # the option, not the key it ends up in
])
def test_bad_overrides(tmp_path, capsys, args, key):
    status, out = run_check(tmp_path, GOOD, capsys, *args)
    assert status == 2
    assert key in out.err
    assert [p.name for p in tmp_path.iterdir()] == ["case.toml"]


def test_missing_file(tmp_path, capsys):
    assert main(["check", str(tmp_path / "none.toml")]) == 2
    assert "no case file" in capsys.readouterr().err
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("text, line", [
    (edit('frequency = "50 Hz"', 'frequency = "50 mm"'), 24),
    (edit('size = [10, "gap"]', 'size = [10, "3 kHz"]'), 14),
    (edit('current = "1 A"', 'currant = "1 A"'), 20),
    (edit('gap = "2 mm"', 'gap = "gapp + 1 mm"'), 7),
    (edit("format = 1", "format = 2"), 1),
])
def test_errors_give_the_line(tmp_path, capsys, text, line):
    status, out = run_check(tmp_path, text, capsys)
    assert status == 2
    assert f"(line {line})" in out.err


def test_cycle_is_named(tmp_path, capsys):
    text = edit('gap = "2 mm"', 'gap = "b + 1 mm"\nb = "2*gap"')
    _, out = run_check(tmp_path, text, capsys)
    assert "gap -> b -> gap" in out.err
