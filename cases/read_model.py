"""The ``[case]``, ``[model]`` and ``[mesh]`` tables."""

from __future__ import annotations

from dataclasses import dataclass

from whorl.cases.errors import CaseError
from whorl.cases.names import MAX_NAME, SLUG, valid_name
from whorl.cases.reader import Table
from whorl.cases.units import length_unit_metres
from whorl.meshes.geometry import MeshOptions
from whorl.solver import linalg

GEOMETRIES = ("planar", "axisymmetric")


@dataclass(frozen=True)
class CaseInfo:
    name: str
    title: str
    notes: str


@dataclass(frozen=True)
class ModelInfo:
    """``geometry`` kind, ``length_unit`` and ``unit_m`` (metres per unit),
    ``depth_m`` (planar out-of-plane length in m; 1.0 for axisymmetric models)
    and the element ``order``."""

    geometry: str
    length_unit: str
    unit_m: float
    depth_m: float
    order: int
    solver: str = "auto"
    temperature_k: float = 293.15  # where non-heating studies take table values

    @property
    def axisymmetric(self) -> bool:
        return self.geometry == "axisymmetric"


def read_case(table: Table, default_name: str) -> CaseInfo:
    """``[case]``: ``name`` (a slug; default the file's stem), ``title``, ``notes``."""
    table.allow({"name", "title", "notes"})
    name = table.string("name", default_name)
    if not valid_name(name, SLUG):
        raise table.error("name", f"{name!r} is not a valid case name: use letters, digits, "
                                  f"- and _, at most {MAX_NAME} characters (it names the "
                                  "output folder)")
    return CaseInfo(name, table.string("title", name), table.string("notes", ""))


def read_model(table: Table) -> ModelInfo:
    """``[model]``: ``geometry`` (default planar), ``length_unit`` (default mm),
    ``depth`` (planar only, SI metres when bare; default 1 m), ``order`` (1 or 2, default 2),
    ``solver`` (a linear solver backend by name, default ``"auto"``: the fastest installed),
    ``temperature`` (default 20 degC: where temperature tables are read outside heating
    studies).

    ``length_unit`` is read first so that ``depth`` may be written as an
    expression of parameters.
    """
    table.allow({"geometry", "length_unit", "depth", "order", "solver", "temperature"})
    geometry = table.string("geometry", "planar", GEOMETRIES)
    unit = table.string("length_unit", "mm")
    try:
        unit_m = length_unit_metres(unit, table.key("length_unit"))
    except CaseError as exc:
        raise table.relined(exc, "length_unit") from None
    if geometry == "axisymmetric" and table.has("depth"):
        raise table.error("depth", "depth applies to planar models only (axisymmetric "
                                   "totals are for the full 360 degrees)")
    depth = table.positive("depth", "length", 1.0)
    order = table.integer("order", 2)
    if order not in (1, 2):
        raise table.error("order", f"the element order is 1 or 2, got {order}")
    known = ("auto", *linalg.BACKENDS)
    solver = table.string("solver", "auto")
    if solver not in known:
        raise table.error("solver", f"unknown linear solver {solver!r}; known: "
                                    f"{', '.join(known)}")
    temperature = table.value("temperature", "temperature", 293.15)
    if temperature < 0:
        raise table.error("temperature", f"below absolute zero ({temperature:g} K)")
    return ModelInfo(geometry, unit, unit_m, depth, order, solver, temperature)


def read_mesh(table: Table | None, order: int) -> MeshOptions:
    """Optional ``[mesh]``: ``per_skin_depth`` (elements per skin depth at conductor
    surfaces), ``growth`` (> 1), ``max_size`` (length unit), ``across`` (elements
    across a thin conductor, >= 1), ``curved`` (order 2: element edges follow curved
    boundaries; default true)."""
    if table is None:
        return MeshOptions(order=order)
    table.allow({"per_skin_depth", "growth", "max_size", "across", "curved"})
    per = table.positive("per_skin_depth", "dimensionless", None)
    growth = table.value("growth", "dimensionless", 1.25)
    if growth <= 1:
        raise table.error("growth", f"must be > 1 (the ratio of neighbouring element "
                                    f"sizes), got {growth:g}")
    max_size = table.positive("max_size", "length", None, geometry=True)
    across = table.integer("across", 3, minimum=1)
    curved = table.boolean("curved", True)
    return MeshOptions(order=order, per_skin_depth=per, growth=growth, max_size=max_size,
                       across=across, curved=curved)
