"""Plain data that describes what to mesh: regions, the domain and sizing options.

All coordinates and sizes are in the model's length unit; ``Geometry.unit_m``
converts them to metres (the mesh handed to the solver is in metres).
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class RegionSpec:
    """One named region.

    Attributes
    ----------
    name : str
        Unique region name (``turn.3``).
    shape : a shape from :mod:`whorl.meshes.shapes`
    mesh_size : float or None
        Upper bound for the element size inside the region (length unit).
    skin_depth : float or None
        Skin depth in the region at the study's highest frequency (length
        unit), or None for non-conducting regions and static studies. The
        mesher refines the region's boundary from it (see :mod:`.sizing`).
    """

    name: str
    shape: object
    mesh_size: float | None = None
    skin_depth: float | None = None


@dataclass(frozen=True)
class DomainSpec:
    """The outer boundary of the model.

    ``shape`` is ``"rectangle"`` (``corner``, ``size``) or ``"circle"``
    (``radius``, centred on the origin; a half-disk x >= 0 in axisymmetric
    models). Side names: ``left right bottom top`` or ``outer``; in
    axisymmetric models the part of the boundary on r = 0 is named ``axis``.
    """

    shape: str
    corner: tuple[float, float] | None = None
    size: tuple[float, float] | None = None
    radius: float | None = None
    mesh_size: float | None = None
    open_boundary: bool = False  # circle only: add the exterior disk (Kelvin transformation)

    def sides(self, axisymmetric: bool) -> tuple[str, ...]:
        if self.shape == "circle":
            return ("outer", "axis") if axisymmetric else ("outer",)
        if axisymmetric and self.corner is not None and self.corner[0] == 0:
            return ("axis", "right", "bottom", "top")
        return ("left", "right", "bottom", "top")


@dataclass(frozen=True)
class MeshOptions:
    """Sizing rules.

    ``per_skin_depth`` elements per skin depth at conductor surfaces (default
    2 for P2 and 4 for P1: common practice), ``growth`` the ratio between
    neighbouring element sizes away from a surface, ``max_size`` a global cap
    (length unit; default a twentieth of the domain's extent), ``across`` the
    least number of elements across a thin conductor. With ``order`` 2 and
    ``curved`` (the default) element edges on curved boundaries follow the true
    curve (isoparametric quadratic triangles, see :mod:`.curved`).
    """

    order: int = 2
    per_skin_depth: float | None = None
    growth: float = 1.25
    max_size: float | None = None
    across: int = 3
    algorithm: int = 6  # gmsh Mesh.Algorithm: 6 = Frontal-Delaunay
    threads: int = 0  # 0: gmsh decides
    curved: bool = True

    def elements_per_skin_depth(self) -> float:
        if self.per_skin_depth is not None:
            return self.per_skin_depth
        return 2.0 if self.order >= 2 else 4.0


@dataclass(frozen=True)
class Geometry:
    """Everything the mesher needs. Later regions cover earlier ones where they overlap."""

    regions: tuple[RegionSpec, ...]
    domain: DomainSpec
    axisymmetric: bool = False
    unit_m: float = 1e-3
    options: MeshOptions = field(default_factory=MeshOptions)
