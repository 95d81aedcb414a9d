"""Outlines of straight sides and circular arcs, and regions with holes.

An :class:`Outline` is a closed boundary through ``vertices``; side ``i`` runs from
vertex ``i`` to vertex ``i + 1`` (the last side closes back to the first vertex) and
is straight where ``arcs[i]`` is None, else a circular :class:`Arc` about its centre.
Rounded and chamfered corners (:func:`rounded`), spheres and spherical shells cut at
the axis (:func:`half_disk`, :func:`half_ring`) and drawings read from DXF files all
end up as outlines. :class:`WithHoles` cuts other shapes out of one.

All coordinates are in the model's length unit. Geometry errors (an arc whose ends
lie at different distances from its centre, a fillet too large for its corner) are
``ValueError`` with a message the case reader turns into a key-path error.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from whorl.meshes.shapes import register_shape

#: Relative tolerance for "the same point" and "on the circle" (of the outline's size).
TOLERANCE = 1e-6

#: Arcs are drawn in pieces of at most this sweep (radians) so each piece is unambiguous.
MAX_PIECE = math.pi / 2


@dataclass(frozen=True)
class Arc:
    """A circular side about ``center``, counter-clockwise if ``ccw`` else clockwise."""

    center: tuple[float, float]
    ccw: bool = True

    def sweep(self, a, b) -> float:
        """Signed angle (rad, counter-clockwise positive) from point ``a`` to ``b``."""
        cx, cy = self.center
        t0 = math.atan2(a[1] - cy, a[0] - cx)
        t1 = math.atan2(b[1] - cy, b[0] - cx)
        phi = t1 - t0
        if self.ccw:
            while phi <= 1e-12:
                phi += 2 * math.pi
        else:
            while phi >= -1e-12:
                phi -= 2 * math.pi
        return phi

    def radius(self, a) -> float:
        return math.dist(a, self.center)

    def points(self, a, b, pieces: int) -> list[tuple[float, float]]:
        """``pieces + 1`` points along the arc from ``a`` to ``b`` (ends included)."""
        cx, cy = self.center
        r = self.radius(a)
        t0 = math.atan2(a[1] - cy, a[0] - cx)
        phi = self.sweep(a, b)
        out = [(cx + r * math.cos(t0 + phi * k / pieces), cy + r * math.sin(t0 + phi * k / pieces))
               for k in range(1, pieces)]
        return [tuple(a), *out, tuple(b)]


def arc_through(a, m, b) -> Arc:
    """The arc from ``a`` through ``m`` to ``b``; ValueError if the three are on a line."""
    ax, ay = a
    bx, by = b
    mx, my = m
    d = 2 * (ax * (my - by) + mx * (by - ay) + bx * (ay - my))
    scale = max(math.dist(a, m), math.dist(m, b), math.dist(a, b))
    if abs(d) <= TOLERANCE * scale**2:
        raise ValueError("the three points of the arc lie on one line")
    sa, sm, sb = ax**2 + ay**2, mx**2 + my**2, bx**2 + by**2
    ux = (sa * (my - by) + sm * (by - ay) + sb * (ay - my)) / d
    uy = (sa * (bx - mx) + sm * (ax - bx) + sb * (mx - ax)) / d
    ccw = (mx - ax) * (by - my) - (my - ay) * (bx - mx) > 0
    return Arc((ux, uy), ccw)


def check_arc(a, b, arc: Arc) -> None:
    """ValueError unless ``a`` and ``b`` lie at the same distance from the arc's centre."""
    ra, rb = arc.radius(a), arc.radius(b)
    if ra <= 0 or abs(ra - rb) > TOLERANCE * max(ra, rb):
        raise ValueError(f"the arc does not fit: its start is {ra:.6g} from the centre "
                         f"{_xy(arc.center)} and its end {rb:.6g}")


def _xy(p) -> str:
    return f"({p[0]:g}, {p[1]:g})"


