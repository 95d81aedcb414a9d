"""Side conditions on the domain boundary (values of A in Wb/m)."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class FluxParallel:
    """A = 0: field lines run along the side (the default)."""

    kind = "flux-parallel"


@dataclass(frozen=True)
class FluxNormal:
    """Natural condition (tangential H = 0): field lines cross the side at right angles."""

    kind = "flux-normal"


@dataclass(frozen=True)
class Potential:
    """A fixed to ``value`` (Wb/m, may be a complex phasor)."""

    value: complex = 0.0
    kind = "potential"


@dataclass(frozen=True)
class AppliedFieldSide:
    """A of the uniform field of the model's applied-field source."""

    kind = "applied-field"


@dataclass(frozen=True)
class Open:
    """Unbounded space outside a circular domain."""

    kind = "open"
