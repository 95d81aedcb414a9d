"""Bad [[motion]] tables and moving loops: `whorl check` exits 2 and names the key path."""

import pytest

from whorl.cases.cli import main

PLANAR = """\
format = 1

[model]
geometry = "planar"

[[region]]
name = "strip"
material = "aluminium"
shape = "rectangle"
corner = [-50, -12]
size = [100, 2]

[[region]]
name = "disc"
material = "copper"
shape = "circle"
center = [0, 20]
radius = 5

[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [-5, 0]
size = [10, 4]

[[region]]
name = "gap"
material = "air"
shape = "rectangle"
corner = [20, 0]
size = [5, 5]

[domain]
shape = "rectangle"
corner = [-50, -50]
size = [100, 100]

[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
current = "1 A"

[study]
kind = "harmonic"
frequency = "50 Hz"
"""

AXI = """\
format = 1

[model]
geometry = "axisymmetric"

[[region]]
name = "billet"
material = "aluminium"
shape = "rectangle"
corner = [0, -50]
size = [10, 100]

[domain]
shape = "rectangle"
corner = [0, -50]
size = [60, 100]

[study]
kind = "static"
"""

STRIP = '\n[[motion]]\nregions = ["strip"]\nvelocity = ["2 m/s", 0]\n'
SPIN = '\n[[motion]]\nregions = ["disc"]\nangular_velocity = "600 rpm"\ncenter = [0, 20]\n'
BILLET = '\n[[motion]]\nregions = ["billet"]\nvelocity = [0, "1 m/s"]\n'

BAD = {
    "not a conductor": (PLANAR + STRIP.replace('"strip"', '"gap"'), "motion[1].regions[1]"),
    "a winding": (PLANAR + STRIP.replace('"strip"', '"coil"'), "motion[1].regions[1]"),
    "no such region": (PLANAR + STRIP.replace('"strip"', '"belt"'), "motion[1].regions[1]"),
    "two motions": (PLANAR + STRIP + STRIP, "motion[2].regions[1]"),
    "strip across the motion": (PLANAR + STRIP.replace('["2 m/s", 0]', '[0, "2 m/s"]'),
                                "motion[1].velocity"),
    "oblique strip motion": (PLANAR + STRIP.replace('["2 m/s", 0]', '["2 m/s", "1 m/s"]'),
                             "motion[1].velocity"),
    "a disc translating": (PLANAR + STRIP.replace('"strip"', '"disc"'), "motion[1].velocity"),
    "a strip rotating": (PLANAR + SPIN.replace('"disc"', '"strip"'), "motion[1].regions"),
    "off-centre rotation": (PLANAR + SPIN.replace("center = [0, 20]", "center = [1, 20]"),
                            "motion[1].center"),
    "rotation without a centre": (PLANAR + SPIN.replace("center = [0, 20]\n", ""),
                                  "motion[1].center"),
    "angular velocity in Hz": (PLANAR + SPIN.replace('"600 rpm"', '"10 Hz"'),
                               "motion[1].angular_velocity"),
    "wrong velocity unit": (PLANAR + STRIP.replace('"2 m/s"', '"2 m"'), "motion[1].velocity[1]"),
    "both kinds": (PLANAR + STRIP + 'angular_velocity = "1 rpm"\n', "motion[1]"),
    "neither kind": (PLANAR + '\n[[motion]]\nregions = ["strip"]\n', "motion[1]"),
    "unknown key": (PLANAR + STRIP + 'speed = 3\n', "motion[1].speed"),
    "bad stabilisation": (PLANAR + STRIP + 'stabilisation = "maybe"\n',
                          "motion[1].stabilisation"),
    "rotation in an axisymmetric model": (AXI + '\n[[motion]]\nregions = ["billet"]\n'
                                          'angular_velocity = "60 rpm"\ncenter = [0, 0]\n',
                                          "motion[1].angular_velocity"),
    "velocity across the axis": (AXI + BILLET.replace('[0, "1 m/s"]', '["1 m/s", 0]'),
                                 "motion[1].velocity[1]"),
    "billet shorter than the model": (AXI.replace("size = [10, 100]", "size = [10, 60]")
                                      + BILLET, "motion[1].velocity"),
    "a strip with rounded ends": (PLANAR.replace("size = [100, 2]\n", "size = [100, 2]\n"
                                                 "fillet = 0.5\n", 1) + STRIP,
                                  "motion[1].velocity"),
    "loop velocity unit": (PLANAR + '\n[[loop]]\nname = "l"\nfrom = [0, 30]\nto = [0, 40]\n'
                           'velocity = ["1 m/s", "2 A"]\n', "loop[1].velocity[2]"),
}


def check(tmp_path, text, capsys):
    case = tmp_path / "case.toml"
    case.write_text(text, encoding="utf-8")
    status = main(["check", str(case)])
    return status, capsys.readouterr()


@pytest.mark.parametrize("text", [PLANAR + STRIP + SPIN, AXI + BILLET], ids=["planar", "axi"])
def test_good_motions_pass(tmp_path, capsys, text):
    status, out = check(tmp_path, text, capsys)
    assert status == 0, out.err


@pytest.mark.parametrize("text, key", BAD.values(), ids=BAD.keys())
def test_bad_motion(tmp_path, capsys, text, key):
    status, out = check(tmp_path, text, capsys)
    assert status == 2, out.out
    assert out.err.startswith("whorl: bad input: ")
    assert f" {key}" in out.err or f"{key}:" in out.err, out.err
    assert "cannot check" not in out.err  # every shape is checked, drawn ones too
