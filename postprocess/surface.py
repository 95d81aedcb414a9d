r"""Surface power density: the power entering a conductor through its surface.

The time-average Poynting vector of RMS phasors is S = Re(E x H*) (W/m^2). With
E along z (planar) or phi (axisymmetric) and H in the model plane,

- planar:        S = Re(-E_z H_y*, E_z H_x*)
- axisymmetric:  S = Re(E_phi H_z*, -E_phi H_r*)   (components r, z)

The power density entering the surface is S . n_in, n_in the unit normal
pointing into the conductor. By Poynting's theorem (any electromagnetics text,
e.g. J. D. Jackson, *Classical Electrodynamics*, sec. 6.9) its integral over the
closed surface equals the conductor's time-average loss: the integral along the
outline times the depth (planar) or times 2 pi r (axisymmetric). This is the
figure induction engineers compare with practice tables (W/cm^2).

Values are taken at Gauss points of the conductor's boundary edges, walked in
order along each closed outline: E from the conductor's side, the tangential H
(continuous across the surface) from the other side where there is one, which
converges faster than the derivative inside a skin-deep layer.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np

from whorl.postprocess.probes import probe

GAUSS = 3  # points per boundary edge

log = logging.getLogger(__name__)


@dataclass
class SurfacePower:
    """Samples along a conductor's outline (arrays over the samples).

    ``s_m`` arc length from the start of the first outline (outlines follow one
    another); ``x`` (2, P) in m; ``density_w_per_m2`` the power entering;
    ``weight_m2`` the surface each sample stands for (edge length share times the
    depth or 2 pi r), so that ``(density * weight).sum()`` is the power entering.
    """

    region: str
    s_m: np.ndarray
    x: np.ndarray
    density_w_per_m2: np.ndarray
    weight_m2: np.ndarray

    @property
    def total_w(self) -> float:
        return float(np.sum(self.density_w_per_m2 * self.weight_m2))

    def peak(self) -> tuple[float, tuple[float, float]]:
        """Largest density (W/m^2) and where it is (m)."""
        k = int(np.argmax(self.density_w_per_m2))
        return float(self.density_w_per_m2[k]), (float(self.x[0, k]), float(self.x[1, k]))


def boundary_edges(tagged, region: str) -> tuple[np.ndarray, np.ndarray]:
    """The region's boundary edges as node pairs (2, F), in order along each closed
    outline, and the region's element beside each edge."""
    mesh = tagged.mesh
    inside = np.zeros(mesh.t.shape[1], dtype=bool)
    inside[tagged.elements(region)] = True
    f2t = mesh.f2t
    side0 = inside[f2t[0]]
    side1 = np.where(f2t[1] >= 0, inside[np.maximum(f2t[1], 0)], False)
    edge = np.nonzero(side0 != side1)[0]
    owner = np.where(side0[edge], f2t[0, edge], f2t[1, edge])
    nodes = mesh.facets[:, edge]
    # walk the edges node to node
    at_node: dict[int, list[int]] = {}
    for k in range(edge.size):
        for n in nodes[:, k]:
            at_node.setdefault(int(n), []).append(k)
    used = np.zeros(edge.size, dtype=bool)
    order, pairs = [], []
    for start in range(edge.size):
        if used[start]:
            continue
        k, a = start, int(nodes[0, start])
        while not used[k]:
            used[k] = True
            b = int(nodes[1, k]) if int(nodes[0, k]) == a else int(nodes[0, k])
            order.append(k)
            pairs.append((a, b))
            nxt = [m for m in at_node[b] if not used[m]]
            if not nxt:
                break
            k, a = nxt[0], b
    return np.array(pairs, dtype=np.int64).T.reshape(2, -1), owner[order]


def surface_power(solution, region: str) -> SurfacePower:
    """Power density entering ``region`` along its outline (see the module)."""
    tagged = solution.problem.mesh
    mesh = tagged.mesh
    pairs, owner = boundary_edges(tagged, region)
    p0, p1 = mesh.p[:, pairs[0]], mesh.p[:, pairs[1]]
    length = np.hypot(*(p1 - p0))
    # inward normal: perpendicular to the edge, towards the owning element's centroid
    tangent = (p1 - p0) / length
    normal = np.array([-tangent[1], tangent[0]])
    centroid = mesh.p[:, mesh.t[:3, owner]].mean(axis=1)
    flip = np.sum((centroid - 0.5 * (p0 + p1)) * normal, axis=0) < 0
    normal[:, flip] *= -1
    g, w = np.polynomial.legendre.leggauss(GAUSS)
    t = 0.5 * (g + 1)  # (G,)
    pts = p0[:, :, None] + (p1 - p0)[:, :, None] * t[None, None, :]  # (2, F, G)
    # E from a hair inside (the conductor's own element: its voltage term is there);
    # tangential H, continuous across the surface, from a hair outside where the
    # field is smooth (inside a skin-deep layer its gradient is steep and the
    # element's derivative less accurate); inside H where the model ends.
    nudge = 1e-7 * length[None, :, None] * normal[:, :, None]
    inner = probe(solution, (pts + nudge).reshape(2, -1))
    outer = probe(solution, (pts - nudge).reshape(2, -1))
    e = inner.e.reshape(length.size, GAUSS)
    h = np.where(outer.inside, outer.h, inner.h).reshape(2, length.size, GAUSS)
    if solution.problem.axisymmetric:
        s = np.array([(e * np.conj(h[1])).real, -(e * np.conj(h[0])).real])
    else:
        s = np.array([-(e * np.conj(h[1])).real, (e * np.conj(h[0])).real])
    density = np.nan_to_num(np.sum(s * normal[:, :, None], axis=0))  # (F, G)
    scale = 2 * np.pi * pts[0] if solution.problem.axisymmetric else solution.problem.depth_m
    weight = 0.5 * w[None, :] * length[:, None] * scale
    start = np.concatenate([[0.0], np.cumsum(length)[:-1]])
    arc = start[:, None] + length[:, None] * t[None, :]
    return SurfacePower(region, arc.ravel(), pts.reshape(2, -1), density.ravel(),
                        np.broadcast_to(weight, density.shape).ravel())


def cached_surface_power(solution, region: str) -> SurfacePower | None:
    """:func:`surface_power`, computed once per solution and region (the results record,
    the CSV table and the picture all need it); None, with a warning in the log, where
    the outline cannot be sampled (points on the straight chords of curved elements can
    fall outside the mesh's inverse map)."""
    cache = solution.__dict__.setdefault("_surface_power", {})
    if region not in cache:
        try:
            cache[region] = surface_power(solution, region)
        except Exception as err:  # skfem raises plain Exception from its inverse map
            log.warning("no surface power density for %s: %s", region, err)
            cache[region] = None
    return cache[region]


def heated_regions(problem) -> list[str]:
    """Conductors in no source: the workpieces whose surface power is of interest."""
    fed = {r for s in problem.sources
           for r in (*getattr(s, "regions", ()), *getattr(s, "return_regions", ()))}
    return [n for n in problem.mesh.regions
            if n not in fed and problem.materials[n].conductivity > 0
            and problem.mesh.elements(n).size]


def surface_rows(sp: SurfacePower, axisymmetric: bool) -> tuple[list[str], list[list]]:
    """Header and rows of ``surface_NAME.csv`` (SI units)."""
    a, b = ("r_m", "z_m") if axisymmetric else ("x_m", "y_m")
    header = ["s_m", a, b, "power_density_w_per_m2"]
    rows = np.column_stack([sp.s_m, sp.x[0], sp.x[1], sp.density_w_per_m2]).tolist()
    return header, rows
