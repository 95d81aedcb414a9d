"""The ``[study]`` table."""

from __future__ import annotations

from whorl.cases.limits import MAX_STEPS, check_count
from whorl.cases.read_tables import temperature
from whorl.cases.reader import Table
from whorl.cases.spec import HeatingSpec, StudySpec
from whorl.cases.values import value_list

KINDS = ("harmonic", "static", "transient", "heating")
SCHEMES = ("bdf2", "implicit-euler")
REDUCED = ("auto", "on", "off")
TANK = ("parallel", "series")
_KEYS = {"harmonic": {"frequency", "reduced", "reduced_tolerance", "tank_capacitance",
                      "tank_connection"}, "static": set(),
         "transient": {"end", "step", "scheme", "save_every"},
         "heating": {"frequency", "end", "step", "scheme", "initial_temperature", "heated",
                     "field_update", "hardening_temperature", "report_temperatures"}}
_OPTIONAL = {"scheme", "save_every", "reduced", "reduced_tolerance", "tank_capacitance",
             "tank_connection", "initial_temperature", "heated", "field_update",
             "hardening_temperature", "report_temperatures"}


def read_study(table: Table) -> StudySpec:
    """``kind`` harmonic (``frequency``: a value or a list, Hz; ``reduced``,
    ``reduced_tolerance``: the reduced-order sweep; ``tank_capacitance``,
    ``tank_connection``: resonance with a tank capacitor), static (0 Hz),
    transient (``end``, ``step`` in s, ``scheme``, ``save_every``) or heating (see
    :func:`_heating`)."""
    kind = table.string("kind", choices=KINDS)
    for key in table.data:
        for other, keys in _KEYS.items():
            if key in keys and other != kind and key not in _KEYS[kind]:
                raise table.error(key, f"{key!r} does not belong to a {kind} study")
    table.allow({"kind"} | _KEYS[kind], required=tuple(sorted(_KEYS[kind] - _OPTIONAL)))
    if kind == "static":
        return StudySpec("static", (0.0,))
    if kind == "heating":
        return _heating(table)
    if kind == "harmonic":
        raw = table.raw("frequency")
        if isinstance(raw, list | dict):
            items = value_list(table, "frequency")
            freqs = tuple(table.convert(v, key, "frequency", False, "frequency")
                          for key, v in items)
        else:
            freqs = (table.value("frequency", "frequency"),)
        for f in freqs:
            if f < 0:
                raise table.error("frequency", f"frequencies must be >= 0, got {f:g} Hz")
        reduced = table.string("reduced", "auto", REDUCED)
        tolerance = table.positive("reduced_tolerance", "dimensionless", 1e-6)
        if tolerance >= 0.1:
            raise table.error("reduced_tolerance", f"expected a relative tolerance below 0.1, "
                                                   f"got {tolerance:g}")
        tank = table.positive("tank_capacitance", "capacitance", None)
        connection = table.string("tank_connection", "parallel", TANK)
        return StudySpec("harmonic", freqs, reduced=reduced, reduced_tolerance=tolerance,
                         tank_capacitance=tank, tank_connection=connection)
    end = table.positive("end", "time")
    step = table.positive("step", "time")
    if step > end:
        raise table.error("step", f"the time step ({step:g} s) is longer than the end "
                                  f"time ({end:g} s)")
    check_count(table, "step", end / step, MAX_STEPS, "time steps (end / step)")
    scheme = table.string("scheme", "bdf2", SCHEMES)
    save_every = table.integer("save_every", 10, minimum=1)
    return StudySpec("transient", (), end, step, scheme, save_every)


def _heating(table: Table) -> StudySpec:
    """A heating study: one ``frequency``, ``end`` and ``step`` (the largest heat step),
    ``scheme``, ``initial_temperature`` (default 20 degC), ``heated`` (region names),
    ``field_update`` (default 20 K), ``hardening_temperature`` and ``report_temperatures``
    (a list: the time each point takes to reach each is reported)."""
    if isinstance(table.raw("frequency"), list | dict):
        raise table.error("frequency", "a heating study takes one frequency")
    f = table.positive("frequency", "frequency")
    end = table.positive("end", "time")
    step = table.positive("step", "time")
    if step > end:
        raise table.error("step", f"the time step ({step:g} s) is longer than the end "
                                  f"time ({end:g} s)")
    check_count(table, "step", end / step, MAX_STEPS, "heat steps (end / step)")
    scheme = table.string("scheme", "bdf2", SCHEMES)
    initial = temperature(table, "initial_temperature", 293.15)
    heated = tuple(table.names("heated")) if table.has("heated") else None
    update = table.positive("field_update", "temperature_change", 20.0)
    hardening = temperature(table, "hardening_temperature", None)
    reported = []
    if table.has("report_temperatures"):
        raw = table.raw("report_temperatures")
        if not isinstance(raw, list) or not raw:
            raise table.error("report_temperatures", "expected a list of temperatures")
        for i, item in enumerate(raw, start=1):
            t = table.convert(item, f"{table.key('report_temperatures')}[{i}]",
                              "temperature", False, "report_temperatures")
            if t < 0:
                raise table.error(f"report_temperatures[{i}]", "below absolute zero")
            reported.append(t)
    if hardening is not None and hardening not in reported:
        reported.append(hardening)
    spec = HeatingSpec(initial, heated, update, hardening, tuple(reported))
    return StudySpec("heating", (f,), end, step, scheme, 10, heating=spec)
