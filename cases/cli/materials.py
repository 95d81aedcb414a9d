"""``whorl materials``: the built-in materials with their values and sources."""

from __future__ import annotations

import textwrap

from whorl.solver.materials import BUILTIN

HELP = "list the built-in materials with their values and where they come from"


def add_args(parser) -> None:
    parser.add_argument("--width", type=int, default=100,
                        help="wrap the source column to this many characters (default 100)")


def rows() -> list[tuple[str, str, str, str, str]]:
    """One row per built-in material: name, S/m, ohm*m, mu_r, source."""
    out = []
    for m in BUILTIN.values():
        sigma = f"{m.conductivity:.4g}" if m.conductivity > 0 else "0"
        rho = f"{1 / m.conductivity:.4g}" if m.conductivity > 0 else "-"
        mu = ("B-H curve" if m.bh_curve is not None
              else f"{m.relative_permeability:g}")
        out.append((m.name, sigma, rho, mu, m.source))
    return out


def handle(args) -> int:
    header = ("name", "conductivity S/m", "resistivity ohm*m", "mu_r", "source")
    table = rows()
    widths = [max(len(r[i]) for r in table + [header]) for i in range(4)]
    indent = sum(widths) + 2 * 4
    wrap = max(30, args.width - indent)
    print("  ".join(h.ljust(w) for h, w in zip(header[:4], widths, strict=True))
          + "  " + header[4])
    for r in table:
        first, *rest = textwrap.wrap(r[4], wrap) or [""]
        print("  ".join(v.ljust(w) if i == 0 else v.rjust(w)
                        for i, (v, w) in enumerate(zip(r[:4], widths, strict=True)))
              + "  " + first)
        for more in rest:
            print(" " * indent + more)
    print("\nValues at 20 degC. Materials with a B-H curve are saturable (typical values, not a "
          "maker's data);\nthe others are linear. Define your own with [material.NAME] in a "
          "case file.")
    print("\nThermal data and temperature tables (heating studies; typical values):")
    for m in BUILTIN.values():
        text = thermal_text(m)
        if text:
            first, *rest = textwrap.wrap(f"{m.name}: {text}", args.width) or [""]
            print(first)
            for more in rest:
                print("    " + more)
    return 0


def thermal_text(m) -> str:
    """One material's thermal data and temperature tables in words ("" if it has none)."""
    from whorl.solver.tables import PropertyTable

    def show(value, unit):
        if isinstance(value, PropertyTable):
            lo, hi = value.temperature_k[0] - 273.15, value.temperature_k[-1] - 273.15
            return (f"{value.value[0]:.4g} to {value.value[-1]:.4g} {unit} "
                    f"({lo:g} to {hi:g} degC)")
        return f"{value:.4g} {unit}"

    parts = []
    if m.conductivity_table is not None:
        t = m.conductivity_table
        parts.append(f"resistivity {1 / t.value[0]:.3g} to {1 / t.value[-1]:.3g} ohm*m "
                     f"({t.temperature_k[0] - 273.15:g} to {t.temperature_k[-1] - 273.15:g} "
                     "degC)")
    if m.curie_temperature_k is not None:
        parts.append(f"Curie point {m.curie_temperature_k - 273.15:g} degC")
    for key, unit in (("thermal_conductivity", "W/(m K)"), ("density", "kg/m^3"),
                      ("specific_heat", "J/(kg K)"), ("emissivity", "")):
        value = getattr(m, key)
        if value is not None:
            parts.append(f"{key.replace('_', ' ')} {show(value, unit).rstrip()}")
    if not parts:
        return ""
    return "; ".join(parts) + (f". Source: {m.thermal_source}" if m.thermal_source else "")
