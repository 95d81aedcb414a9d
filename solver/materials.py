"""Linear, isotropic materials and the built-in library.

Values are at 20 degC. Each built-in entry names where its value comes from;
"from memory" marks a handbook value recalled rather than re-read, and
"common practice" a representative value used in the trade.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

MU0 = 4e-7 * math.pi
"""Permeability of free space in H/m (the classical defined value; the 2019 SI
value differs by under 1e-9 relative)."""


@dataclass(frozen=True)
class Material:
    """A linear material.

    conductivity : S/m (0 for an insulator)
    relative_permeability : dimensionless, > 0
    source : where the values come from (shown by ``whorl materials``)
    """

    name: str
    conductivity: float = 0.0
    relative_permeability: float = 1.0
    source: str = "defined in the case file"

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


BUILTIN: dict[str, Material] = {
    m.name: m
    for m in (
        Material("air", 0.0, 1.0,
                 "vacuum values; air's susceptibility (~4e-7) is negligible (common practice)"),
        Material("vacuum", 0.0, 1.0, "definition"),
        Material("copper", 1 / 1.68e-8, 1.0,
                 "resistivity 1.68e-8 ohm*m at 20 degC, pure annealed copper "
                 "(CRC Handbook of Chemistry and Physics; value from memory)"),
        Material("copper-iacs", 58.0e6, 1.0,
                 "International Annealed Copper Standard, 58.0 MS/m at 20 degC (IEC 60028)"),
        Material("aluminium", 1 / 2.65e-8, 1.0,
                 "resistivity 2.65e-8 ohm*m at 20 degC, pure aluminium "
                 "(CRC Handbook of Chemistry and Physics; value from memory)"),
        Material("brass", 16.0e6, 1.0,
                 "cartridge brass C26000, about 28 % IACS "
                 "(ASM Handbook vol. 2; value from memory)"),
        Material("stainless-304", 1 / 7.2e-7, 1.0,
                 "resistivity 7.2e-7 ohm*m at 20 degC, annealed austenitic AISI 304, "
                 "mu_r about 1.0 (ASM Handbook vol. 1; value from memory)"),
        Material("carbon-steel", 1 / 1.6e-7, 100.0,
                 "resistivity 1.6e-7 ohm*m at 20 degC, medium-carbon steel such as AISI 1045 "
                 "(ASM Handbook vol. 1; value from memory); mu_r = 100 is a representative "
                 "linear value below saturation (common practice): real steel is nonlinear "
                 "and loses its permeability above the Curie point (about 770 degC)"),
        Material("water", 0.05, 1.0,
                 "tap water, 0.005 to 0.05 S/m; the upper end is taken (common practice)"),
    )
}
