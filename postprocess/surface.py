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
converges faster than the derivative inside a skin-deep layer. The points are
placed in reference coordinates of the elements on both sides of each edge, so on
curved (isoparametric) elements they lie on the curved surface, and the normal and
the length element come from the element's map.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np

from whorl.postprocess.probes import evaluate

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


def boundary_edges(tagged, region: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The region's boundary edges as node pairs (2, F), in order along each closed
    outline, the region's element beside each edge and the element on the other side
    (-1 where the model ends)."""
    mesh = tagged.mesh
    inside = np.zeros(mesh.t.shape[1], dtype=bool)
    inside[tagged.elements(region)] = True
    f2t = mesh.f2t
    side0 = inside[f2t[0]]
    side1 = np.where(f2t[1] >= 0, inside[np.maximum(f2t[1], 0)], False)
    edge = np.nonzero(side0 != side1)[0]
    owner = np.where(side0[edge], f2t[0, edge], f2t[1, edge])
    other = np.where(side0[edge], f2t[1, edge], f2t[0, edge])
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
    return (np.array(pairs, dtype=np.int64).T.reshape(2, -1), owner[order], other[order])


#: Vertices of the reference triangle (scikit-fem's MeshTri).
_CORNERS = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])


def _edge_reference(mesh, cells, a, b, t):
    """Reference coordinates (2, F, G) of the points at fractions ``t`` (G,) from node
    ``a`` to node ``b`` of the edge, in elements ``cells`` (F,), and the reference
    direction from the edge's middle to the element's third vertex (2, F)."""
    local = mesh.t[:3, cells]  # (3, F)
    ia = np.argmax(local == a[None, :], axis=0)
    ib = np.argmax(local == b[None, :], axis=0)
    ic = 3 - ia - ib
    ra, rb, rc = _CORNERS[:, ia], _CORNERS[:, ib], _CORNERS[:, ic]
    ref = ra[:, :, None] + (rb - ra)[:, :, None] * t[None, None, :]
    return ref, rc - 0.5 * (ra + rb), rb - ra


def surface_power(solution, region: str) -> SurfacePower:
    """Power density entering ``region`` along its outline (see the module)."""
    tagged = solution.problem.mesh
    mesh = tagged.mesh
    mapping = solution.system.basis.mapping
    pairs, owner, other = boundary_edges(tagged, region)
    a, b = pairs
    nf = a.size
    g, w = np.polynomial.legendre.leggauss(GAUSS)
    t = 0.5 * (g + 1)  # (G,)
    ref, inward, along = _edge_reference(mesh, owner, a, b, t)
    cells = np.repeat(owner, GAUSS)
    flat = ref.reshape(2, -1)
    pts = mapping.F(flat[:, :, None], tind=cells)[:, :, 0]  # on the (curved) edge
    jac = mapping.DF(flat[:, :, None], tind=cells)[:, :, :, 0]  # (2, 2, P)
    dx_dt = np.einsum("ijp,jp->ip", jac, np.repeat(along, GAUSS, axis=1))
    into = np.einsum("ijp,jp->ip", jac, np.repeat(inward, GAUSS, axis=1))
    speed = np.hypot(*dx_dt)  # |dx/dt|, m per unit of t
    normal = np.array([-dx_dt[1], dx_dt[0]]) / speed
    normal *= np.where(np.sum(normal * into, axis=0) < 0, -1.0, 1.0)
    # E from the conductor's own element (its voltage term is there); the tangential H,
    # continuous across the surface, from the element beyond where there is one (the
    # field is smooth there; inside a skin-deep layer the element's derivative is less
    # accurate), else from inside. Points of both sides are the same physical points:
    # the map along a shared edge depends on the edge's nodes only.
    kelvin = tagged.kelvin
    beyond = other.copy()
    if kelvin is not None:
        beyond[np.isin(beyond, tagged.elements(kelvin.subdomain))] = -1
    has = beyond >= 0
    ref_out = np.zeros_like(ref)
    if has.any():
        ref_out[:, has] = _edge_reference(mesh, beyond[has], a[has], b[has], t)[0]
    inner = evaluate(solution, cells, flat, pts.copy())
    outer = evaluate(solution, np.repeat(beyond, GAUSS), ref_out.reshape(2, -1), pts.copy())
    e = inner.e
    h = np.where(outer.inside, outer.h, inner.h)
    if solution.problem.axisymmetric:
        s = np.array([(e * np.conj(h[1])).real, -(e * np.conj(h[0])).real])
    else:
        s = np.array([-(e * np.conj(h[1])).real, (e * np.conj(h[0])).real])
    density = np.nan_to_num(np.sum(s * normal, axis=0)).reshape(nf, GAUSS)
    scale = 2 * np.pi * pts[0] if solution.problem.axisymmetric else solution.problem.depth_m
    weight = (0.5 * np.tile(w, nf) * speed * scale).reshape(nf, GAUSS)
    length = (0.5 * np.tile(w, nf) * speed).reshape(nf, GAUSS).sum(axis=1)
    start = np.concatenate([[0.0], np.cumsum(length)[:-1]])
    arc = start[:, None] + length[:, None] * t[None, :]
    return SurfacePower(region, arc.ravel(), pts, density.ravel(), weight.ravel())


def cached_surface_power(solution, region: str) -> SurfacePower:
    """:func:`surface_power`, computed once per solution and region (the results record,
    the CSV table and the picture all need it)."""
    cache = solution.__dict__.setdefault("_surface_power", {})
    if region not in cache:
        cache[region] = surface_power(solution, region)
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
