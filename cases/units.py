"""Physical quantities in case files: one unit registry and the dimension of each key.

A case-file value is a bare number or a quantity such as ``"25 kHz"``,
``"58 MS/m"`` or ``"-120 deg"``. Units are read by pint with its default
definitions, in which ``S`` is the siemens and ``s`` the second, so ``"58 MS/m"``
is 58 mega-siemens per metre and ``"50 us"`` fifty microseconds.

Every key expects one *kind* of quantity (see :data:`KINDS`). A value is
converted to that kind's unit: SI for everything except geometry, which is in
the model's length unit, and angles, which are in degrees. A bare number (or a
unitless result such as ``"(3 mm)/(1 mm)"``) is taken to be in the key's unit
already; a unit of the wrong dimension is a :class:`CaseError` naming the key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import pint

from whorl.cases.errors import CaseError

UREG = pint.UnitRegistry()
"""The one unit registry of whorl (pint defaults: ``S`` siemens, ``s`` second)."""

Quantity = UREG.Quantity


@dataclass(frozen=True)
class Kind:
    """What a key expects: a label for messages, its unit and an example."""

    label: str
    unit: str
    example: str


KINDS: dict[str, Kind] = {
    "length": Kind("length", "m", "12 mm"),
    "frequency": Kind("frequency", "Hz", "25 kHz"),
    "current": Kind("current", "A", "1.2 kA"),
    "voltage": Kind("voltage", "V", "120 V"),
    "conductivity": Kind("conductivity", "S/m", "58 MS/m"),
    "resistivity": Kind("resistivity", "ohm*m", "1.72e-8 ohm*m"),
    "resistance": Kind("resistance", "ohm", "0.8 ohm"),
    "flux_density": Kind("flux density", "T", "10 mT"),
    "field_strength": Kind("magnetic field strength", "A/m", "8 kA/m"),
    "angle": Kind("angle", "deg", "-120 deg"),
    "dimensionless": Kind("plain number", "", "8"),
    "time": Kind("time", "s", "50 us"),
    "capacitance": Kind("capacitance", "F", "2.2 uF"),
    "potential": Kind("vector potential", "Wb/m", "1e-3 Wb/m"),
    "temperature": Kind("temperature", "K", "850 degC"),
    "temperature_change": Kind("temperature change", "K", "20 K"),
    "thermal_conductivity": Kind("thermal conductivity", "W/(m*K)", "45 W/(m*K)"),
    "density": Kind("density", "kg/m**3", "7850 kg/m^3"),
    "specific_heat": Kind("specific heat", "J/(kg*K)", "460 J/(kg*K)"),
    "heat_transfer": Kind("heat transfer coefficient", "W/(m**2*K)", "15 W/(m^2*K)"),
    "power": Kind("power", "W", "60 kW"),
    "velocity": Kind("velocity", "m/s", "12 m/s"),
    "angular_velocity": Kind("angular velocity", "rad/s", "3000 rpm"),
}
"""Kinds of quantity a case-file key may expect, with the unit values are converted to.

