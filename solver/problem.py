"""The problem handed to the solver: a tagged mesh plus physics, no case file."""

from __future__ import annotations

from dataclasses import dataclass, field

from whorl.meshes.tagged import TaggedMesh
from whorl.solver.boundary import FluxParallel
from whorl.solver.materials import Material


@dataclass
class Problem:
    """A 2D eddy-current problem.

    Attributes
    ----------
    mesh : TaggedMesh (metres)
    materials : dict
        Material of every region name and of the background (``mesh.background``).
    sources : tuple of Stranded, Massive, AppliedField
    boundary : dict
        Condition per side name; sides not listed are flux-parallel. The
        axis of an axisymmetric model always has A = 0.
    depth_m : float
        Planar models: out-of-plane length in m; totals are for this depth.
    order : int
        Lagrange order of the elements, 1 or 2.
    shorted : tuple of Shorted
        Planar conductor groups joined at their ends.
    element_temperature_k : ndarray, optional
        Temperature of every element (K), set by a heating study: conductivity and
        permeability are then evaluated per element from the materials' temperature
        tables and Curie points. None: every material takes its plain values.
    motions : tuple of Translation, Rotation
        Conductors in steady rigid motion (:mod:`.motion`).
    element_magnetisation : ndarray or None
        Per element, a multiplier m in [0, 1] of the magnetisation (a Curie
        transition): B = mu0 H + m (B_curve(H) - mu0 H), and for a linear material
        mu_r_eff = 1 + m (mu_r - 1). None: m = 1 everywhere.
    """

    mesh: TaggedMesh
    materials: dict[str, Material]
    sources: tuple = ()
    boundary: dict = field(default_factory=dict)
    depth_m: float = 1.0
    order: int = 2
    shorted: tuple = ()
    element_temperature_k: object = None
    motions: tuple = ()
    element_magnetisation: object = None

    @property
    def axisymmetric(self) -> bool:
        return self.mesh.axisymmetric

    def condition(self, side: str):
        return self.boundary.get(side, FluxParallel())
