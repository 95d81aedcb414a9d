"""Shape sanity checks before meshing: what would hang or break the mesher, found at once.

gmsh given a polygon whose edges cross can run for ever; a repeated corner, a
region hidden entirely under later ones or a domain 1e300 times the size of
the model fail only deep inside meshing. :func:`check_geometry` finds these
from the plain geometry objects, so ``whorl check`` can report them with the
key that causes them.

The checks work on what shapes offer: polygons by their ``points``; every
shape by ``bbox``; the covering check by :func:`contains` and an outline of
boundary points (a shape's own ``contains(x, y)`` and ``outline()`` when it has
them, so shapes added later take part by defining them; a shape it cannot
test is skipped).
"""

from __future__ import annotations

import math

import numpy as np

from whorl.meshes.geometry import Geometry
from whorl.meshes.sizing import domain_bbox

#: Largest ratio of the domain's extent to the regions' extent (a margin above this is a
#: typing mistake: the mesher cannot resolve the parts in floating point any more).
MAX_DOMAIN_RATIO = 1e6

#: Largest coordinate magnitude accepted, in the length unit.
MAX_COORDINATE = 1e12


class ShapeProblem(ValueError):
    """A shape the mesher cannot handle.

    ``region`` is a region name or ``"domain"``; ``part`` names the part of its
    description at fault (``"points"``, ``"size"``, ``"margin"`` ...).
    """

    def __init__(self, region: str, part: str, message: str):
        self.region, self.part, self.message = region, part, message
        super().__init__(f"region {region!r}: {message}" if region != "domain" else message)


def polygon_problem(points, tol: float = 1e-12) -> tuple[str, str] | None:
    """What is wrong with a polygon's corners, or None.

    Returns ``(part, message)``: a corner repeated (``points[j]`` equals
    ``points[i]``, 1-based) or two edges that cross or touch (edges numbered from
    the corner they start at). Edges are compared in vectorised rows, so a
    polygon of n corners costs n^2/2 cheap tests.
    """
    p = np.asarray(points, dtype=float)
    n = len(p)
    extent = float(np.ptp(p, axis=0).max()) if n else 0.0
    eps = tol * max(extent, 1e-300)
    # repeated corners
    order = np.lexsort((p[:, 1], p[:, 0]))
    sp = p[order]
    same = np.all(np.abs(np.diff(sp, axis=0)) <= eps, axis=1)
    if same.any():
        k = int(np.argmax(same))
        i, j = sorted((int(order[k]) + 1, int(order[k + 1]) + 1))
        return f"points[{j}]", f"corner {j} repeats corner {i} ({p[i - 1][0]:g}, " \
                               f"{p[i - 1][1]:g})"
    a = p
    b = np.roll(p, -1, axis=0)
    scale = eps * max(extent, 1e-300)  # cross products are lengths squared
    for i, j in _candidate_blocks(a, b, extent):
        c, d = a[j], b[j]
        p1, p2 = a[i], b[i]
        d1, d2 = _cross(p1, p2, c), _cross(p1, p2, d)
        d3, d4 = _cross(c, d, p1), _cross(c, d, p2)
        proper = (((d1 > scale) & (d2 < -scale)) | ((d1 < -scale) & (d2 > scale))) & \
                 (((d3 > scale) & (d4 < -scale)) | ((d3 < -scale) & (d4 > scale)))
        touch = ((np.abs(d1) <= scale) & _within(p1, p2, c, eps)) | \
                ((np.abs(d2) <= scale) & _within(p1, p2, d, eps)) | \
                ((np.abs(d3) <= scale) & _within(c, d, p1, eps)) | \
                ((np.abs(d4) <= scale) & _within(c, d, p2, eps))
        hit = proper | touch
        if hit.any():
            pairs = sorted(zip(i[hit].tolist(), j[hit].tolist(), strict=True))
            i0, j0 = pairs[0]
            return "points", (f"the polygon crosses itself: edge {i0 + 1} (corners {i0 + 1}-"
                              f"{i0 + 2}) meets edge {j0 + 1} (corners {j0 + 1}-"
                              f"{(j0 + 1) % n + 1})")
    return None


