"""The ``[material.NAME]`` tables and the built-in library."""

from __future__ import annotations

from whorl.cases.errors import CaseError
from whorl.cases.reader import Context, Table
from whorl.solver.materials import BUILTIN, Material

#: Largest conductivity accepted, S/m: above any metal (silver 6.3e7 S/m at 20 degC,
#: CRC Handbook of Chemistry and Physics), with room for cryogenic pure metals.
MAX_CONDUCTIVITY = 1e10
#: Relative permeability range accepted: diamagnets lie just below 1; the highest
#: permeability alloys reach about 1e6 (common practice; value from memory).
MIN_PERMEABILITY, MAX_PERMEABILITY = 1e-3, 1e7


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
            key = "resistivity"
            conductivity = 1.0 / table.positive("resistivity", "resistivity")
        else:
            key = "conductivity"
            conductivity = table.positive("conductivity", "conductivity", 0.0, zero=True)
        if not conductivity <= MAX_CONDUCTIVITY:  # also catches inf and nan
            raise table.error(key, f"gives a conductivity of {conductivity:.3g} S/m, beyond "
                                   f"the physical range (at most {MAX_CONDUCTIVITY:g} S/m; "
                                   "silver, the best conductor at room temperature, has "
                                   "6.3e7 S/m)")
        mu_r = table.positive("relative_permeability", "dimensionless", 1.0)
        if not MIN_PERMEABILITY <= mu_r <= MAX_PERMEABILITY:
            raise table.error("relative_permeability", f"{mu_r:g} is beyond the physical "
                                                       f"range ({MIN_PERMEABILITY:g} to "
                                                       f"{MAX_PERMEABILITY:g})")
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
