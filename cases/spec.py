"""The parsed case: plain data produced by the loader and consumed by the runner.

Geometry (regions, domain, loops, lines, points) stays in the case's length
unit; every other value is SI.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from whorl.meshes.geometry import Geometry


@dataclass(frozen=True)
class LoopSpec:
    """A closed contour. Axisymmetric: the circle through ``at`` = (r, z).
    Planar: two long sides at ``start`` and ``end`` (length unit), length = depth."""

    name: str
    turns: float = 1.0
    at: tuple[float, float] | None = None
    start: tuple[float, float] | None = None
    end: tuple[float, float] | None = None
    velocity: tuple[float, float] | None = None  # m/s; None for a loop at rest


@dataclass(frozen=True)
class LineSpec:
    name: str
    start: tuple[float, float]
    end: tuple[float, float]
    samples: int = 101


@dataclass(frozen=True)
class PointSpec:
    name: str
    at: tuple[float, float]


@dataclass(frozen=True)
class HeatingSpec:
    """The heating keys of ``[study]`` (temperatures in K). ``heated`` is None for the
    default (every conductor in no source), resolved by the loader."""

    initial_k: float = 293.15
    heated: tuple[str, ...] | None = None
    field_update_k: float = 20.0
    hardening_k: float | None = None
    temperatures_k: tuple[float, ...] = ()  # times to reach these are reported


@dataclass(frozen=True)
class StudySpec:
    """``kind`` is harmonic, static, transient or heating; ``frequencies`` in Hz
    (static: (0.0,)); a heating study has one frequency and ``heating``."""

    kind: str
    frequencies: tuple[float, ...] = ()
    end_s: float | None = None
    step_s: float | None = None
    scheme: str = "bdf2"
    save_every: int = 10
    reduced: str = "auto"            # harmonic: reduced-order sweep "auto", "on" or "off"
    reduced_tolerance: float = 1e-6  # relative, on impedances and region losses
    tank_capacitance: float | None = None  # F: resonance with the source's tank capacitor
    tank_connection: str = "parallel"      # "series" or "parallel"
    heating: HeatingSpec | None = None


@dataclass(frozen=True)
class OutputSpec:
    folder: Path = Path("results")
    fields: bool = False
    plots: bool = False


@dataclass(frozen=True)
class SweepSpec:
    """``axes`` maps a parameter name to its list of values (each a string or number
    as a parameter override accepts it); ``from_command_line`` is True for a sweep made
    by ``whorl sweep --vary`` instead of the case's ``[sweep]`` table."""

    mode: str
    axes: dict = field(default_factory=dict)
    from_command_line: bool = False


@dataclass
class Case:
    """A validated case file.

    ``geometry`` holds regions and domain in the length unit (``unit_m`` metres
    each) with no skin depths yet; ``region_material`` names the material of
    every region and of the background under the key ``"domain"``;
    ``materials`` holds every material used, by material name; ``solver``
    names the linear solver backend (``"auto"``: the fastest installed one).
    """

    name: str
    title: str
    notes: str
    geometry_kind: str
    length_unit: str
    unit_m: float
    depth_m: float
    order: int
    parameters: dict
    materials: dict
    region_material: dict
    geometry: Geometry
    boundary: dict
    sources: tuple
    shorted: tuple
    study: StudySpec
    loops: tuple = ()
    lines: tuple = ()
    points: tuple = ()
    output: OutputSpec = field(default_factory=OutputSpec)
    sweep: SweepSpec | None = None
    path: Path | None = None
    document: dict = field(default_factory=dict)
    solver: str = "auto"  # linear solver backend by name (whorl.solver.linalg)
    text: str | None = None  # the case file's text as read (what was solved)
    surfaces: tuple = ()  # [[surface]] of a heating study (solver Surface objects)
    supplies: dict = field(default_factory=dict)  # heating: source name -> Supply
    temperature_k: float = 293.15  # [model] temperature
    motions: tuple = ()  # solver.motion Translation / Rotation objects (SI)

    @property
    def axisymmetric(self) -> bool:
        return self.geometry_kind == "axisymmetric"
