"""The ``[study]`` table."""

from __future__ import annotations

from whorl.cases.reader import Table
from whorl.cases.spec import StudySpec
from whorl.cases.values import value_list

KINDS = ("harmonic", "static", "transient")
SCHEMES = ("bdf2", "implicit-euler")
_KEYS = {"harmonic": {"frequency"}, "static": set(),
         "transient": {"end", "step", "scheme", "save_every"}}


def read_study(table: Table) -> StudySpec:
    """``kind`` harmonic (``frequency``: a value or a list, Hz), static (0 Hz) or
    transient (``end``, ``step`` in s, ``scheme``, ``save_every``)."""
    kind = table.string("kind", choices=KINDS)
    for key in table.data:
        for other, keys in _KEYS.items():
            if key in keys and other != kind:
                raise table.error(key, f"{key!r} does not belong to a {kind} study")
    table.allow({"kind"} | _KEYS[kind], required=tuple(sorted(_KEYS[kind] - {"scheme",
                                                                             "save_every"})))
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
        return StudySpec("harmonic", freqs)
    end = table.positive("end", "time")
    step = table.positive("step", "time")
    if step > end:
        raise table.error("step", f"the time step ({step:g} s) is longer than the end "
                                  f"time ({end:g} s)")
    scheme = table.string("scheme", "bdf2", SCHEMES)
    save_every = table.integer("save_every", 10, minimum=1)
    return StudySpec("transient", (), end, step, scheme, save_every)
