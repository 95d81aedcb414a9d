"""The ``[study]`` table."""

from __future__ import annotations

from whorl.cases.limits import MAX_STEPS, check_count
from whorl.cases.reader import Table
from whorl.cases.spec import StudySpec
from whorl.cases.values import value_list

KINDS = ("harmonic", "static", "transient")
SCHEMES = ("bdf2", "implicit-euler")
REDUCED = ("auto", "on", "off")
TANK = ("parallel", "series")
_KEYS = {"harmonic": {"frequency", "reduced", "reduced_tolerance", "tank_capacitance",
                      "tank_connection"}, "static": set(),
         "transient": {"end", "step", "scheme", "save_every"}}


def read_study(table: Table) -> StudySpec:
    """``kind`` harmonic (``frequency``: a value or a list, Hz; ``reduced``,
    ``reduced_tolerance``: the reduced-order sweep; ``tank_capacitance``,
    ``tank_connection``: resonance with a tank capacitor), static (0 Hz) or
    transient (``end``, ``step`` in s, ``scheme``, ``save_every``)."""
    kind = table.string("kind", choices=KINDS)
    for key in table.data:
        for other, keys in _KEYS.items():
            if key in keys and other != kind:
                raise table.error(key, f"{key!r} does not belong to a {kind} study")
    optional = {"scheme", "save_every", "reduced", "reduced_tolerance", "tank_capacitance",
                "tank_connection"}
    table.allow({"kind"} | _KEYS[kind], required=tuple(sorted(_KEYS[kind] - optional)))
    if kind == "static":
        return StudySpec("static", (0.0,))
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
