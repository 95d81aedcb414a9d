"""Quadratic (isoparametric) triangles whose edges follow curved boundaries.

gmsh's second-order mesh places the mid-edge node of every edge on a curve *on* that
curve (on a straight edge it is the midpoint). Handing those nodes to scikit-fem as
the geometry of a :class:`skfem.MeshTri2` makes each element the image of the
reference triangle under its quadratic map, so a circle of radius a is drawn by
parabolic arcs instead of chords: the area error drops from about (2 pi^2 / 3) a^2 /
n^2 with n chords (0.4 % at n = 40) to order n^-4 (below 1e-5 at n = 40). With P2
unknowns on such a mesh the geometry error no longer dominates the discretisation
error (Ciarlet and Raviart, isoparametric finite elements, 1972).

``mesh.p`` of a quadratic mesh holds the mid-edge nodes after the vertices; the
vertices are the first ``mesh.nvertices`` columns and ``mesh.t`` indexes only them.
"""

from __future__ import annotations

import numpy as np
import skfem

from whorl.meshes.errors import MeshError

#: Local edges of a scikit-fem triangle, in the order of ElementTriP2's facet dofs.
_SKFEM_EDGES = ((0, 1), (1, 2), (0, 2))
#: Local edges of gmsh's 6-node triangle, in the order of its mid-edge nodes.
_GMSH_EDGES = ((0, 1), (1, 2), (2, 0))


def is_curved(mesh) -> bool:
    """Whether ``mesh`` is a quadratic (curved-edge) mesh."""
    return isinstance(mesh, skfem.MeshTri2)


def quadratic_mesh(mesh, t: np.ndarray, mids: np.ndarray):
    """A :class:`skfem.MeshTri2` from straight ``mesh`` and gmsh's mid-edge nodes.

    Parameters
    ----------
    mesh : skfem.MeshTri
        The straight mesh through the vertices (its ``t`` may be a column-wise
        permutation of ``t``).
    t : ndarray (E, 3)
        Vertex indices of every triangle in gmsh's node order.
    mids : ndarray (E, 3, 2)
        Coordinates of the mid-edge nodes of edges 01, 12, 20 of every triangle.

    Raises
    ------
    MeshError
        When a curved element turns inside out (its Jacobian changes sign).
    """
    quad = skfem.MeshTri2.from_mesh(mesh)
    n = np.int64(mesh.p.shape[1])
    keys = np.concatenate([np.minimum(t[:, a], t[:, b]) * n + np.maximum(t[:, a], t[:, b])
                           for a, b in _GMSH_EDGES])
    coords = np.concatenate([mids[:, k, :] for k in range(3)], axis=0)
    order = np.argsort(keys)
    keys, coords = keys[order], coords[order]
    doflocs = quad.doflocs.copy()
    qt = quad.t.astype(np.int64)
    element_dofs = quad.dofs.element_dofs
    for k, (a, b) in enumerate(_SKFEM_EDGES):
        wanted = np.minimum(qt[a], qt[b]) * n + np.maximum(qt[a], qt[b])
        pos = np.minimum(np.searchsorted(keys, wanted), len(keys) - 1)
        if np.any(keys[pos] != wanted):
            raise MeshError("second-order mesh: mid-edge nodes do not match the edges")
        doflocs[:, element_dofs[3 + k]] = coords[pos].T
    curved = skfem.MeshTri2(doflocs, quad.t)
    _check_jacobians(curved)
    return curved


def _check_jacobians(mesh) -> None:
    basis = skfem.Basis(mesh, skfem.ElementTriP2(), intorder=4)
    det = basis.mapping.detDF(basis.X)
    sign = np.sign(det)
    bad = np.flatnonzero((sign != sign[:, :1]).any(axis=1) | (det == 0).any(axis=1))
    if bad.size:
        x = mesh.p[:, mesh.t[:, bad[0]]].mean(axis=1)
        raise MeshError(f"a curved element turns inside out near ({x[0]:g}, {x[1]:g}) m: "
                        "the boundary bends too much for the element size there; set a "
                        "smaller mesh_size on the region")


def straight(mesh):
    """The straight triangle mesh through the vertices of ``mesh`` (itself if straight)."""
    if not is_curved(mesh):
        return mesh
    nv = int(mesh.t.max()) + 1
    return skfem.MeshTri(np.ascontiguousarray(mesh.p[:, :nv]), np.ascontiguousarray(mesh.t),
                         sort_t=False)
