"""The tagged mesh handed from the mesher to the solver."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class KelvinMap:
    """The exterior disk of an open boundary (Kelvin transformation).

    The mesher adds a second disk (a half-disk on the axis in axisymmetric
    models) of the same ``radius`` (m) whose centre is ``offset`` (m) from the
    origin; a point at distance rho' from that centre stands for the point at
    distance radius**2 / rho' outside the domain, at the same angle. Its arc
    (side ``arc``) is the domain's ``outer`` side again; its centre (node
    ``centre_node``) is the point at infinity. Its elements form subdomain
    ``subdomain``; in axisymmetric models its flat side is ``axis_side``.
    """

    radius: float
    offset: tuple[float, float]
    centre_node: int
    subdomain: str = "exterior"
    arc: str = "exterior-arc"
    axis_side: str = "exterior-axis"


@dataclass
class TaggedMesh:
    """A scikit-fem triangle mesh in metres with named regions and sides.

    Attributes
    ----------
    mesh : skfem.MeshTri
        Coordinates in metres. ``mesh.subdomains`` maps every region name and
        the background name (``"domain"``: everything outside all regions) to
        element indices; ``mesh.boundaries`` maps every domain side name
        (``left right bottom top outer axis``) to facet indices.
    regions : tuple of str
        Region names in case-file order (the background is not included).
    unit_m : float
        Metres per length unit of the case (for writing meshes back out).
    axisymmetric : bool
        True when x is the radius r and y the axial coordinate z.
    """

    mesh: object
    regions: tuple[str, ...]
    unit_m: float = 1.0
    axisymmetric: bool = False
    background: str = "domain"
    info: dict = field(default_factory=dict)
    kelvin: KelvinMap | None = None

    def elements(self, name: str) -> np.ndarray:
        """Element indices of a region (or of the background)."""
        return self.mesh.subdomains[name]

    def region_of_element(self) -> np.ndarray:
        """Integer array: index into ``(background,) + regions`` for every element."""
        out = np.zeros(self.mesh.t.shape[1], dtype=np.int32)
        if self.kelvin is not None:  # the exterior disk is background too
            out[self.mesh.subdomains[self.kelvin.subdomain]] = 0
        for i, name in enumerate(self.regions, start=1):
            out[self.mesh.subdomains[name]] = i
        return out

    def refined(self, times: int = 1) -> TaggedMesh:
        """Uniformly refined copy (regions and sides carried over). A curved mesh comes
        back with its new mid-edge nodes on straight edges: remesh instead to keep the
        true curves."""
        if self.kelvin is not None:
            raise ValueError("refining a mesh with an open boundary is not supported")
        return TaggedMesh(self.mesh.refined(times), self.regions, self.unit_m,
                          self.axisymmetric, self.background, dict(self.info))