Angles are kept in degrees (the case file's unit for ``phase``); every other
kind except geometry lengths is SI. Temperatures (``degC``, ``degF``, ``K``) are
converted to kelvin; a bare number is kelvin. A temperature *change* written in
``degC`` or ``degF`` is a difference (``"15 degC"`` is 15 K).
"""


def parse_quantity(text: str, key: str, kind: str, unit: str | None = None) -> float:
    """Read a plain quantity string such as ``"25 kHz"`` (no parameters) as a float.

    Parameters
    ----------
    text : str
        A number with an optional unit.
    key : str
        Key path for error messages.
    kind : str
        A key of :data:`KINDS`.
    unit : str, optional
        Unit of the result; default the kind's unit (SI, degrees for angles).

    Returns
    -------
    float
        The value in ``unit``.
    """
    from whorl.cases.expressions import evaluate  # expressions builds on this module

    return to_unit(evaluate(text, key, {}), kind, key, unit)


def length_unit_metres(text: str, key: str = "model.length_unit") -> float:
    """Metres per unit of a length unit name such as ``"mm"``; an error if not a length."""
    from whorl.cases.expressions import read_unit  # expressions builds on this module

    try:
        units = read_unit(text, key)
    except CaseError:
        raise CaseError(key, f"unknown length unit {text!r} (try 'mm', 'cm', 'm', 'in')") from None
    q = Quantity(1.0, units)
    if not q.check("[length]"):
        raise CaseError(key, f"{text!r} is not a unit of length")
    try:
        metres = float(q.to("m").magnitude)
    except (pint.errors.PintError, TypeError, ZeroDivisionError, OverflowError) as exc:
        raise CaseError(key, f"cannot use {text!r} as the length unit: {exc}") from None
    if not (math.isfinite(metres) and 1e-12 <= metres <= 1e6):
        raise CaseError(key, f"{text!r} is {metres:g} m: a length unit from 1 pm to 1000 km "
                             "is expected")
    return metres


def to_unit(value, kind: str, key: str, unit: str | None = None) -> float:
    """Convert a number or a pint quantity to a float in the unit of ``kind``.

    A bare number, or a quantity without units, is taken to be in ``unit``
    already. A quantity of the wrong dimension is a :class:`CaseError` naming
    ``key``.

    Parameters
    ----------
    value : float or pint.Quantity
    kind : str
        A key of :data:`KINDS`.
    key : str
        Key path for error messages.
    unit : str, optional
        Target unit; default the kind's unit (SI; degrees for angles). Geometry
        keys pass the model's length unit.
    """
    spec = KINDS[kind]
    target = spec.unit if unit is None else unit
    if isinstance(value, bool):
        raise CaseError(key, f"expected {_article(spec.label)} such as {spec.example!r}, "
                             f"got {value!r}")
    if isinstance(value, int | float):
        number = float(value)
    elif isinstance(value, Quantity) and kind == "temperature_change" and not value.unitless \
            and value.units in (UREG.degC, UREG.degF):
        number = float(value.magnitude) * (1.0 if value.units == UREG.degC else 5.0 / 9.0)
    elif isinstance(value, Quantity):
        number = _convert(value, kind, spec, target, key)
    else:
        raise CaseError(key, f"expected {_article(spec.label)} such as {spec.example!r}, "
                             f"got {value!r}")
    if not math.isfinite(number):
        raise CaseError(key, f"the value is not finite ({number})")
    return number


def _convert(q, kind: str, spec: Kind, target: str, key: str) -> float:
    try:
        if q.unitless:
            return float(q.to_root_units().magnitude)
        if kind == "dimensionless":
            if not q.dimensionless:
                raise CaseError(key, f"expected a plain number, got {describe(q)}")
            return float(q.to("dimensionless").magnitude)
        wanted = Quantity(1.0, target)
        if q.dimensionality != wanted.dimensionality:
            raise CaseError(key, f"expected {_article(spec.label)} such as {spec.example!r}, "
                                 f"got {describe(q)}")
        return float(q.to(target).magnitude)
    except pint.errors.PintError as exc:
        raise CaseError(key, f"cannot convert {describe(q)} to {target}: {exc}") from None


def _article(label: str) -> str:
    return f"{'an' if label[0] in 'aeiou' else 'a'} {label}"


def describe(q) -> str:
    """Short text of a quantity and its dimension for messages: ``'25 kHz' (1 / [time])``."""
    if not isinstance(q, Quantity):
        return f"{q!r} (a plain number)"
    dim = "dimensionless" if q.dimensionless else str(q.dimensionality)
    return f"'{q:~P}' ({dim})"


def to_si(value) -> float:
    """SI magnitude of a number or quantity (angles in radians, as pint's base units)."""
    if isinstance(value, Quantity):
        return float(value.to_base_units().magnitude)
    return float(value)


def is_unit(name: str) -> bool:
    """True if pint knows ``name`` as a unit (with or without prefix)."""
    try:
        UREG.parse_units(name)
    except (pint.errors.PintError, ValueError, TypeError, AttributeError, SyntaxError):
        return False
    return True


def quantity_text(magnitude: float, units) -> str:
    """A quantity as text that :mod:`whorl.cases.expressions` reads back exactly.

    Units are written as a product of powers (``"5.0 second**-1"``,
    ``"58.0 megasiemens*meter**-1"``), never with a leading ``1/``.
    """
    parts = [name if exp == 1 else f"{name}**{exp:g}" for name, exp in units._units.items()]
    return f"{magnitude!r} {'*'.join(parts)}" if parts else repr(magnitude)
