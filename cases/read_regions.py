"""The ``[[region]]`` tables: shapes, repeats and names (length unit throughout)."""

from __future__ import annotations

from dataclasses import dataclass

from whorl.cases.errors import CaseError
from whorl.cases.limits import MAX_REPEAT, check_count
from whorl.cases.names import MAX_NAME, valid_name
from whorl.cases.read_drawing import DRAWING_KEYS, read_drawn
from whorl.cases.read_shapes import REQUIRED, SHAPE_KEYS, read_shape
from whorl.cases.reader import Context, Table, array_of_tables
from whorl.meshes.geometry import RegionSpec
from whorl.meshes.shapes import shifted

RESERVED = ("domain",)
COMMON = {"name", "material", "shape", "mesh_size", "repeat", "subtract"}


@dataclass(frozen=True)
class RegionEntry:
    """A region as read: its spec, material name and the table it came from."""

    spec: RegionSpec
    material: str
    table: Table


def read_regions(ctx: Context, document: dict) -> list[RegionEntry]:
    """Every region, repeats expanded (``NAME.1 ... NAME.n``), in file order."""
    entries: list[RegionEntry] = []
    seen: dict[str, str] = {}
    tables = array_of_tables(ctx, document, "region")
    if not tables:
        raise CaseError("region", "the model has no regions: add at least one [[region]]")
    for table in tables:
        for entry in _read_one(ctx, table):
            name = entry.spec.name
            if name in seen:
                raise table.error("name", f"region name {name!r} is used twice "
                                          f"(also by {seen[name]})")
            seen[name] = table.path
            entries.append(entry)
    return entries


def _read_one(ctx: Context, table: Table) -> list[RegionEntry]:
    keys = {**SHAPE_KEYS, "drawing": DRAWING_KEYS}
    shape_name = table.string("shape", choices=tuple(keys))
    extra = keys[shape_name]
    others = set().union(*keys.values()) - extra
    for key in table.data:
        if key in others:
            raise table.error(key, f"{key!r} does not belong to a {shape_name} (it takes "
                                   f"{', '.join(sorted(extra))})")
    required = REQUIRED.get(shape_name, ("file", "layer"))
    table.allow(COMMON | extra, required=("name", "material") + required)
    name = table.string("name")
    if not valid_name(name) or name in RESERVED:
        raise table.error("name", f"{name!r} is not a valid region name: use letters, digits, "
                                  f"-, _ and . (and not 'domain'), at most {MAX_NAME} "
                                  "characters")
    material = table.string("material")
    mesh_size = table.positive("mesh_size", "length", None, geometry=True)
    if shape_name == "drawing":
        if table.has("subtract"):
            raise table.error("subtract", "a drawing's holes are drawn on its layer (closed "
                                          "curves inside the outline)")
        drawn = read_drawn(table, ctx.axisymmetric)
        named = [(name, drawn[0])] if len(drawn) == 1 else [
            (f"{name}.{k + 1}", s) for k, s in enumerate(drawn)]
    else:
        named = [(name, read_shape(table, shape_name, ctx.axisymmetric))]
    if not table.has("repeat"):
        copies = named
    else:
        if len(named) > 1:
            raise table.error("repeat", f"the drawing holds {len(named)} outlines: repeat "
                                        "works on a drawing of one outline")
        count, step = _repeat(table)
        copies = [(f"{name}.{k + 1}", shifted(named[0][1], k * step[0], k * step[1]))
                  for k in range(count)]
    out = []
    for copy_name, copy_shape in copies:
        if ctx.axisymmetric and copy_shape.bbox()[0] < -1e-12 * _extent(copy_shape):
            raise table.error(None, f"region {copy_name!r} reaches r = "
                                    f"{copy_shape.bbox()[0]:g} {ctx.length_unit} < 0: in an "
                                    "axisymmetric model every region lies at r >= 0")
        out.append(RegionEntry(RegionSpec(copy_name, copy_shape, mesh_size), material, table))
    return out


def _extent(shape) -> float:
    x0, y0, x1, y1 = shape.bbox()
    return max(abs(x0), abs(x1), abs(y0), abs(y1), x1 - x0, y1 - y0)


def _repeat(table: Table) -> tuple[int, tuple[float, float]]:
    rep = table.table("repeat")
    rep.allow({"count", "step"}, required=("count", "step"))
    check_count(rep, "count", rep.value("count", "dimensionless"), MAX_REPEAT, "copies")
    count = rep.integer("count", minimum=1)
    step = rep.point("step")
    if count > 1 and step[0] == 0 and step[1] == 0:
        raise rep.error("step", "the step is zero: every copy would lie on the first")
    return count, step


def expand(patterns: list[str], regions: list[str], table: Table, key: str) -> tuple[str, ...]:
    """Region names from a list that may use a trailing ``*`` (``"turn.*"``).

    Every entry must match at least one region; duplicates are dropped.
    """
    out: list[str] = []
    for i, pattern in enumerate(patterns, start=1):
        if "*" in pattern[:-1] or "?" in pattern or "[" in pattern:
            raise table.error(f"{key}[{i}]", f"{pattern!r}: only a trailing '*' is allowed")
        matches = ([r for r in regions if r.startswith(pattern[:-1])] if pattern.endswith("*")
                   else [pattern] if pattern in regions else [])
        if not matches:
            raise table.error(f"{key}[{i}]", f"no region matches {pattern!r} (regions: "
                                             f"{_listing(regions)})")
        out.extend(m for m in matches if m not in out)
    return tuple(out)


def _listing(names: list[str]) -> str:
    return ", ".join(names) if len(names) <= 12 else ", ".join(names[:12]) + ", ..."
