"""The ``[material.NAME]`` tables and the built-in library."""

from __future__ import annotations

from whorl.cases.errors import CaseError
from whorl.cases.reader import Context, Table
from whorl.solver.materials import BUILTIN, Material


def read_materials(ctx: Context, raw) -> dict[str, Material]:
    """Materials defined in the case file, by name.

    Each table takes ``conductivity`` (S/m, >= 0) or ``resistivity`` (ohm*m,
    > 0) but not both (default: non-conducting), ``relative_permeability``
    (> 0, default 1) and an optional ``source`` text saying where the values
    come from. A case material may reuse a built-in name; the case's wins.
    """
    if raw is None:
        return {}
    if not isinstance(raw, dict):
        raise CaseError("material", "expected [material.NAME] tables",
                        ctx.index.find(("", 0), "material"))
    out = {}
    for name, data in raw.items():
        table = Table(ctx, data, f"material.{name}", (f"material.{name}", 0))
        table.allow({"conductivity", "resistivity", "relative_permeability", "source"})
        if table.has("conductivity") and table.has("resistivity"):
            raise table.error("resistivity", "give conductivity or resistivity, not both")
        if table.has("resistivity"):
            conductivity = 1.0 / table.positive("resistivity", "resistivity")
        else:
            conductivity = table.positive("conductivity", "conductivity", 0.0, zero=True)
        mu_r = table.positive("relative_permeability", "dimensionless", 1.0)
        source = table.string("source", "defined in the case file")
        out[name] = Material(name, conductivity, mu_r, source)
    return out


def lookup(name: str, defined: dict[str, Material], table: Table, key: str) -> Material:
    """The material ``name``: defined in the case, else built in; else an error at ``key``."""
    if name in defined:
        return defined[name]
    if name in BUILTIN:
        return BUILTIN[name]
    known = sorted(set(defined) | set(BUILTIN))
    raise table.error(key, f"unknown material {name!r}: define [material.{name}] or use a "
                           f"built-in one ({', '.join(known)})")
