"""B-H curves in case files: CSV beside the case or inline; bad curves exit 2 with key and row."""

from pathlib import Path

import numpy as np
import pytest

from whorl.cases.cli import main
from whorl.cases.loader import load_case
from whorl.solver.bh import BHCurve, CurveError, frohlich_kennelly
from whorl.solver.constants import MU0

CASE = """\
format = 1

[material.steel]
resistivity = "1.6e-7 ohm*m"
bh_curve = CURVE

[[region]]
name = "bar"
material = "steel"
shape = "rectangle"
corner = [0, 0]
size = [10, 5]

[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [0, 8]
size = [10, 2]

[[source]]
name = "feed"
kind = "stranded"
regions = ["coil"]
current = "1 A"

[study]
kind = "static"
"""

GOOD_CSV = "H (A/m), B (T)\n0, 0\n100, 0.6\n300, 1.1\n1000, 1.45\n10000, 1.8\n100000, 2.0\n"


def write(tmp_path, curve, csv=None, name="steel-bh.csv"):
    if csv is not None:
        (tmp_path / name).write_text(csv, encoding="utf-8")
    case = tmp_path / "case.toml"
    case.write_text(CASE.replace("CURVE", curve), encoding="utf-8")
    return case


def check(tmp_path, capsys, curve, csv=None):
    status = main(["check", str(write(tmp_path, curve, csv))])
    return status, capsys.readouterr()


def test_csv_and_inline_agree(tmp_path):
    a = load_case(write(tmp_path, '"steel-bh.csv"', GOOD_CSV)).materials["steel"]
    inline = '{ h = [0, 100, 300, 1000, 1e4, 1e5], b = [0, 0.6, 1.1, 1.45, 1.8, 2.0] }'
    b = load_case(write(tmp_path, inline)).materials["steel"]
    assert a.bh_curve is not None and b.bh_curve is not None
    np.testing.assert_allclose(a.bh_curve.h, b.bh_curve.h)
    np.testing.assert_allclose(a.bh_curve.b, b.bh_curve.b)
    # the material's relative permeability is the curve's initial one
    assert a.relative_permeability == pytest.approx(a.bh_curve.initial_relative_permeability)


def test_inline_quantities_and_origin_added(tmp_path):
    inline = '{ h = ["0.1 kA/m", "1 kA/m"], b = ["600 mT", 1.45] }'
    m = load_case(write(tmp_path, inline)).materials["steel"]
    assert m.bh_curve.h.tolist() == [0.0, 100.0, 1000.0]
    assert m.bh_curve.b.tolist() == [0.0, 0.6, 1.45]


BAD = {
    "falling B": ('"steel-bh.csv"', GOOD_CSV.replace("1000, 1.45", "1000, 1.0"),
                  "material.steel.bh_curve[4]"),
    "flat H": ('"steel-bh.csv"', GOOD_CSV.replace("300, 1.1", "100, 1.1"),
               "material.steel.bh_curve[3]"),
    "one point": ('"steel-bh.csv"', "H,B\n100, 0.6\n", "material.steel.bh_curve"),
    "NaN": ('"steel-bh.csv"', GOOD_CSV.replace("0.6", "nan"), "material.steel.bh_curve[2]"),
    "negative": ('"steel-bh.csv"', GOOD_CSV.replace("100, 0.6", "-100, 0.6"),
                 "material.steel.bh_curve[2]"),
    "not a number": ('"steel-bh.csv"', GOOD_CSV.replace("0.6", "abc"),
                     "material.steel.bh_curve[2]"),
    "three columns": ('"steel-bh.csv"', GOOD_CSV.replace("0.6", "0.6, 7"),
                      "material.steel.bh_curve[2]"),
    "missing file": ('"nothing.csv"', None, "material.steel.bh_curve"),
    "outside the folder": ('"../steel-bh.csv"', None, "material.steel.bh_curve"),
    "inline falling": ('{ h = [0, 100, 200], b = [0, 1.0, 0.9] }', None,
                       "material.steel.bh_curve.b[3]"),
    "inline uneven": ('{ h = [0, 100, 200], b = [0, 1.0] }', None,
                      "material.steel.bh_curve"),
    "inline wrong unit": ('{ h = [0, "100 T"], b = [0, 1.0] }', None,
                          "material.steel.bh_curve.h[2]"),
    "not origin": ('{ h = [0, 100], b = [0.5, 1.0] }', None, "material.steel.bh_curve.b[1]"),
    "a number": ("3", None, "material.steel.bh_curve"),
}


