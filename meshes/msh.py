"""Mesh files in gmsh format 4.1 (binary), through meshio.

Coordinates are written in the case's length unit (metres divided by
``TaggedMesh.unit_m``). Every region, the background (``"domain"``) and every
domain side is a physical group named after it: triangles for regions, line
elements for sides. Binary files only: meshio's ASCII gmsh round trip is not
reliable with recent numpy.
"""

from __future__ import annotations

import os

import meshio
import numpy as np

from whorl.meshes.curved import is_curved
from whorl.meshes.errors import MeshError
from whorl.meshes.tagged import TaggedMesh


def write_msh(tagged: TaggedMesh, path) -> None:
    """Write ``tagged`` to ``path`` as a gmsh 4.1 binary file, coordinates in the length unit.

    Physical tags: regions ``1..n`` in order, the background ``n + 1``, the
    exterior disk of an open boundary (``exterior``) if any, then the sides
    (``left right bottom top``, ``outer`` or ``axis``). Each physical group is
    also one geometrical entity of the same tag.

    Raises
    ------
    MeshError
        When a region and a side share a name (a msh file cannot hold both).
    """
    mesh = tagged.mesh
    names = [*tagged.regions, tagged.background]
    names += [n for n in mesh.subdomains if n not in names]  # the open boundary's exterior disk
    sides = [s for s in mesh.boundaries or {} if s not in names]
    clash = set(names) & set(mesh.boundaries or {})
    if clash:
        raise MeshError(f"region name {sorted(clash)[0]!r} is also a side name; "
                        "rename the region to write a msh file")
    cells, tags, field_data = [], [], {}
    tag = 0
    for name in names:
        tag += 1
        elements = tagged.elements(name)
        field_data[name] = np.array([tag, 2])
        if len(elements):
            cells.append(_triangles(mesh, elements))
            tags.append(tag)
    for name in sides:
        tag += 1
        facets = mesh.boundaries[name]
        field_data[name] = np.array([tag, 1])
        if len(facets):
            cells.append(_lines(mesh, facets))
            tags.append(tag)
    points = np.zeros((mesh.p.shape[1], 3))
    points[:, :2] = mesh.p.T / tagged.unit_m
    tag_data = [np.full(len(block.data), t, dtype=np.int32) for block, t in zip(cells, tags,
                                                                               strict=True)]
    out = meshio.Mesh(
        points,
        cells,
        point_data={"gmsh:dim_tags": _node_entities(len(points), cells, tags)},
        cell_data={"gmsh:physical": tag_data, "gmsh:geometrical": [d.copy() for d in tag_data]},
        field_data=field_data,
    )
    meshio.write(os.fspath(path), out, file_format="gmsh", binary=True)


def _triangles(mesh, elements) -> meshio.CellBlock:
    """Triangles, or 6-node triangles (corners, then mid-edge nodes 01 12 20) if curved."""
    corners = mesh.t[:, elements].T.astype(np.int64)
    if not is_curved(mesh):
        return meshio.CellBlock("triangle", corners)
    mids = mesh.dofs.element_dofs[3:6, elements].T.astype(np.int64)  # edges 01 12 02
    return meshio.CellBlock("triangle6", np.column_stack([corners, mids]))


def _lines(mesh, facets) -> meshio.CellBlock:
    """Boundary edges, or 3-node edges (ends, then the middle) if curved."""
    ends = mesh.facets[:, facets].T.astype(np.int64)
    if not is_curved(mesh):
        return meshio.CellBlock("line", ends)
    middle = mesh.dofs.facet_dofs[0, facets].astype(np.int64)
    return meshio.CellBlock("line3", np.column_stack([ends, middle]))


def read_msh(path) -> meshio.Mesh:
    """Read a gmsh file (any version meshio reads) as a :class:`meshio.Mesh`."""
    return meshio.read(os.fspath(path), file_format="gmsh")


def _node_entities(n: int, cells, tags) -> np.ndarray:
    """Entity ``(dim, tag)`` of every node so that each cell block's entity owns a node.

    gmsh 4.1 files list entities through their nodes; a block whose entity owns no
    node would lose its physical group. Smaller blocks claim their nodes first.
    """
    owner = np.full(n, -1, dtype=np.int64)
    order = sorted(range(len(cells)), key=lambda k: len(cells[k].data))
    for k in order:
        nodes = np.unique(cells[k].data)
        free = nodes[owner[nodes] < 0]
        if len(free):
            owner[free] = k
            continue
        counts = np.bincount(owner[owner >= 0], minlength=len(cells))
        spare = nodes[counts[owner[nodes]] > 1]
        if not len(spare):
            raise MeshError(f"cannot give physical group {tags[k]} a node of its own")
        owner[spare[0]] = k
    if np.any(owner < 0):
        raise MeshError("the mesh has nodes in no element")
    dims = np.array([cells[k].dim for k in range(len(cells))], dtype=np.int64)
    return np.column_stack([dims[owner], np.asarray(tags, dtype=np.int64)[owner]])
