"""The expression evaluator: arithmetic over parameters and quantities, nothing else."""

import pytest

from whorl.cases.errors import CaseError
from whorl.cases.expressions import evaluate, names, prepare
from whorl.cases.units import Quantity, to_unit

PARAMS = {
    "coil_radius": Quantity(5, "mm"), "gap": Quantity(6, "mm"), "i_peak": Quantity(2, "kA"),
    "freq": Quantity(3, "kHz"), "tube": Quantity(8, "mm"), "pitch": Quantity(9.5, "mm"),
    "turns": 8.0,
}


@pytest.mark.parametrize("text, kind, unit, expected", [
    ("2*coil_radius + 3 mm", "length", "mm", 13.0),
    ("20 mm + gap", "length", "mm", 26.0),
    ("sqrt(2)*i_peak", "current", None, 2000 * 2**0.5),
    ("freq/3", "frequency", None, 1000.0),
    ("tube/2", "length", "mm", 4.0),
    ("-3.5*pitch", "length", "mm", -33.25),
    ("2*pi*freq", "frequency", None, 2 * 3.141592653589793 * 3000),
    ("(tube + 1.5 mm)*turns", "length", "mm", 76.0),
    ("10 A/turns", "current", None, 1.25),
    ("exp(0) + log(1)", "dimensionless", None, 1.0),
    ("sin(30 deg)", "dimensionless", None, 0.5),
    ("cos(0) + tan(0)", "dimensionless", None, 1.0),
    ("2**3", "dimensionless", None, 8.0),
    ("1.72e-8 ohm*m", "resistivity", None, 1.72e-8),
    ("58 MS/m", "conductivity", None, 5.8e7),
    ("-120 deg", "angle", None, -120.0),
    ("25kHz", "frequency", None, 25e3),
    ("3 m**-1 * 2 m", "dimensionless", None, 6.0),
    ("4", "length", "mm", 4.0),
    ("+gap", "length", "mm", 6.0),
])
def test_evaluates(text, kind, unit, expected):
    value = evaluate(text, "k", PARAMS)
    assert to_unit(value, kind, "k", unit) == pytest.approx(expected, rel=1e-12)


def test_numbers_pass_through():
    assert evaluate(3, "k") == 3.0
    assert evaluate(2.5, "k") == 2.5


def test_parameter_names_win_over_units():
    # 'm' is a parameter here, so "3 mm*m" is (3 mm) times the parameter m = 2
    assert evaluate("3 mm*m", "k", {**PARAMS, "m": 2.0}).to("mm").magnitude == pytest.approx(6.0)
    # without the parameter, 'm' continues the unit: 3 mm*m is 3e-3 m^2
    assert evaluate("3 mm*m", "k", {}).to("m**2").magnitude == pytest.approx(3e-3)
    # a parameter right after a number is not a unit (and juxtaposition is not a product)
    with pytest.raises(CaseError, match=r"2\*turns"):
        evaluate("2 turns", "k", PARAMS)


def test_prepare_makes_literals():
    source, literals = prepare("20 mm + gap", "k", {"gap"})
    assert source == "_q0 + gap"
    assert literals["_q0"] == Quantity(20, "mm")


def test_names_lists_parameters_only():
    assert names("sqrt(2)*i_peak + 3 kA + pi*x", "k", {"i_peak"}) == {"i_peak", "x"}


@pytest.mark.parametrize("text, fragment", [
    ("__import__('os')", "_"),
    ("open('x')", "calling 'open'"),
    ("eval('1')", "calling 'eval'"),
    ("gap.real", "attribute access"),
    ("gap[0]", "subscripts"),
    ("lambda: 1", "lambda"),
    ("[x for x in y]", "comprehensions"),
    ("'text'", "text strings"),
    ("1 if gap else 2", "if"),
    ("gap > 1", "comparisons"),
    ("(1, 2)", "tuples"),
    ("1j", "not allowed"),
    ("True", "not allowed"),
    ("sqrt(4, 2)", "one argument"),
    ("sqrt(x=4)", "one argument"),
    ("sqrt", "function"),
    ("7 % 2", "cannot read"),
    ("1 // 2", "operator"),
    ("~1", "unary"),
    ("undefined_name + 1", "unknown name"),
    ("20 + gap", "cannot add"),
    ("gap + 1 kHz", "cannot add"),
    ("sin(gap)", "angle"),
    ("log(0)", "log"),
    ("sqrt(-1)", "negative"),
    ("1/0", "division by zero"),
    ("10.0**10**10", "too large"),
    ("(1 + 2", "cannot read"),
    ("2 furlongz", "neither a parameter nor a known unit"),
    ("gap ** gap", "exponent"),
    ("", "empty"),
    ("x" * 2000, "longer than"),
])
def test_rejects(text, fragment):
    with pytest.raises(CaseError) as info:
        evaluate(text, "region[3].size[1]", PARAMS)
    assert info.value.key == "region[3].size[1]"
    assert fragment in info.value.message


@pytest.mark.parametrize("value", [[1, 2], {"a": 1}, True, None])
def test_rejects_other_types(value):
    with pytest.raises(CaseError):
        evaluate(value, "k", PARAMS)


def test_no_builtins_reachable():
    # attribute chains used to escape sandboxes never get evaluated
    for text in ("().__class__.__bases__[0].__subclasses__()", "(1).__class__",
                 "sqrt.__globals__", "pi.real"):
        with pytest.raises(CaseError):
            evaluate(text, "k", PARAMS)


def test_parameters_resolve_in_any_order():
    from whorl.cases.parameters import resolve, si_values

    params = resolve({"pitch": "tube + 1.5 mm", "tube": "8 mm", "n": 8, "f": "3 kHz"})
    assert params["pitch"].to("mm").magnitude == pytest.approx(9.5)
    assert list(params) == ["pitch", "tube", "n", "f"]
    assert si_values(params) == pytest.approx({"pitch": 0.0095, "tube": 0.008, "n": 8.0,
                                               "f": 3000.0})


@pytest.mark.parametrize("table, overrides, key, fragment", [
    ({"a": "b + 1", "b": "c*2", "c": "a"}, {}, "parameters.a", "a -> b -> c -> a"),
    ({"a": "a + 1"}, {}, "parameters.a", "a -> a"),
    ({"a": "zz + 1"}, {}, "parameters.a", "unknown name 'zz'"),
    ({"pi": 3}, {}, "parameters.pi", "reserved"),
    ({"2x": 3}, {}, "parameters.2x", "not a valid parameter name"),
    ({"a": 1}, {"b": "2"}, "--set b", "no parameter 'b'"),
    ({"a": 1}, {"a": "open('x')"}, "--set a", "calling 'open'"),
])
def test_parameter_errors(table, overrides, key, fragment):
    from whorl.cases.parameters import resolve

    with pytest.raises(CaseError) as info:
        resolve(table, overrides)
    assert info.value.key == key
    assert fragment in info.value.message


def test_override_bare_number_takes_file_unit():
    from whorl.cases.parameters import resolve

    params = resolve({"gap": "6 mm", "x": "2*gap"}, {"gap": "4"})
    assert params["gap"].to("mm").magnitude == pytest.approx(4)
    assert params["x"].to("mm").magnitude == pytest.approx(8)
