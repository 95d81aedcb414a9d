"""Material properties that may be tables over temperature.

A property is a value (``"45 W/(m*K)"``) or a table
``{ temperature = ["20 degC", "800 degC"], value = ["6.2 MS/m", "0.88 MS/m"] }``
with as many values as temperatures, temperatures strictly increasing and not
below absolute zero (``degC``, ``K``, ``degF``; a bare number is kelvin).
"""

from __future__ import annotations

from whorl.cases.reader import MISSING, Table
from whorl.solver.tables import PropertyTable


def temperature(table: Table, name: str, default=MISSING) -> float:
    """A temperature in K, not below absolute zero."""
    value = table.value(name, "temperature", default)
    if value is not None and value < 0:
        raise table.error(name, f"below absolute zero ({value - 273.15:g} degC)")
    return value


def property_value(table: Table, name: str, kind: str, default=MISSING, minimum=None,
                   maximum=None, strict: bool = False):
    """A float or a :class:`PropertyTable` at ``table[name]`` (SI).

    ``minimum``/``maximum`` bound every value (``strict``: the minimum is excluded).
    """
    if name not in table.data:
        if default is MISSING:
            table.raw(name)  # raises "required"
        return default
    raw = table.raw(name)
    if not isinstance(raw, dict):
        value = table.value(name, kind)
        _check(table, name, value, minimum, maximum, strict)
        return value
    sub = table.table(name)
    sub.allow({"temperature", "value"}, required=("temperature", "value"))
    temps, values = sub.raw("temperature"), sub.raw("value")
    if not isinstance(temps, list) or not temps:
        raise sub.error("temperature", "expected a list of temperatures")
    if not isinstance(values, list) or len(values) != len(temps):
        raise sub.error("value", f"expected a list of {len(temps)} values, one per "
                                 "temperature")
    t_k, v = [], []
    for i, raw_t in enumerate(temps, start=1):
        key = f"{sub.key('temperature')}[{i}]"
        t = sub.convert(raw_t, key, "temperature", False, "temperature")
        if t < 0:
            raise sub.error(f"temperature[{i}]", f"below absolute zero ({t - 273.15:g} degC)")
        if t_k and t <= t_k[-1]:
            raise sub.error(f"temperature[{i}]", "temperatures must increase strictly")
        t_k.append(t)
    for i, raw_v in enumerate(values, start=1):
        value = sub.convert(raw_v, f"{sub.key('value')}[{i}]", kind, False, "value")
        _check(sub, f"value[{i}]", value, minimum, maximum, strict)
        v.append(value)
    return PropertyTable(tuple(t_k), tuple(v))


def _check(table, name, value, minimum, maximum, strict):
    if minimum is not None and (value < minimum or (strict and value == minimum)):
        raise table.error(name, f"must be {'>' if strict else '>='} {minimum:g}, got {value:g}")
    if maximum is not None and value > maximum:
        raise table.error(name, f"must be <= {maximum:g}, got {value:g}")
