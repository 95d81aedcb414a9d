"""The heating keys of ``[[source]]``: ``power``, ``max_current``, ``max_voltage``, ``on``."""

from __future__ import annotations

import math

from whorl.cases.reader import Context, Table, array_of_tables
from whorl.solver.supply import Supply


def read_window(table: Table, name: str, start_key: str = "from",
                end_key: str = "until") -> tuple[float, float]:
    """A time window ``[start, end]`` as a two-item list at ``table[name]`` (s)."""
    raw = table.raw(name)
    if not isinstance(raw, list) or len(raw) != 2:
        raise table.error(name, f"expected [start, end] times, got {raw!r}")
    start, end = table.vector(name, "time", 2, geometry=False)
    check_window(table, name, start, end)
    return start, end


def check_window(table: Table, name: str, start: float, end: float) -> None:
    if start < 0:
        raise table.error(name, f"a window starts at t >= 0, got {start:g} s")
    if end <= start:
        raise table.error(name, f"the window ends ({end:g} s) before it starts ({start:g} s)")


def read_supplies(ctx: Context, document: dict) -> dict[str, Supply]:
    """Supply of every stranded or massive source of a heating study, by name."""
    out = {}
    for raw in array_of_tables(ctx, document, "source"):
        name = raw.data.get("name")
        if raw.data.get("kind") == "applied-field":
            continue
        table = Table(ctx, raw.data, f"source.{name}", raw.block)
        power = table.positive("power", "power", None)
        max_i = table.positive("max_current", "current", None)
        max_v = table.positive("max_voltage", "voltage", None)
        on = read_window(table, "on") if table.has("on") else (0.0, math.inf)
        out[name] = Supply(name, power, max_i, max_v, on)
    return out
