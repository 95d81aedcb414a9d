"""The ``[[surface]]`` tables of a heating study: heat leaving the heated regions.

Keys: ``regions`` (heated regions whose outer boundary it covers), ``convection``
(W/(m^2 K), default 0), ``ambient`` (default 20 degC), ``emissivity`` (0..1, a
table over temperature, or ``"material"`` for each region's own; default: no
radiation), ``from`` and ``until`` (its time window; default the whole run).
"""

from __future__ import annotations

import math

from whorl.cases.read_regions import expand
from whorl.cases.read_supply import check_window
from whorl.cases.read_tables import property_value, temperature
from whorl.cases.reader import Context, array_of_tables
from whorl.solver.heatstep import Surface

KEYS = {"regions", "convection", "ambient", "emissivity", "from", "until"}


def read_surfaces(ctx: Context, document: dict, regions: list[str], heated: tuple[str, ...],
                  materials: dict, heating: bool) -> tuple[Surface, ...]:
    """Every ``[[surface]]`` (heating studies only), checked against the heated regions.

    ``materials`` maps a region to its Material (for ``emissivity = "material"``).
    """
    tables = array_of_tables(ctx, document, "surface")
    if tables and not heating:
        raise tables[0].error("regions", "[[surface]] belongs to heating studies only "
                                         "([study] kind = \"heating\")")
    out = []
    for table in tables:
        table.allow(KEYS, required=("regions",))
        names = tuple(expand(table.names("regions"), regions, table, "regions"))
        for name in names:
            if name not in heated:
                raise table.error("regions", f"region {name!r} is not heated (heated: "
                                             f"{', '.join(heated)})")
        h = table.positive("convection", "heat_transfer", 0.0, zero=True)
        ambient = temperature(table, "ambient", 293.15)
        emissivity = None
        if table.has("emissivity"):
            if table.raw("emissivity") == "material":
                emissivity = "material"
                for name in names:
                    if materials[name].emissivity is None:
                        raise table.error("emissivity", f"the material of region {name!r} "
                                                        "has no emissivity")
            else:
                emissivity = property_value(table, "emissivity", "dimensionless",
                                            minimum=0.0, maximum=1.0)
        if h == 0 and emissivity is None:
            raise table.error("convection", "a surface needs convection, emissivity or both")
        start = table.value("from", "time", 0.0)
        end = table.value("until", "time", math.inf)
        check_window(table, "until" if table.has("until") else "from", start, end)
        out.append(Surface(names, h, ambient, emissivity, start, end))
    return tuple(out)
