"""Quantities in case files: pint reads them, each key checks its dimension."""

import math

import pytest

from whorl.cases.errors import CaseError
from whorl.cases.units import (
    KINDS,
    UREG,
    Quantity,
    length_unit_metres,
    parse_quantity,
    quantity_text,
    to_si,
    to_unit,
)


@pytest.mark.parametrize("text, kind, expected", [
    ("25 kHz", "frequency", 25e3),
    ("12 mm", "length", 0.012),
    ("1.2 kA", "current", 1200.0),
    ("58 MS/m", "conductivity", 5.8e7),
    ("1.72e-8 ohm*m", "resistivity", 1.72e-8),
    ("-120 deg", "angle", -120.0),
    ("10 mT", "flux_density", 0.01),
    ("8 mm", "length", 0.008),
    ("50 us", "time", 5e-5),
    ("0.8 ohm", "resistance", 0.8),
    ("120 V", "voltage", 120.0),
    ("2.2 uF", "capacitance", 2.2e-6),
    ("1e-3 Wb/m", "potential", 1e-3),
    ("8", "dimensionless", 8.0),
    ("5 %", "dimensionless", 0.05),
])
def test_examples_in_si(text, kind, expected):
    assert parse_quantity(text, "k", kind) == pytest.approx(expected, rel=1e-12)


def test_siemens_and_second_are_told_apart():
    assert Quantity("1 S").to("A/V").magnitude == pytest.approx(1.0)
    assert Quantity("1 s").check("[time]")
    assert Quantity("58 MS/m").to("S/m").magnitude == pytest.approx(5.8e7)


def test_geometry_in_length_unit():
    assert parse_quantity("12 mm", "region[1].radius", "length", "mm") == pytest.approx(12)
    assert parse_quantity("1 in", "k", "length", "mm") == pytest.approx(25.4)


def test_bare_number_takes_the_key_unit():
    assert to_unit(3.0, "length", "k", "mm") == 3.0
    assert to_unit(3, "frequency", "k") == 3.0
    assert to_unit(Quantity(3, "mm") / Quantity(1, "mm"), "length", "k", "mm") == 3.0


def test_angle_in_radians_converts_to_degrees():
    assert to_unit(Quantity(math.pi, "rad"), "angle", "phase") == pytest.approx(180.0)


@pytest.mark.parametrize("text, kind", [
    ("25 kHz", "length"), ("12 mm", "frequency"), ("1.2 kA", "voltage"),
    ("58 MS/m", "resistivity"), ("10 mT", "current"), ("3 mm", "dimensionless"),
    ("-120 deg", "length"),
])
def test_wrong_dimension_names_the_key(text, kind):
    with pytest.raises(CaseError) as info:
        parse_quantity(text, "source.coil.current", kind)
    assert info.value.key == "source.coil.current"
    assert KINDS[kind].label in info.value.message or "plain number" in info.value.message


def test_unreadable_quantity():
    with pytest.raises(CaseError, match="cannot read"):
        parse_quantity("12 zorkmids", "k", "length")


def test_length_unit():
    assert length_unit_metres("mm") == pytest.approx(1e-3)
    assert length_unit_metres("cm") == pytest.approx(1e-2)
    with pytest.raises(CaseError, match="not a unit of length"):
        length_unit_metres("kHz")
    with pytest.raises(CaseError, match="unknown length unit"):
        length_unit_metres("parsec-ish")


def test_to_si():
    assert to_si(Quantity("3 kHz")) == pytest.approx(3000.0)
    assert to_si(Quantity("58 MS/m")) == pytest.approx(5.8e7)
    assert to_si(4) == 4.0


@pytest.mark.parametrize("unit", ["1/s", "kHz", "ohm*m", "MS/m", "mm**2", "deg"])
def test_quantity_text_round_trip(unit):
    from whorl.cases.expressions import evaluate

    q = Quantity(2.5, UREG.parse_units(unit))
    back = evaluate(quantity_text(2.5, q.units), "k")
    assert back.to(q.units).magnitude == pytest.approx(2.5)


def test_non_finite_rejected():
    with pytest.raises(CaseError, match="not finite"):
        to_unit(float("inf"), "length", "k")


def test_parse_set_args():
    from whorl.cases.parameters import parse_set_args

    assert parse_set_args(["freq=10 kHz", "coil_gap=4", "tube='9 mm'"]) == {
        "freq": "10 kHz", "coil_gap": "4", "tube": "9 mm"}
    with pytest.raises(CaseError) as info:
        parse_set_args(["freq"])
    assert info.value.key == "--set"


def test_wrong_dimension_message_reads_well():
    with pytest.raises(CaseError, match="expected an angle"):
        parse_quantity("3 mm", "source.coil.phase", "angle")