@pytest.mark.parametrize("curve, csv, key", BAD.values(), ids=BAD.keys())
def test_bad_curve(tmp_path, capsys, curve, csv, key):
    status, out = check(tmp_path, capsys, curve, csv)
    assert status == 2, out.out
    assert out.err.startswith("whorl: bad input: ")
    assert key in out.err


def test_curve_and_permeability_both(tmp_path, capsys):
    text = CASE.replace("bh_curve = CURVE", 'bh_curve = { h = [0, 100], b = [0, 1] }\n'
                        "relative_permeability = 100")
    (tmp_path / "case.toml").write_text(text, encoding="utf-8")
    assert main(["check", str(tmp_path / "case.toml")]) == 2
    assert "material.steel.relative_permeability" in capsys.readouterr().err


def test_check_and_materials_show_curves(tmp_path, capsys):
    status, out = check(tmp_path, capsys, '"steel-bh.csv"', GOOD_CSV)
    assert status == 0, out.err
    assert "B-H curve" in out.out
    assert main(["materials"]) == 0
    out = capsys.readouterr().out
    assert "medium-carbon-steel-bh" in out and "typical values" in out


def test_curve_interpolation_properties():
    """Monotone, through the points, slope mu0 beyond the last point, tangent consistent."""
    c = BHCurve.from_points([0, 100, 300, 1000, 1e4, 1e5], [0, 0.6, 1.1, 1.45, 1.8, 2.0])
    np.testing.assert_allclose(c.flux_density(c.h), c.b, atol=1e-9)
    b = np.linspace(0, 4, 4001)
    h = c.field_strength(b)
    assert np.all(np.diff(h) > 0)
    slope = c.field_strength_slope(b)
    eps = 1e-7
    numeric = (c.field_strength(b[1:] + eps) - c.field_strength(b[1:] - eps)) / (2 * eps)
    np.testing.assert_allclose(numeric, slope[1:], rtol=1e-5)
    assert c.field_strength_slope(np.array([3.0]))[0] == pytest.approx(1 / MU0)
    # nu + 2 b^2 dnu/d(b^2) = dH/dB (the tensor's value along B)
    bb = np.array([0.3, 1.2, 1.9, 2.5])
    along = c.reluctivity(bb) + 2 * bb**2 * c.reluctivity_derivative(bb**2)
    np.testing.assert_allclose(along, c.field_strength_slope(bb), rtol=1e-9)
    # stored energy: d/dB of int H dB is H
    e = c.energy_density(b)
    np.testing.assert_allclose(np.gradient(e, b)[1:-1], h[1:-1], rtol=2e-2, atol=1.0)
    with pytest.raises(CurveError):
        BHCurve.from_points([0, 100], [0, 0])


def test_frohlich_kennelly_initial_permeability():
    c = frohlich_kennelly(2.0, 600.0)
    assert c.initial_relative_permeability == pytest.approx(600, rel=1e-3)
    hk = 2.0 / (MU0 * 599)
    assert c.flux_density(np.array([hk]))[0] == pytest.approx(MU0 * hk + 1.0, rel=1e-3)


def _hardening_with(tmp_path, material_text, name="shaft-steel"):
    """The shaft hardening demo with its steel replaced by ``material_text``."""
    demo = Path(__file__).resolve().parents[2] / "cases" / "examples"
    text = (demo / "shaft-end-hardening.toml").read_text(encoding="utf-8")
    start = text.index("[material.shaft-steel]")
    end = text.index("[[region]]")
    text = text[:start] + material_text + "\n\n" + text[end:]
    text = text.replace('material = "shaft-steel"', f'material = "{name}"', 1)
    (tmp_path / "case.toml").write_text(text, encoding="utf-8")
    return tmp_path / "case.toml"


def test_heating_study_takes_a_curve(tmp_path, capsys):
    """A heating study takes a material with a B-H curve (its effective permeability at
    each element's temperature): a built-in saturable steel, which has thermal data."""
    case = _hardening_with(tmp_path, "", name="medium-carbon-steel-bh")
    assert main(["check", str(case)]) == 0
    assert "medium-carbon-steel-bh" in capsys.readouterr().out


def test_heating_curve_without_thermal_data_exits_2(tmp_path, capsys):
    """Bad input still exits 2 with the key path: a saturable steel heated without its
    density."""
    material = """[material.bare-steel]
resistivity = "0.18 uohm*m"
bh_curve = { h = [0, 1000, 10000, 100000], b = [0, 1.0, 1.6, 2.0] }
curie_temperature = "760 degC"
thermal_conductivity = "45 W/(m*K)"
specific_heat = "500 J/(kg*K)"
"""
    case = _hardening_with(tmp_path, material, name="bare-steel")
    assert main(["check", str(case)]) == 2
    err = capsys.readouterr().err
    assert "density" in err and "material.bare-steel" in err