def _candidate_blocks(a, b, extent, max_pairs: int = 2_000_000):
    """Pairs ``(i, j)`` of non-neighbouring edges (i < j) whose boxes share a cell of a
    uniform grid, in blocks of index arrays: about n pairs for an ordinary polygon
    instead of n^2/2."""
    n = len(a)
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    cells = max(1, int(math.sqrt(n)))
    size = max(extent, 1e-300) / cells
    origin = lo.min(axis=0)
    c0 = np.floor((lo - origin) / size).astype(np.int64)
    c1 = np.floor((hi - origin) / size).astype(np.int64)
    span = (c1[:, 0] - c0[:, 0] + 1) * (c1[:, 1] - c0[:, 1] + 1)
    if span.sum() > 20 * n + 1000:  # long edges everywhere: test every pair
        yield from _all_pairs(n)
        return
    edge_ids, cell_ids = [], []
    for e in range(n):
        for cx in range(c0[e, 0], c1[e, 0] + 1):
            for cy in range(c0[e, 1], c1[e, 1] + 1):
                edge_ids.append(e)
                cell_ids.append(cx * (cells + 2) + cy)
    edge_ids, cell_ids = np.array(edge_ids), np.array(cell_ids)
    order = np.argsort(cell_ids, kind="stable")
    edge_ids, cell_ids = edge_ids[order], cell_ids[order]
    bounds = np.flatnonzero(np.diff(cell_ids)) + 1
    pairs_i, pairs_j, total = [], [], 0
    for group in np.split(edge_ids, bounds):
        if group.size < 2:
            continue
        gi, gj = np.triu_indices(group.size, 1)
        i, j = np.minimum(group[gi], group[gj]), np.maximum(group[gi], group[gj])
        pairs_i.append(i)
        pairs_j.append(j)
        total += i.size
        if total > max_pairs:
            yield from _all_pairs(n)
            return
    if not pairs_i:
        return
    i, j = np.concatenate(pairs_i), np.concatenate(pairs_j)
    keep = (j >= i + 2) & ~((i == 0) & (j == n - 1))
    i, j = i[keep], j[keep]
    if i.size:
        uniq = np.unique(i * n + j)
        yield uniq // n, uniq % n


def _all_pairs(n: int, block_rows: int = 64):
    for start in range(0, n, block_rows):
        rows = np.arange(start, min(start + block_rows, n))
        i, j = np.meshgrid(rows, np.arange(n), indexing="ij")
        i, j = i.ravel(), j.ravel()
        keep = (j >= i + 2) & ~((i == 0) & (j == n - 1))
        if keep.any():
            yield i[keep], j[keep]


def _cross(p, q, r):
    """z of (q - p) x (r - p), broadcasting over the leading axes."""
    return ((q[..., 0] - p[..., 0]) * (r[..., 1] - p[..., 1])
            - (q[..., 1] - p[..., 1]) * (r[..., 0] - p[..., 0]))


def _within(p, q, r, eps):
    """r lies within the box of segment p-q (broadcasting)."""
    lo, hi = np.minimum(p, q), np.maximum(p, q)
    return ((lo[..., 0] - eps <= r[..., 0]) & (r[..., 0] <= hi[..., 0] + eps)
            & (lo[..., 1] - eps <= r[..., 1]) & (r[..., 1] <= hi[..., 1] + eps))


def contains(shape, x: np.ndarray, y: np.ndarray) -> np.ndarray | None:
    """Which points (x, y) lie in ``shape`` (boundary included), or None when the shape
    offers no way to tell."""
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    if hasattr(shape, "contains"):
        return np.asarray(shape.contains(x, y), dtype=bool)
    kind = getattr(shape, "kind", None)
    if kind == "rectangle":
        (cx, cy), (w, h) = shape.corner, shape.size
        return (x >= cx) & (x <= cx + w) & (y >= cy) & (y <= cy + h)
    if kind == "circle":
        return np.hypot(x - shape.center[0], y - shape.center[1]) <= shape.radius
    if kind == "ring":
        r = np.hypot(x - shape.center[0], y - shape.center[1])
        return (r >= shape.inner) & (r <= shape.outer)
    if kind == "polygon":
        p = np.asarray(shape.points, dtype=float)
        inside = np.zeros(x.shape, dtype=bool)
        q = np.roll(p, -1, axis=0)
        for (x0, y0), (x1, y1) in zip(p, q, strict=True):
            crosses = (y0 > y) != (y1 > y)
            with np.errstate(divide="ignore", invalid="ignore"):
                xc = x0 + (y - y0) * (x1 - x0) / (y1 - y0)
            inside ^= crosses & (x < xc)
        return inside
    return None


