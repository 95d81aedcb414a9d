"""The ``[material.NAME]`` tables and the built-in library."""

from __future__ import annotations

from dataclasses import replace

from whorl.cases.errors import CaseError
from whorl.cases.read_bh import read_bh_curve
from whorl.cases.read_tables import property_value, temperature
from whorl.cases.reader import Context, Table
from whorl.solver.materials import BUILTIN, Material
from whorl.solver.tables import PropertyTable

THERMAL = {"thermal_conductivity": ("thermal_conductivity", 0.0, True, None),
           "density": ("density", 0.0, True, None),
           "specific_heat": ("specific_heat", 0.0, True, None),
           "emissivity": ("dimensionless", 0.0, False, 1.0)}
"""Thermal keys: (kind, minimum, minimum excluded, maximum)."""

#: Largest conductivity accepted, S/m: above any metal (silver 6.3e7 S/m at 20 degC,
#: CRC Handbook of Chemistry and Physics), with room for cryogenic pure metals.
MAX_CONDUCTIVITY = 1e10
#: Relative permeability range accepted: diamagnets lie just below 1; the highest
#: permeability alloys reach about 1e6 (common practice; value from memory).
MIN_PERMEABILITY, MAX_PERMEABILITY = 1e-3, 1e7


def at_model_temperature(material: Material, temperature_k: float) -> Material:
    """``material`` with its plain conductivity and permeability taken from its tables at
    ``temperature_k`` (what harmonic, static and transient studies use)."""
    changes = {}
    if material.conductivity_table is not None:
        changes["conductivity"] = material.conductivity_table(temperature_k)
    if material.permeability_table is not None:
        changes["relative_permeability"] = material.permeability_table(temperature_k)
    return replace(material, **changes) if changes else material


def read_materials(ctx: Context, raw, temperature_k: float = 293.15) -> dict[str, Material]:
    """Materials defined in the case file, by name.

    Each table takes ``conductivity`` (S/m, >= 0) or ``resistivity`` (ohm*m,
    > 0) but not both (default: non-conducting), ``relative_permeability``
    (> 0, default 1) and an optional ``source`` text saying where the values
    come from. A case material may reuse a built-in name; the case's wins.
    Any of these and the thermal keys (``thermal_conductivity``, ``density``,
    ``specific_heat``, ``emissivity`` 0..1) may be a table over temperature;
    ``curie_temperature`` removes the magnetisation at and above it. Plain
    conductivity and permeability are the tables' values at ``temperature_k``.
    A ``bh_curve`` (see :mod:`.read_bh`) makes the material saturable; it excludes
    ``relative_permeability``, which then holds the curve's initial value.
    """
    if raw is None:
        return {}
    if not isinstance(raw, dict):
        raise CaseError("material", "expected [material.NAME] tables",
                        ctx.index.find(("", 0), "material"))
    out = {}
    for name, data in raw.items():
        table = Table(ctx, data, f"material.{name}", (f"material.{name}", 0))
        table.allow({"conductivity", "resistivity", "relative_permeability", "source",
                     "curie_temperature", "bh_curve", *THERMAL})
        if table.has("conductivity") and table.has("resistivity"):
            raise table.error("resistivity", "give conductivity or resistivity, not both")
        if table.has("resistivity"):
            key = "resistivity"
            rho = property_value(table, "resistivity", "resistivity", minimum=0.0, strict=True)
            conductivity = (PropertyTable(rho.temperature_k, tuple(1 / v for v in rho.value))
                            if isinstance(rho, PropertyTable) else 1.0 / rho)
        else:
            key = "conductivity"
            conductivity = property_value(table, "conductivity", "conductivity", 0.0,
                                          minimum=0.0)
        for value in _values(conductivity):
            if not value <= MAX_CONDUCTIVITY:  # also catches inf and nan
                raise table.error(key, f"gives a conductivity of {value:.3g} S/m, beyond "
                                       f"the physical range (at most {MAX_CONDUCTIVITY:g} S/m; "
                                       "silver, the best conductor at room temperature, has "
                                       "6.3e7 S/m)")
        curve = None
        if table.has("bh_curve"):
            if table.has("relative_permeability"):
                raise table.error("relative_permeability", "give relative_permeability or "
                                  "bh_curve, not both (the curve sets the permeability)")
            curve = read_bh_curve(table)
            mu_r = curve.initial_relative_permeability
        else:
            mu_r = property_value(table, "relative_permeability", "dimensionless", 1.0,
                                  minimum=0.0, strict=True)
        for value in _values(mu_r) if curve is None else ():
            if not MIN_PERMEABILITY <= value <= MAX_PERMEABILITY:
                raise table.error("relative_permeability", f"{value:g} is beyond the physical "
                                                           f"range ({MIN_PERMEABILITY:g} to "
                                                           f"{MAX_PERMEABILITY:g})")
        thermal = {key: property_value(table, key, kind, None, low, high, strict)
                   for key, (kind, low, strict, high) in THERMAL.items()}
        curie = temperature(table, "curie_temperature", None)
        source = table.string("source", "defined in the case file")
        material = Material(
            name, 0.0, 1.0, source,
            conductivity_table=conductivity if isinstance(conductivity, PropertyTable) else None,
            permeability_table=mu_r if isinstance(mu_r, PropertyTable) else None,
            curie_temperature_k=curie, thermal_source=source, **thermal, bh_curve=curve)
        plain = {}
        if not isinstance(conductivity, PropertyTable):
            plain["conductivity"] = conductivity
        if not isinstance(mu_r, PropertyTable):
            plain["relative_permeability"] = mu_r
        out[name] = at_model_temperature(replace(material, **plain), temperature_k)
    return out


def _values(prop) -> tuple:
    """The values of a plain property or of a table."""
    return prop.value if isinstance(prop, PropertyTable) else (prop,)


def lookup(name: str, defined: dict[str, Material], table: Table, key: str) -> Material:
    """The material ``name``: defined in the case, else built in; else an error at ``key``."""
    if name in defined:
        return defined[name]
    if name in BUILTIN:
        return at_model_temperature(BUILTIN[name], table.ctx.temperature_k)
    known = sorted(set(defined) | set(BUILTIN))
    raise table.error(key, f"unknown material {name!r}: define [material.{name}] or use a "
                           f"built-in one ({', '.join(known)})")