@register_shape("outline")
@dataclass(frozen=True)
class Outline:
    """Closed boundary of straight sides and circular arcs (see the module notes)."""

    vertices: tuple[tuple[float, float], ...]
    arcs: tuple[Arc | None, ...]

    def __post_init__(self):
        if len(self.arcs) != len(self.vertices):
            raise ValueError("an outline needs one side entry per vertex")
        if len(self.vertices) < 2 or (len(self.vertices) == 2 and not any(self.arcs)):
            raise ValueError("an outline needs at least 3 corners or an arc")

    def sides(self):
        """``(start, end, arc or None)`` for every side."""
        v, n = self.vertices, len(self.vertices)
        return [(v[i], v[(i + 1) % n], self.arcs[i]) for i in range(n)]

    def polyline(self, per_radian: float = 16.0) -> np.ndarray:
        """Points along the boundary (arcs sampled), shape (m, 2), not closed explicitly."""
        out = []
        for a, b, arc in self.sides():
            if arc is None:
                out.append(a)
            else:
                pieces = max(2, math.ceil(abs(arc.sweep(a, b)) * per_radian))
                out.extend(arc.points(a, b, pieces)[:-1])
        return np.asarray(out, dtype=float)

    def bbox(self):
        p = self.polyline(64.0)
        return (float(p[:, 0].min()), float(p[:, 1].min()),
                float(p[:, 0].max()), float(p[:, 1].max()))

    def signed_area(self) -> float:
        """Area enclosed, positive for a counter-clockwise outline (exact for arcs)."""
        s = 0.0
        for a, b, arc in self.sides():
            s += 0.5 * (a[0] * b[1] - b[0] * a[1])
            if arc is not None:
                phi = arc.sweep(a, b)
                s += 0.5 * arc.radius(a) ** 2 * (phi - math.sin(phi))
        return s

    def area(self) -> float:
        return abs(self.signed_area())

    def perimeter(self) -> float:
        total = 0.0
        for a, b, arc in self.sides():
            total += math.dist(a, b) if arc is None else arc.radius(a) * abs(arc.sweep(a, b))
        return total

    def thickness(self) -> float:
        """Estimated width 2 area / perimeter (exact for a long strip; length unit)."""
        return 2.0 * self.area() / self.perimeter()

    def curvature_radius(self) -> float:
        """Smallest arc radius (inf when every side is straight)."""
        radii = [arc.radius(a) for a, _, arc in self.sides() if arc is not None]
        return min(radii) if radii else math.inf

    def shifted(self, dx: float, dy: float) -> Outline:
        return self.transformed(lambda p: (p[0] + dx, p[1] + dy), True)

    def transformed(self, f, keeps_orientation: bool) -> Outline:
        """The outline mapped by a similarity ``f`` (point -> point); a mirror flips arcs."""
        arcs = tuple(None if a is None else Arc(f(a.center), a.ccw == keeps_orientation)
                     for a in self.arcs)
        return Outline(tuple(f(v) for v in self.vertices), arcs)

    def contains(self, x, y) -> np.ndarray:
        """Which points (arrays ``x``, ``y``) lie inside (even-odd rule on the boundary
        sampled at 1/100 rad; points on the boundary may go either way)."""
        x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
        pts = np.column_stack([x.ravel(), y.ravel()])
        return _inside(self.polyline(100.0), pts).reshape(x.shape)

    def outline(self) -> np.ndarray:
        """Boundary points (m, 2), arcs sampled finely (for containment checks)."""
        return self.polyline(115.0)

    def occ(self, occ) -> int:
        """Draw the outline as an OCC plane surface; arcs in pieces of at most 90 degrees."""
        curves, centres = [], []
        first = occ.addPoint(self.vertices[0][0], self.vertices[0][1], 0.0)
        previous = first
        sides = self.sides()
        for k, (a, b, arc) in enumerate(sides):
            last = k == len(sides) - 1
            if arc is None:
                end = first if last else occ.addPoint(b[0], b[1], 0.0)
                curves.append(occ.addLine(previous, end))
            else:
                pieces = max(1, math.ceil(abs(arc.sweep(a, b)) / MAX_PIECE - 1e-9))
                pts = arc.points(a, b, pieces)
                centre = occ.addPoint(arc.center[0], arc.center[1], 0.0)
                centres.append(centre)
                for j in range(1, len(pts)):
                    end = first if (last and j == len(pts) - 1) else occ.addPoint(
                        pts[j][0], pts[j][1], 0.0)
                    curves.append(occ.addCircleArc(previous, centre, end))
                    previous = end
                continue
            previous = end
        loop = occ.addCurveLoop(curves)
        surface = occ.addPlaneSurface([loop])
        if centres:
            occ.remove([(0, c) for c in centres])
        return surface

    def problems(self) -> list[str]:
        """What is wrong with the outline as a region boundary (empty when fine)."""
        out = []
        size = max(self.bbox()[2] - self.bbox()[0], self.bbox()[3] - self.bbox()[1])
        for i, (a, b, _) in enumerate(self.sides(), start=1):
            if math.dist(a, b) <= TOLERANCE * size and len(self.vertices) > 1:
                out.append(f"side {i} has zero length at {_xy(a)}")
        if self.area() <= TOLERANCE**2 * size**2:
            out.append("the outline encloses no area")
        crossing = self_intersection(self.polyline())
        if crossing is not None:
            out.append(f"the outline crosses itself near {_xy(crossing)}")
        return out


