"""Material properties as tables over temperature.

A :class:`PropertyTable` holds values at increasing temperatures (kelvin) and
interpolates linearly between them, holding the end values outside the table
(no extrapolation). :func:`at_temperature` evaluates either a plain number
(a constant property) or a table, for one temperature or an array of them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class PropertyTable:
    """A property against temperature.

    Attributes
    ----------
    temperature_k : tuple of float
        Strictly increasing temperatures in K (at least one).
    value : tuple of float
        The property at each temperature, in its SI unit.
    """

    temperature_k: tuple[float, ...]
    value: tuple[float, ...]

    def __post_init__(self):
        t = np.asarray(self.temperature_k, dtype=float)
        if t.size == 0 or t.size != len(self.value):
            raise ValueError("a property table needs as many values as temperatures (>= 1)")
        if np.any(np.diff(t) <= 0):
            raise ValueError("table temperatures must increase strictly")
        if np.any(t < 0):
            raise ValueError("table temperatures must be >= 0 K")

    def __call__(self, temperature_k):
        """Value(s) at ``temperature_k`` (K): linear between entries, held at the ends."""
        out = np.interp(temperature_k, self.temperature_k, self.value)
        return float(out) if np.ndim(out) == 0 else out

    @property
    def minimum(self) -> float:
        return float(min(self.value))

    @property
    def maximum(self) -> float:
        return float(max(self.value))


def at_temperature(prop, temperature_k):
    """A property (float, :class:`PropertyTable` or None) at ``temperature_k`` (K).

    A float is returned as it is (broadcast to the shape of an array argument);
    None stays None (the property is not given).
    """
    if prop is None:
        return None
    if isinstance(prop, PropertyTable):
        return prop(temperature_k)
    if np.ndim(temperature_k) == 0:
        return float(prop)
    return np.full(np.shape(temperature_k), float(prop))


def magnetisation_factor(curie_k: float | None, temperature_k, width_k: float = 10.0):
    """Multiplier m in [0, 1] of a material's magnetisation near its Curie point.

    m = 1 at and below curie_k - width_k, 0 at and above curie_k, linear in
    between: the magnetisation is gone at the Curie temperature as the case
    file says, and the narrow ramp below it keeps the coupled iteration from
    jumping between two states. None (no Curie point) gives 1 everywhere.
    """
    t = np.asarray(temperature_k, dtype=float)
    if curie_k is None:
        m = np.ones_like(t)
    else:
        m = np.clip((curie_k - t) / width_k, 0.0, 1.0)
    return float(m) if m.ndim == 0 else m


CURIE_WIDTH_K = 10.0
"""Width of the Curie transition used by :func:`magnetisation_factor` (K)."""
