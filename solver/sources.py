"""Sources and conductor groups: plain data handed to the solver.

Harmonic amplitudes are RMS complex phasors (A, V, T). Planar sources run
along +z in ``regions`` and back along -z in ``return_regions``.
"""

from __future__ import annotations

from dataclasses import dataclass


def current_is_unknown(source) -> bool:
    """True for a source whose current the solver finds: voltage-driven, or fed by a capacitor."""
    return (getattr(source, "voltage", None) is not None
            or getattr(source, "drive", "current") == "voltage"
            or getattr(source, "capacitance", None) is not None)


@dataclass(frozen=True)
class Stranded:
    """A winding of fine wire: uniform current density turns*I/area in each region.

    ``turns`` is the number of turns in each listed region; all regions are in
    series. Exactly one of ``current`` (A, RMS phasor) and ``voltage`` (V) is
    given; ``resistance`` (ohm) is the DC winding resistance added in series.

    Stepped (transient) studies use ``waveform`` instead (instantaneous A or V
    as ``drive`` says). A ``capacitance`` (F) charged to ``initial_voltage``
    (V) in series turns the source into a capacitor discharge through the
    winding and its resistance (its current is then an unknown).

    ``fill_factor`` (0 < f <= 1), when not None, asks the case layer to set
    ``resistance`` from the regions' material and geometry
    (:mod:`whorl.solver.windings`); the solver itself only uses ``resistance``.
    """

    name: str
    regions: tuple[str, ...]
    turns: float = 1.0
    current: complex | None = None
    voltage: complex | None = None
    resistance: float = 0.0
    return_regions: tuple[str, ...] = ()
    kind: str = "stranded"
    waveform: object | None = None
    drive: str = "current"
    capacitance: float | None = None
    initial_voltage: float = 0.0
    fill_factor: float | None = None


@dataclass(frozen=True)
class Massive:
    """Solid conductors with eddy currents inside.

    ``connection`` is ``"series"`` (each region carries the source current) or
    ``"parallel"`` (the regions share the terminal voltage). One of
    ``current`` (A) and ``voltage`` (V) is given. ``resistance`` (ohm) is an
    external resistance in series with the terminals; ``waveform``, ``drive``,
    ``capacitance`` and ``initial_voltage`` as for :class:`Stranded`.
    """

    name: str
    regions: tuple[str, ...]
    connection: str = "series"
    current: complex | None = None
    voltage: complex | None = None
    return_regions: tuple[str, ...] = ()
    kind: str = "massive"
    resistance: float = 0.0
    waveform: object | None = None
    drive: str = "current"
    capacitance: float | None = None
    initial_voltage: float = 0.0


@dataclass(frozen=True)
class AppliedField:
    """A uniform external field applied on the sides marked ``applied-field``.

    ``flux_density`` is ``(Bx, By)`` in planar models and the axial ``Bz`` in
    axisymmetric ones (T, RMS phasors).
    """

    name: str
    flux_density: tuple[complex, complex] | complex
    kind: str = "applied-field"


@dataclass(frozen=True)
class Shorted:
    """Planar conductors joined at their ends: their currents sum to zero."""

    regions: tuple[str, ...]