def self_intersection(p: np.ndarray):
    """A point where the closed polyline ``p`` (m, 2) crosses itself, or None."""
    a = p
    b = np.roll(p, -1, axis=0)
    m = len(p)
    d = b - a
    for i in range(m):
        j = np.arange(i + 2, m)
        if i == 0:
            j = j[j != m - 1]
        if j.size == 0:
            continue
        r, s = d[i], d[j]
        denom = r[0] * s[:, 1] - r[1] * s[:, 0]
        q = a[j] - a[i]
        ok = np.abs(denom) > 1e-300
        t = np.where(ok, (q[:, 0] * s[:, 1] - q[:, 1] * s[:, 0]) / np.where(ok, denom, 1), -1)
        u = np.where(ok, (q[:, 0] * r[1] - q[:, 1] * r[0]) / np.where(ok, denom, 1), -1)
        hit = ok & (t >= 0) & (t <= 1) & (u >= 0) & (u <= 1)
        if hit.any():
            k = int(np.flatnonzero(hit)[0])
            return tuple(a[i] + t[k] * r)
    return None


def _inside(poly: np.ndarray, pts: np.ndarray) -> np.ndarray:
    x, y = pts[:, 0][:, None], pts[:, 1][:, None]
    x0, y0 = poly[:, 0][None, :], poly[:, 1][None, :]
    x1, y1 = np.roll(poly[:, 0], -1)[None, :], np.roll(poly[:, 1], -1)[None, :]
    cond = (y0 > y) != (y1 > y)
    with np.errstate(divide="ignore", invalid="ignore"):
        xc = x0 + (y - y0) * (x1 - x0) / (y1 - y0)
    return (np.count_nonzero(cond & (x < xc), axis=1) % 2) == 1


def rounded(vertices, arcs, corners) -> Outline:
    """An outline with corners rounded or cut.

    Parameters
    ----------
    vertices, arcs : sequences
        As for :class:`Outline`.
    corners : sequence
        Per vertex: None, ``("fillet", r)`` (a tangent arc of radius r > 0) or
        ``("chamfer", c)`` (a straight cut c > 0 from the corner along both sides).
        Only corners between two straight sides can be treated.

    Raises
    ------
    ValueError
        Naming the corner (counted from 1) when a treatment does not fit.
    """
    n = len(vertices)
    v = [np.asarray(p, dtype=float) for p in vertices]
    trim = [0.0] * n
    plan = [None] * n
    for i, corner in enumerate(corners):
        if corner is None:
            continue
        kind, size = corner
        if arcs[i - 1] is not None or arcs[i] is not None:
            raise ValueError(f"corner {i + 1}: a {kind} needs straight sides on both sides")
        p, c, q = v[i - 1], v[i], v[(i + 1) % n]
        u = (p - c) / np.linalg.norm(p - c)
        w = (q - c) / np.linalg.norm(q - c)
        theta = math.acos(max(-1.0, min(1.0, float(u @ w))))
        if theta > math.pi * (1 - 1e-9) or theta < 1e-9:
            raise ValueError(f"corner {i + 1} at {_xy(c)} is not a corner (the sides are "
                             "in line)")
        d = size / math.tan(theta / 2) if kind == "fillet" else size
        trim[i] = d
        plan[i] = (kind, size, u, w, theta)
    for i in range(n):
        j = (i + 1) % n
        length = float(np.linalg.norm(v[j] - v[i]))
        if trim[i] + trim[j] > length * (1 + 1e-9):
            where = [str(k + 1) for k in (i, j) if trim[k]]
            raise ValueError(f"corner {' and '.join(where)}: the {_kinds(plan, i, j)} does "
                             f"not fit: it needs {trim[i] + trim[j]:.6g} of side {i + 1}, which "
                             f"is {length:.6g} long")
    out_v, out_a = [], []
    for i in range(n):
        if plan[i] is None:
            out_v.append(tuple(v[i]))
            out_a.append(arcs[i])
            continue
        kind, size, u, w, theta = plan[i]
        t1, t2 = v[i] + u * trim[i], v[i] + w * trim[i]
        out_v.append(tuple(t1))
        if kind == "fillet":
            bis = (u + w) / np.linalg.norm(u + w)
            centre = v[i] + bis * size / math.sin(theta / 2)
            turn = (v[i] - v[i - 1])[0] * (v[(i + 1) % n] - v[i])[1] - \
                (v[i] - v[i - 1])[1] * (v[(i + 1) % n] - v[i])[0]
            out_a.append(Arc(tuple(centre), turn > 0))
        else:
            out_a.append(None)
        out_v.append(tuple(t2))
        out_a.append(arcs[i])
    return _without_repeats(out_v, out_a)


