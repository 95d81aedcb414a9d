"""The ``[[loop]]``, ``[[line]]``, ``[[point]]`` and ``[output]`` tables (length unit)."""

from __future__ import annotations

from pathlib import Path

from whorl.cases.limits import MAX_SAMPLES, check_count
from whorl.cases.names import checked_name
from whorl.cases.read_domain import contains
from whorl.cases.reader import Context, Table, array_of_tables
from whorl.cases.spec import LineSpec, LoopSpec, OutputSpec, PointSpec


def _named(ctx: Context, document: dict, kind: str):
    """Tables of ``[[kind]]`` with a unique ``name`` each."""
    seen = set()
    for table in array_of_tables(ctx, document, kind):
        name = checked_name(table, "name", kind)
        if name in seen:
            raise table.error("name", f"{kind} name {name!r} is used twice")
        seen.add(name)
        yield name, table


def _inside(ctx: Context, table: Table, key: str, xy, domain) -> None:
    if not contains(domain, *xy):
        raise table.error(key, f"({xy[0]:g}, {xy[1]:g}) lies outside the domain")
    if ctx.axisymmetric and xy[0] < 0:
        raise table.error(key, f"r = {xy[0]:g} < 0 in an axisymmetric model")


def read_loops(ctx: Context, document: dict, domain) -> tuple[LoopSpec, ...]:
    """Axisymmetric loops take ``at = [r, z]`` (r > 0); planar loops take ``from`` and
    ``to``, the two long sides of a loop of length ``model.depth``. ``turns`` default 1;
    ``velocity`` (m/s, optional) makes a moving loop."""
    loops = []
    for name, table in _named(ctx, document, "loop"):
        if ctx.axisymmetric:
            table.allow({"name", "at", "turns", "velocity"}, required=("name", "at"),
                        hint=" (axisymmetric loops are circles through 'at')")
            at = table.point("at")
            _inside(ctx, table, "at", at, domain)
            if at[0] <= 0:
                raise table.error("at", "a loop on the axis (r = 0) encloses no flux")
            start = end = None
        else:
            table.allow({"name", "from", "to", "turns", "velocity"},
                        required=("name", "from", "to"),
                        hint=" (planar loops run along z through 'from' and 'to')")
            at = None
            start, end = table.point("from"), table.point("to")
            for key, xy in (("from", start), ("to", end)):
                _inside(ctx, table, key, xy, domain)
            if start == end:
                raise table.error("to", "from and to are the same point")
        turns = table.value("turns", "dimensionless", 1.0)
        if turns == 0:
            raise table.error("turns", "turns must not be 0")
        velocity = table.vector("velocity", "velocity", 2, geometry=False, default=None)
        loops.append(LoopSpec(name, turns, at, start, end, velocity))
    return tuple(loops)


def read_lines(ctx: Context, document: dict, domain) -> tuple[LineSpec, ...]:
    """Lines ``from`` -> ``to`` sampled at ``samples`` points (default 101, >= 2)."""
    lines = []
    for name, table in _named(ctx, document, "line"):
        table.allow({"name", "from", "to", "samples"}, required=("name", "from", "to"))
        start, end = table.point("from"), table.point("to")
        for key, xy in (("from", start), ("to", end)):
            _inside(ctx, table, key, xy, domain)
        if start == end:
            raise table.error("to", "from and to are the same point")
        if table.has("samples"):
            check_count(table, "samples", table.value("samples", "dimensionless"),
                        MAX_SAMPLES, "samples")
        lines.append(LineSpec(name, start, end, table.integer("samples", 101, minimum=2)))
    return tuple(lines)


def read_points(ctx: Context, document: dict, domain) -> tuple[PointSpec, ...]:
    """Probe points ``at = [x, y]``."""
    points = []
    for name, table in _named(ctx, document, "point"):
        table.allow({"name", "at"}, required=("name", "at"))
        at = table.point("at")
        _inside(ctx, table, "at", at, domain)
        points.append(PointSpec(name, at))
    return tuple(points)


def read_output(table: Table | None) -> OutputSpec:
    """``folder`` (default ``results``, kept as written: the runner takes it relative
    to the case file's folder unless absolute), ``fields`` and ``plots`` (default false)."""
    if table is None:
        return OutputSpec()
    table.allow({"folder", "fields", "plots"})
    text = table.string("folder", "results")
    if not text.strip():
        raise table.error("folder", "the folder name is empty")
    if "\0" in text:
        raise table.error("folder", "the folder name holds a NUL character, which no file "
                                    "system accepts")
    return OutputSpec(Path(text), table.boolean("fields", False), table.boolean("plots", False))