def _outline(shape) -> np.ndarray | None:
    """Points of ``shape``'s outer boundary such that a *convex* shape holding them all
    holds the whole shape (corners of straight-sided shapes, 720 points of a circle);
    None for a shape this module does not know."""
    if hasattr(shape, "outline"):
        return np.asarray(shape.outline(), dtype=float)
    kind = getattr(shape, "kind", None)
    if kind == "polygon":
        return np.asarray(shape.points, dtype=float)
    if kind == "rectangle":
        x0, y0, x1, y1 = shape.bbox()
        return np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], dtype=float)
    if kind in ("circle", "ring"):
        r = shape.radius if kind == "circle" else shape.outer
        t = np.linspace(0.0, 2.0 * np.pi, 720, endpoint=False)
        return np.c_[shape.center[0] + r * np.cos(t), shape.center[1] + r * np.sin(t)]
    return None


def _convex(shape) -> bool:
    kind = getattr(shape, "kind", None)
    if kind in ("rectangle", "circle"):
        return True
    if kind == "polygon":
        p = np.asarray(shape.points, dtype=float)
        q, r = np.roll(p, -1, axis=0), np.roll(p, -2, axis=0)
        turn = (q[:, 0] - p[:, 0]) * (r[:, 1] - q[:, 1]) - (q[:, 1] - p[:, 1]) * (r[:, 0] - q[:, 0])
        return bool(np.all(turn >= 0) or np.all(turn <= 0))
    return False


def _finite_box(shape) -> bool:
    return all(math.isfinite(v) and abs(v) <= MAX_COORDINATE for v in shape.bbox())


def check_geometry(geometry: Geometry) -> None:
    """Raise :class:`ShapeProblem` for the first thing in ``geometry`` the mesher cannot
    handle: coordinates beyond :data:`MAX_COORDINATE`, a polygon with a repeated
    corner or crossing edges, a domain more than :data:`MAX_DOMAIN_RATIO` times the
    regions' extent, a region inside a later (convex) one."""
    for region in geometry.regions:
        if not _finite_box(region.shape):
            raise ShapeProblem(region.name, "", f"coordinates beyond {MAX_COORDINATE:g} in "
                                                "size (or not finite)")
        points = getattr(region.shape, "points", None)
        if points is not None:
            problem = polygon_problem(points)
            if problem is not None:
                raise ShapeProblem(region.name, *problem)
    if not geometry.regions:
        return
    boxes = np.array([r.shape.bbox() for r in geometry.regions])
    extent = max(boxes[:, 2].max() - boxes[:, 0].min(), boxes[:, 3].max() - boxes[:, 1].min())
    dx0, dy0, dx1, dy1 = domain_bbox(geometry.domain, geometry.axisymmetric)
    dextent = max(dx1 - dx0, dy1 - dy0)
    if not (math.isfinite(dextent) and dextent <= MAX_COORDINATE):
        raise ShapeProblem("domain", "size", f"the domain reaches {dextent:g} (length unit), "
                                             f"beyond {MAX_COORDINATE:g}")
    if extent > 0 and dextent / extent > MAX_DOMAIN_RATIO:
        raise ShapeProblem("domain", "margin", f"the domain is {dextent / extent:.3g} times "
                                               f"the size of the regions (more than "
                                               f"{MAX_DOMAIN_RATIO:g}): a margin or size typed "
                                               "in the wrong unit?")
    _check_covered(geometry)


def _check_covered(geometry: Geometry) -> None:
    """A region inside one later convex shape has no elements left: the later one wins.

    Only covering by a single convex region is tested (exact for straight-sided
    regions, to 1e-5 of the radius for round ones), so the check never refuses a
    region of which a sliver is left; a region covered by several later ones
    together is left to the mesher, which reports it too.
    """
    regions = geometry.regions
    boxes = np.array([r.shape.bbox() for r in regions], dtype=float)
    for i, region in enumerate(regions[:-1]):
        bx0, by0, bx1, by1 = boxes[i]
        rest = boxes[i + 1:]
        hits = np.nonzero((rest[:, 0] <= bx0) & (rest[:, 2] >= bx1)
                          & (rest[:, 1] <= by0) & (rest[:, 3] >= by1))[0]
        if hits.size == 0:
            continue
        outline = _outline(region.shape)
        if outline is None:
            continue
        for j in hits:
            other = regions[i + 1 + int(j)]
            if not _convex(other.shape):
                continue
            inside = contains(other.shape, outline[:, 0], outline[:, 1])
            if inside is not None and inside.all():
                raise ShapeProblem(region.name, "", f"the region is covered entirely by the "
                                                    f"later region {other.name!r}, which wins "
                                                    "where regions overlap, so this one would "
                                                    "have no elements")
