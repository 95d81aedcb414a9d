"""The sweep's mesh cache: one ``.npz`` file per sized geometry.

A file holds the node coordinates ``p`` (metres), the triangles ``t``, each
region's elements (``subdomain:NAME``) and each side's facets
(``boundary:NAME``), plus a JSON record of the rest of the
:class:`~whorl.meshes.tagged.TaggedMesh` (region order, unit, axisymmetry,
background, mesher info, the exterior disk of an open boundary). Files are
written to a temporary name and renamed, so a reader never sees half a mesh;
an entry that cannot be read anyway (zero length, truncated, garbage) is a
miss: it is removed and the mesh built again.
"""

from __future__ import annotations

import json
import logging
import os
from dataclasses import asdict
from pathlib import Path

import numpy as np
import skfem

from whorl.meshes.curved import is_curved
from whorl.meshes.tagged import KelvinMap, TaggedMesh

log = logging.getLogger(__name__)


class MeshCache:
    """Meshes by key (see :func:`whorl.cases.sweep.points.mesh_key`) in ``folder``."""

    def __init__(self, folder):
        self.folder = Path(folder)

    def path(self, key: str) -> Path:
        return self.folder / f"{key}.npz"

    def __contains__(self, key: str) -> bool:
        return self.path(key).exists()

    def load(self, key: str) -> TaggedMesh | None:
        """The cached mesh, or None when there is none (or it cannot be read)."""
        path = self.path(key)
        if not path.exists():
            return None
        try:
            return load_mesh(path)
        except Exception as exc:  # any damage: a miss, and the file goes
            log.warning("mesh cache entry %s is damaged (%s: %s); meshing again", path.name,
                        type(exc).__name__, exc)
            try:
                path.unlink()
            except OSError:
                pass
            return None

    def save(self, key: str, tagged: TaggedMesh) -> Path:
        self.folder.mkdir(parents=True, exist_ok=True)
        return save_mesh(tagged, self.path(key))


def save_mesh(tagged: TaggedMesh, path) -> Path:
    """Write ``tagged`` to ``path`` (npz), atomically."""
    path = Path(path)
    mesh = tagged.mesh
    arrays = {"p": mesh.p, "t": mesh.t}
    for name, idx in (mesh.subdomains or {}).items():
        arrays[f"subdomain:{name}"] = np.asarray(idx)
    for name, idx in (mesh.boundaries or {}).items():
        arrays[f"boundary:{name}"] = np.asarray(idx)
    meta = {"regions": list(tagged.regions), "unit_m": tagged.unit_m,
            "axisymmetric": tagged.axisymmetric, "background": tagged.background,
            "info": tagged.info, "kelvin": asdict(tagged.kelvin) if tagged.kelvin else None,
            "subdomains": list(mesh.subdomains or {}), "boundaries": list(mesh.boundaries or {}),
            "curved": is_curved(mesh)}
    arrays["meta"] = np.frombuffer(json.dumps(meta, default=float).encode(), dtype=np.uint8)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    with open(tmp, "wb") as f:
        np.savez(f, **arrays)
    os.replace(tmp, path)
    return path


def load_mesh(path) -> TaggedMesh:
    """Read a mesh written by :func:`save_mesh`."""
    with np.load(path, allow_pickle=False) as data:
        meta = json.loads(bytes(data["meta"]).decode())
        kind = skfem.MeshTri2 if meta.get("curved") else skfem.MeshTri
        mesh = kind(np.ascontiguousarray(data["p"]), np.ascontiguousarray(data["t"]))
        subdomains = {n: data[f"subdomain:{n}"] for n in meta["subdomains"]}
        boundaries = {n: data[f"boundary:{n}"] for n in meta["boundaries"]}
    mesh = mesh.with_subdomains(subdomains).with_boundaries(boundaries)
    kelvin = meta["kelvin"]
    if kelvin is not None:
        kelvin = KelvinMap(**{**kelvin, "offset": tuple(kelvin["offset"])})
    return TaggedMesh(mesh, tuple(meta["regions"]), meta["unit_m"], meta["axisymmetric"],
                      meta["background"], meta["info"], kelvin)
