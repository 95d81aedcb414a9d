"""The heated regions of a heating study: resolved and checked."""

from __future__ import annotations

from dataclasses import replace

from whorl.cases.errors import CaseError
from whorl.cases.read_regions import expand
from whorl.cases.reader import Context, Table


def resolve_heated(ctx: Context, table: Table, study, regions: list[str], region_material,
                   materials: dict, sources, defined: dict):
    """``study`` with ``heating.heated`` resolved: the listed regions (a trailing ``*``
    allowed) or, by default, every conductor in no source.

    Every heated region must conduct and its material must give thermal
    conductivity, density and specific heat (errors name the key path).
    """
    spec = study.heating
    fed = {r for s in sources for r in (*getattr(s, "regions", ()),
                                        *getattr(s, "return_regions", ()))}
    if spec.heated is None:
        heated = tuple(r for r in regions
                       if materials[region_material[r]].conductivity > 0 and r not in fed)
        if not heated:
            raise table.error("kind", "a heating study needs a conductor to heat: no "
                                      "conducting region outside the sources (list them in "
                                      "heated)")
    else:
        heated = tuple(expand(list(spec.heated), regions, table, "heated"))
    for i, name in enumerate(heated, start=1):
        material = materials[region_material[name]]
        key = f"heated[{i}]" if spec.heated is not None else "kind"
        if material.conductivity <= 0 and material.conductivity_table is None:
            raise table.error(key, f"region {name!r} is not a conductor (material "
                                   f"{material.name!r} has no conductivity): only "
                                   "conductors are heated by induction")
        missing = material.thermal_missing
        if missing:
            where = (f"material.{material.name}" if material.name in defined
                     else table.key(key))
            raise CaseError(where, f"heated region {name!r}: material {material.name!r} "
                                   f"lacks {', '.join(missing)} (needed by the heat equation)",
                            ctx.index.find((f"material.{material.name}", 0))
                            if material.name in defined else table.line(key))
    return replace(study, heating=replace(spec, heated=heated))