def _kinds(plan, i, j) -> str:
    kinds = sorted({plan[k][0] for k in (i, j) if plan[k] is not None})
    return " and ".join(kinds)


def _without_repeats(vertices, arcs) -> Outline:
    """Drop zero-length straight sides left where two roundings meet."""
    size = max(max(abs(c) for p in vertices for c in p), 1e-300)
    keep_v, keep_a = [], []
    n = len(vertices)
    for i in range(n):
        nxt = vertices[(i + 1) % n]
        if arcs[i] is None and math.dist(vertices[i], nxt) <= 1e-9 * size:
            continue
        keep_v.append(vertices[i])
        keep_a.append(arcs[i])
    return Outline(tuple(keep_v), tuple(keep_a))


def half_disk(center_z: float, radius: float) -> Outline:
    """The half-disk r >= 0 of a circle centred on the axis: a sphere in an axisymmetric model."""
    return Outline(((0.0, center_z - radius), (0.0, center_z + radius)),
                   (Arc((0.0, center_z), True), None))


def half_ring(center_z: float, inner: float, outer: float) -> Outline:
    """The half-annulus r >= 0 of a ring centred on the axis: a spherical shell."""
    z = center_z
    return Outline(((0.0, z - outer), (0.0, z + outer), (0.0, z + inner), (0.0, z - inner)),
                   (Arc((0.0, z), True), None, Arc((0.0, z), False), None))


@register_shape("with-holes")
@dataclass(frozen=True)
class WithHoles:
    """A shape with other shapes cut out of it (holes show what lies beneath)."""

    outer: object
    holes: tuple

    def bbox(self):
        return self.outer.bbox()

    def area(self) -> float:
        return self.outer.area() - sum(h.area() for h in self.holes)

    def perimeter(self) -> float:
        return sum(getattr(s, "perimeter", lambda: 0.0)() for s in (self.outer, *self.holes))

    def thickness(self) -> float:
        return min([self.outer.thickness()] + [h.thickness() for h in self.holes])

    def contains(self, x, y) -> np.ndarray:
        """Which points lie in the shape and in none of its holes."""
        from whorl.meshes.validate import contains

        inside = contains(self.outer, x, y)
        for hole in self.holes:
            inside &= ~contains(hole, x, y)
        return inside

    def outline(self) -> np.ndarray:
        from whorl.meshes.validate import _outline

        return _outline(self.outer)

    def curvature_radius(self) -> float:
        return min([self.outer.curvature_radius()] + [h.curvature_radius() for h in self.holes])

    def shifted(self, dx: float, dy: float) -> WithHoles:
        from whorl.meshes.shapes import shifted
        return WithHoles(shifted(self.outer, dx, dy), tuple(shifted(h, dx, dy) for h in self.holes))

    def occ(self, occ):
        """The OCC surfaces left after the cut (a list when the holes split the shape)."""
        outer = self.outer.occ(occ)
        holes = [(2, h.occ(occ)) for h in self.holes]
        out, _ = occ.cut([(2, outer)], holes)
        tags = [t for d, t in out if d == 2]
        if not tags:
            raise ValueError("the holes cover the whole shape")
        return tags[0] if len(tags) == 1 else tags
