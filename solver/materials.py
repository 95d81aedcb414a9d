"""Isotropic materials (linear, or saturable with a B-H curve) and the built-in library.

Plain values are at 20 degC; a property may also be a table over temperature
(:class:`~whorl.solver.tables.PropertyTable`), evaluated per element in heating
studies. Each built-in entry names where its value comes from;
"from memory" marks a handbook value recalled rather than re-read, and
"common practice" a representative value used in the trade.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from whorl.solver.bh import frohlich_kennelly
from whorl.solver.constants import MU0
from whorl.solver.tables import PropertyTable, at_temperature, magnetisation_factor

__all__ = ["BUILTIN", "MU0", "Material", "skin_depth"]


@dataclass(frozen=True)
class Material:
    """A material: linear, or saturable when it has a B-H curve.

    conductivity : S/m (0 for an insulator)
    relative_permeability : dimensionless, > 0; for a material with a B-H curve the
        curve's initial relative permeability (its slope at the origin over mu0)
    source : where the values come from (shown by ``whorl materials``)

    Temperature-dependent and thermal data (all optional; heating studies):

    conductivity_table : PropertyTable of S/m over K; ``conductivity`` then holds
        its value at the model temperature
    permeability_table : PropertyTable of the relative permeability over K
    curie_temperature_k : at and above it the material is non-magnetic (K)
    thermal_conductivity : W/(m K), a float or a PropertyTable
    density : kg/m^3, a float or a PropertyTable
    specific_heat : J/(kg K), a float or a PropertyTable
    emissivity : of its surfaces, 0..1, a float or a PropertyTable
    thermal_source : where the thermal and temperature data come from
    bh_curve : :class:`~whorl.solver.bh.BHCurve` or None (linear); a B-H curve makes the
        material saturable (issue 11)
    """

    name: str
    conductivity: float = 0.0
    relative_permeability: float = 1.0
    source: str = "defined in the case file"
    conductivity_table: PropertyTable | None = None
    permeability_table: PropertyTable | None = None
    curie_temperature_k: float | None = None
    thermal_conductivity: float | PropertyTable | None = None
    density: float | PropertyTable | None = None
    specific_heat: float | PropertyTable | None = None
    emissivity: float | PropertyTable | None = None
    thermal_source: str = ""

    def conductivity_at(self, temperature_k):
        """Conductivity in S/m at ``temperature_k`` (K; a float or an array)."""
        if self.conductivity_table is None:
            return at_temperature(self.conductivity, temperature_k)
        return self.conductivity_table(temperature_k)

    def relative_permeability_at(self, temperature_k):
        """Relative permeability at ``temperature_k`` with the Curie transition applied:
        1 + m (mu_r(T) - 1), m from :func:`~whorl.solver.tables.magnetisation_factor`."""
        mu_r = (self.permeability_table(temperature_k) if self.permeability_table is not None
                else at_temperature(self.relative_permeability, temperature_k))
        m = self.magnetisation_at(temperature_k)
        return 1.0 + m * (np.asarray(mu_r) - 1.0) if np.ndim(mu_r) else 1.0 + m * (mu_r - 1.0)

    def magnetisation_at(self, temperature_k):
        """Multiplier m in [0, 1] of the magnetisation (1 below the Curie transition)."""
        return magnetisation_factor(self.curie_temperature_k, temperature_k)

    @property
    def electromagnetic_tables(self) -> bool:
        """True if its conductivity or permeability changes with temperature."""
        return (self.conductivity_table is not None or self.permeability_table is not None
                or self.curie_temperature_k is not None)

    @property
    def thermal_missing(self) -> list[str]:
        """Names of the thermal properties a heated region needs but this material lacks."""
        return [k for k in ("thermal_conductivity", "density", "specific_heat")
                if getattr(self, k) is None]
    bh_curve: object | None = None

    @property
    def saturable(self) -> bool:
        """True when the material has a B-H curve."""
        return self.bh_curve is not None

    @property
    def permeability(self) -> float:
        """Absolute permeability mu0 mu_r in H/m."""
        return MU0 * self.relative_permeability

    @property
    def reluctivity(self) -> float:
        """1/mu in m/H."""
        return 1.0 / self.permeability

    def skin_depth(self, frequency_hz: float) -> float:
        """Skin depth sqrt(2/(omega mu sigma)) in m; inf for insulators or 0 Hz."""
        return skin_depth(frequency_hz, self.conductivity, self.relative_permeability)


def skin_depth(frequency_hz: float, conductivity: float,
               relative_permeability: float = 1.0) -> float:
    """Skin depth delta = sqrt(2 / (omega mu sigma)) in metres (inf when undefined)."""
    if frequency_hz <= 0 or conductivity <= 0:
        return math.inf
    omega = 2 * math.pi * frequency_hz
    return math.sqrt(2.0 / (omega * MU0 * relative_permeability * conductivity))


def _table(celsius, values) -> PropertyTable:
    """A PropertyTable from temperatures in degC."""
    return PropertyTable(tuple(c + 273.15 for c in celsius), tuple(float(v) for v in values))


def _resistivity(celsius, micro_ohm_m) -> PropertyTable:
    """A conductivity table from resistivities in micro-ohm metres."""
    return _table(celsius, [1e6 / r for r in micro_ohm_m])


def _linear_alpha(rho20, alpha, celsius) -> PropertyTable:
    """Conductivity from rho(T) = rho20 (1 + alpha (T - 20 degC)) (ohm*m, 1/K)."""
    return _table(celsius, [1.0 / (rho20 * (1 + alpha * (c - 20.0))) for c in celsius])


_T_METAL = (20, 200, 400, 600, 800, 1000)
_T_LIGHT = (20, 200, 400, 600)

_STEEL_THERMAL = (
    "typical values for a medium-carbon steel (0.4 to 0.5 % C, such as AISI 1045), "
    "values from memory of handbook tables (ASM Handbook vol. 1; BISRA physical constants "
    "of steels): resistivity 0.16 to 1.17 micro-ohm m from 20 to 1000 degC, thermal "
    "conductivity 52 falling to 27 W/(m K), specific heat rising to a peak of about "
    "900 J/(kg K) near the Curie point (it carries the latent heat of the transformation), "
    "Curie point 770 degC and emissivity 0.8 of an oxidised surface (common practice)"
)

_LOW_CARBON_THERMAL = (
    "typical values for a low-carbon steel (about 0.1 % C, such as AISI 1010), values from "
    "memory of handbook tables (ASM Handbook vol. 1; BISRA physical constants of steels): "
    "resistivity 0.14 to 1.17 micro-ohm m from 20 to 1000 degC, thermal conductivity 60 "
    "falling to 27 W/(m K), specific heat with its peak of about 900 J/(kg K) near the Curie "
    "point (latent heat of the transformation), Curie point 770 degC and emissivity 0.8 of "
    "an oxidised surface (common practice)"
)

_FERRITIC_THERMAL = (
    "typical values for a ferritic stainless steel (AISI 430), values from memory of "
    "handbook tables (ASM Handbook vol. 1): resistivity 0.60 to 1.2 micro-ohm m from 20 to "
    "1000 degC, thermal conductivity about 26 W/(m K), specific heat 460 rising to 700 "
    "J/(kg K) near its Curie point of about 670 degC (value from memory), emissivity 0.6 of "
    "an oxidised surface (common practice)"
)

# Medium-carbon steel (AISI 1045): the linear "carbon-steel" and "medium-carbon-steel-bh"
# share these tables (sources in _STEEL_THERMAL).
_MEDIUM_CARBON = dict(
    conductivity_table=_resistivity((20, 100, 200, 400, 600, 700, 800, 900, 1000),
                                    (0.16, 0.22, 0.29, 0.46, 0.69, 0.84, 1.03, 1.12, 1.17)),
    curie_temperature_k=770.0 + 273.15,
    thermal_conductivity=_table((20, 200, 400, 600, 800, 1000), (52, 48, 42, 35, 26, 27)),
    density=7850.0,
    specific_heat=_table((20, 200, 400, 600, 700, 750, 770, 800, 900, 1000),
                         (460, 520, 580, 700, 800, 900, 900, 700, 620, 640)),
    emissivity=0.8, thermal_source=_STEEL_THERMAL)

BUILTIN: dict[str, Material] = {
    m.name: m
    for m in (
        Material("air", 0.0, 1.0,
                 "vacuum values; air's susceptibility (~4e-7) is negligible (common practice)"),
        Material("vacuum", 0.0, 1.0, "definition"),
        Material("copper", 1 / 1.68e-8, 1.0,
                 "resistivity 1.68e-8 ohm*m at 20 degC, pure annealed copper "
                 "(CRC Handbook of Chemistry and Physics; value from memory)",
                 conductivity_table=_linear_alpha(1.68e-8, 0.00393, _T_METAL),
                 thermal_conductivity=_table((20, 400, 800), (398, 379, 357)),
                 density=8940.0, specific_heat=_table((20, 400, 800), (385, 417, 451)),
                 emissivity=0.1,
                 thermal_source="typical: temperature coefficient of resistance 0.00393/K, "
                                "thermal conductivity, specific heat (CRC Handbook, values from "
                                "memory); emissivity 0.1 of a lightly oxidised surface "
                                "(common practice)"),
        Material("copper-iacs", 58.0e6, 1.0,
                 "International Annealed Copper Standard, 58.0 MS/m at 20 degC (IEC 60028)",
                 conductivity_table=_linear_alpha(1 / 58.0e6, 0.00393, _T_METAL),
                 thermal_conductivity=_table((20, 400, 800), (398, 379, 357)),
                 density=8890.0, specific_heat=_table((20, 400, 800), (385, 417, 451)),
                 emissivity=0.1,
                 thermal_source="typical: temperature coefficient 0.00393/K (IEC 60028), "
                                "thermal data of pure copper (CRC Handbook, values from memory)"),
        Material("aluminium", 1 / 2.65e-8, 1.0,
                 "resistivity 2.65e-8 ohm*m at 20 degC, pure aluminium "
                 "(CRC Handbook of Chemistry and Physics; value from memory)",
                 conductivity_table=_linear_alpha(2.65e-8, 0.00429, _T_LIGHT),
                 thermal_conductivity=_table((20, 400, 600), (237, 240, 231)),
                 density=2700.0, specific_heat=_table((20, 300, 600), (897, 1000, 1090)),
                 emissivity=0.1,
                 thermal_source="typical: temperature coefficient 0.00429/K, thermal "
                                "conductivity and specific heat of pure aluminium (CRC Handbook, "
                                "values from memory; it melts at 660 degC); emissivity 0.1 "
                                "(common practice)"),
        Material("brass", 16.0e6, 1.0,
                 "cartridge brass C26000, about 28 % IACS "
                 "(ASM Handbook vol. 2; value from memory)",
                 conductivity_table=_linear_alpha(1 / 16.0e6, 0.0015, _T_LIGHT),
                 thermal_conductivity=120.0, density=8530.0, specific_heat=375.0,
                 emissivity=0.2,
                 thermal_source="typical values for C26000 (ASM Handbook vol. 2, values from "
                                "memory): temperature coefficient 0.0015/K, 120 W/(m K), "
                                "375 J/(kg K); emissivity 0.2 (common practice)"),
        Material("stainless-304", 1 / 7.2e-7, 1.0,
                 "resistivity 7.2e-7 ohm*m at 20 degC, annealed austenitic AISI 304, "
                 "mu_r about 1.0 (ASM Handbook vol. 1; value from memory)",
                 conductivity_table=_resistivity(_T_METAL, (0.72, 0.86, 0.98, 1.07, 1.13,
                                                            1.18)),
                 thermal_conductivity=_table((20, 500, 1000), (14.9, 21.5, 28.0)),
                 density=7900.0, specific_heat=_table((20, 500, 1000), (477, 570, 640)),
                 emissivity=0.6,
                 thermal_source="typical values for AISI 304 (ASM Handbook vol. 1, values "
                                "from memory); emissivity 0.6 of an oxidised surface "
                                "(common practice)"),
        Material("carbon-steel", 1 / 1.6e-7, 100.0,
                 "resistivity 1.6e-7 ohm*m at 20 degC, medium-carbon steel such as AISI 1045 "
                 "(ASM Handbook vol. 1; value from memory); mu_r = 100 is a representative "
                 "linear value below saturation (common practice): real steel is nonlinear "
                 "and loses its permeability above the Curie point (about 770 degC); "
                 "medium-carbon-steel-bh is the same steel with a B-H curve",
                 **_MEDIUM_CARBON),
        Material("low-carbon-steel-bh", 1 / 1.4e-7, 1500.0,
                 "typical values, not a maker's data: low-carbon steel such as AISI 1010, "
                 "resistivity 1.4e-7 ohm*m (ASM Handbook vol. 1; value from memory); B-H curve "
                 "from the Frohlich-Kennelly law B = mu0 H + Js H/(Hk + H) with saturation "
                 "polarisation Js = 2.1 T and initial relative permeability 1500 "
                 "(Hk = 1.11 kA/m), typical of annealed low-carbon steel (Bozorth, "
                 "Ferromagnetism, 1951; values from memory)",
                 bh_curve=frohlich_kennelly(2.1, 1500.0, source="Frohlich-Kennelly law, "
                                            "Js = 2.1 T, initial mu_r 1500"),
                 conductivity_table=_resistivity((20, 100, 200, 400, 600, 700, 800, 900,
                                                  1000),
                                                 (0.14, 0.19, 0.26, 0.46, 0.73, 0.90, 1.08,
                                                  1.13, 1.17)),
                 curie_temperature_k=770.0 + 273.15,
                 thermal_conductivity=_table((20, 200, 400, 600, 800, 1000),
                                             (60, 54, 46, 37, 29, 28)),
                 density=7870.0,
                 specific_heat=_table((20, 200, 400, 600, 700, 750, 770, 800, 900, 1000),
                                      (450, 520, 590, 700, 800, 900, 900, 700, 620, 640)),
                 emissivity=0.8, thermal_source=_LOW_CARBON_THERMAL),
        Material("medium-carbon-steel-bh", 1 / 1.6e-7, 600.0,
                 "typical values, not a maker's data: medium-carbon steel such as AISI 1045, "
                 "resistivity 1.6e-7 ohm*m (ASM Handbook vol. 1; value from memory); B-H "
                 "curve from the Frohlich-Kennelly law B = mu0 H + Js H/(Hk + H) with "
                 "Js = 2.0 T and initial relative permeability 600 (Hk = 2.66 kA/m), typical "
                 "of normalised medium-carbon steel (Bozorth, Ferromagnetism, 1951; values "
                 "from memory)",
                 bh_curve=frohlich_kennelly(2.0, 600.0, source="Frohlich-Kennelly law, "
                                            "Js = 2.0 T, initial mu_r 600"),
                 **_MEDIUM_CARBON),
        Material("ferritic-stainless-bh", 1 / 6.0e-7, 500.0,
                 "typical values, not a maker's data: ferritic stainless steel such as AISI "
                 "430, resistivity 6.0e-7 ohm*m (ASM Handbook vol. 1; value from memory); B-H "
                 "curve from the Frohlich-Kennelly law B = mu0 H + Js H/(Hk + H) with "
                 "Js = 1.5 T and initial relative permeability 500 (Hk = 2.39 kA/m) "
                 "(values from memory)",
                 bh_curve=frohlich_kennelly(1.5, 500.0, source="Frohlich-Kennelly law, "
                                            "Js = 1.5 T, initial mu_r 500"),
                 conductivity_table=_resistivity((20, 200, 400, 600, 800, 1000),
                                                 (0.60, 0.78, 0.93, 1.05, 1.15, 1.20)),
                 curie_temperature_k=670.0 + 273.15,
                 thermal_conductivity=_table((20, 500, 1000), (26.0, 26.5, 27.0)),
                 density=7750.0,
                 specific_heat=_table((20, 400, 600, 650, 670, 700, 900),
                                      (460, 560, 640, 700, 700, 620, 640)),
                 emissivity=0.6, thermal_source=_FERRITIC_THERMAL),
        Material("water", 0.05, 1.0,
                 "tap water, 0.005 to 0.05 S/m; the upper end is taken (common practice)",
                 thermal_conductivity=0.6, density=998.0, specific_heat=4182.0,
                 emissivity=0.96,
                 thermal_source="still water at 20 degC (CRC Handbook, values from memory); "
                                "no flow: a stagnant layer"),
    )
}
