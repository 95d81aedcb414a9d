"""Region outlines from a DXF drawing (read with ezdxf).

One layer of a drawing's model space becomes one or more region shapes:

- closed ``LWPOLYLINE`` and 2D ``POLYLINE`` (straight segments and bulge arcs), ``CIRCLE``,
  closed ``ELLIPSE`` and ``SPLINE`` (flattened to straight segments that stay within
  ``tolerance`` of the curve), and closed chains of ``LINE``, ``ARC``, open polylines,
  elliptical arcs and open splines whose ends meet (within 1e-6 of the drawing's size);
- an outline inside another one on the same layer is a hole in it; an outline inside a
  hole is a part again, and so on;
- the parts are returned largest first (by the area they enclose; parts of equal area
  from the bottom up, then from left to right).

Coordinates: drawing units (``$INSUNITS`` in the file's header when it names a length,
else the model's length unit) times ``scale``, turned by ``rotate`` degrees
counter-clockwise about the drawing's origin, then moved by ``offset`` (model length
unit). Errors are :class:`DrawingError` with a message naming the layer, the entity type
and where it is.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from whorl.meshes.outline import Arc, Outline, WithHoles

#: $INSUNITS codes of lengths -> metres (the DXF reference's table of drawing units).
INSUNITS_M = {1: 0.0254, 2: 0.3048, 4: 1e-3, 5: 1e-2, 6: 1.0, 7: 1e3, 8: 2.54e-8,
              9: 2.54e-5, 10: 0.9144, 13: 1e-6, 14: 0.1, 15: 10.0}
#: Ends of curves closer than this fraction of the drawing's size are joined.
JOIN = 1e-6
SUPPORTED = ("LWPOLYLINE", "POLYLINE", "CIRCLE", "ELLIPSE", "SPLINE", "LINE", "ARC")


class DrawingError(ValueError):
    """A drawing that cannot be turned into region outlines (the message says why)."""


@dataclass(frozen=True)
class Placement:
    """How drawing coordinates map to the model (see the module notes)."""

    unit_m: float  # metres per model length unit
    scale: float = 1.0
    offset: tuple[float, float] = (0.0, 0.0)
    rotate_deg: float = 0.0
    tolerance: float = 1e-3  # model length unit: largest gap between a curve and its chords


@dataclass
class _Piece:
    """A curve read from one entity: points and per-segment arcs (None: straight)."""

    points: list
    arcs: list
    what: str  # "LINE at (x, y)" etc. for messages

    def reversed(self) -> _Piece:
        arcs = [None if a is None else Arc(a.center, not a.ccw) for a in reversed(self.arcs)]
        return _Piece(list(reversed(self.points)), arcs, self.what)


def read_drawing(path, layer: str, placement: Placement) -> tuple[list, float]:
    """The region shapes on ``layer`` of the DXF file at ``path``.

    Returns
    -------
    shapes : list of Outline or WithHoles
        Largest first, in the model's length unit.
    factor : float
        Model length units per drawing unit (units and scale).

    Raises
    ------
    DrawingError
        Unreadable file, unknown or empty layer, unsupported entity, open or
        self-crossing outline.
    """
    import ezdxf

    try:
        doc = ezdxf.readfile(str(path))
    except OSError as err:
        raise DrawingError(f"cannot read the drawing: {err}") from None
    except ezdxf.DXFError as err:
        raise DrawingError(f"not a readable DXF drawing: {err}") from None
    msp = doc.modelspace()
    names = sorted({e.dxf.layer for e in msp} | {lay.dxf.name for lay in doc.layers})
    wanted = [e for e in msp if e.dxf.layer.lower() == layer.lower()]
    if not wanted:
        raise DrawingError(f"nothing on layer {layer!r}; the drawing's layers: "
                           f"{', '.join(repr(n) for n in names) or 'none'}")
    code = doc.header.get("$INSUNITS", 0)
    unit = INSUNITS_M.get(code)
    factor = placement.scale * (unit / placement.unit_m if unit else 1.0)
    chord = placement.tolerance / factor  # drawing units
    pieces = [_piece(e, chord, layer) for e in wanted]
    size = max(max(abs(c) for p in pieces for q in p.points for c in q), 1e-300)
    loops = _loops(pieces, JOIN * size, layer)
    place = _placer(factor, placement)
    outlines = []
    for loop in loops:
        outline = Outline(tuple(loop.points[:-1]), tuple(loop.arcs)).transformed(place, True)
        problems = outline.problems()
        if problems:
            raise DrawingError(f"layer {layer!r}: the outline of {loop.what}: "
                               f"{'; '.join(problems)}")
        outlines.append(outline)
    return _nest(outlines), factor


def _placer(factor: float, placement: Placement):
    c = math.cos(math.radians(placement.rotate_deg))
    s = math.sin(math.radians(placement.rotate_deg))
    dx, dy = placement.offset

    def place(p):
        x, y = p[0] * factor, p[1] * factor
        return (c * x - s * y + dx, s * x + c * y + dy)

    return place


def _where(e) -> str:
    for attr in ("center", "start", "insert", "location"):
        if e.dxf.hasattr(attr):
            v = e.dxf.get(attr)
            return f"{e.dxftype()} at ({v[0]:g}, {v[1]:g})"
    p = None
    if e.dxftype() == "LWPOLYLINE" and len(e):
        p = e[0]
    elif e.dxftype() == "POLYLINE" and len(e.vertices):
        p = e.vertices[0].dxf.location
    if p is not None:
        return f"{e.dxftype()} at ({p[0]:g}, {p[1]:g})"
    return f"{e.dxftype()} (handle {e.dxf.handle})"


def _mirror(e) -> bool:
    """Whether the entity's plane is seen from below (extrusion (0, 0, -1): x flips)."""
    if not e.dxf.hasattr("extrusion"):
        return False
    ex = e.dxf.extrusion
    if abs(ex[0]) > 1e-9 or abs(ex[1]) > 1e-9:
        raise DrawingError(f"{_where(e)} does not lie in the drawing plane (extrusion "
                           f"{tuple(ex)})")
    return ex[2] < 0


def _piece(e, chord: float, layer: str) -> _Piece:
    kind = e.dxftype()
    what = _where(e)
    if kind not in SUPPORTED:
        raise DrawingError(f"layer {layer!r}: {what} is not supported (supported: "
                           f"{', '.join(SUPPORTED)})")
    if kind in ("LWPOLYLINE", "POLYLINE"):
        if kind == "POLYLINE" and not e.is_2d_polyline:
            raise DrawingError(f"layer {layer!r}: {what} is a 3D polyline or mesh, which is "
                               "not supported")
        if kind == "LWPOLYLINE":
            pts = [(x, y, b) for x, y, b in e.get_points("xyb")]
            closed = e.closed
        else:
            pts = [(v.dxf.location[0], v.dxf.location[1], v.dxf.bulge) for v in e.vertices]
            closed = e.is_closed
        if len(pts) > 2 and math.dist(pts[0][:2], pts[-1][:2]) == 0:
            closed = True  # drawn back to its start: the last point repeats the first
            pts = pts[:-1]
        points = [p[:2] for p in pts]
        count = len(points) if closed else len(points) - 1
        arcs = [_bulge_arc(points[i], points[(i + 1) % len(points)], pts[i][2])
                for i in range(count)]
        if closed:
            points = [*points, points[0]]
        piece = _Piece(points, arcs, what)
    elif kind == "CIRCLE":
        (cx, cy, _), r = e.dxf.center, e.dxf.radius
        piece = _Piece([(cx + r, cy), (cx - r, cy), (cx + r, cy)],
                       [Arc((cx, cy)), Arc((cx, cy))], what)
    elif kind == "ARC":
        (cx, cy, _), r = e.dxf.center, e.dxf.radius
        a0, a1 = math.radians(e.dxf.start_angle), math.radians(e.dxf.end_angle)
        piece = _Piece([(cx + r * math.cos(a0), cy + r * math.sin(a0)),
                        (cx + r * math.cos(a1), cy + r * math.sin(a1))], [Arc((cx, cy))], what)
    elif kind == "LINE":
        s, t = e.dxf.start, e.dxf.end
        piece = _Piece([(s[0], s[1]), (t[0], t[1])], [None], what)
    else:  # ELLIPSE, SPLINE: chords within the tolerance
        points = [(v[0], v[1]) for v in e.flattening(chord)]
        if kind == "SPLINE" and e.closed and math.dist(points[0], points[-1]) > 0:
            points.append(points[0])
        piece = _Piece(points, [None] * (len(points) - 1), what)
    if _mirror(e):
        piece = _Piece([(-x, y) for x, y in piece.points],
                       [None if a is None else Arc((-a.center[0], a.center[1]), not a.ccw)
                        for a in piece.arcs], what)
    return piece


def _bulge_arc(a, b, bulge: float):
    """The arc of a polyline segment from ``a`` to ``b`` with ``bulge`` = tan(sweep / 4)
    (positive: counter-clockwise), or None for a straight segment."""
    if abs(bulge) < 1e-12:
        return None
    theta = 4.0 * math.atan(bulge)
    c = math.dist(a, b)
    mx, my = (a[0] + b[0]) / 2, (a[1] + b[1]) / 2
    nx, ny = -(b[1] - a[1]) / c, (b[0] - a[0]) / c  # left of the chord
    d = (c / 2) / math.tan(theta / 2)
    return Arc((mx + nx * d, my + ny * d), bulge > 0)


def _loops(pieces: list[_Piece], tol: float, layer: str) -> list[_Piece]:
    """Closed pieces as they are; open ones joined end to end into closed chains."""
    closed, open_ = [], []
    for p in pieces:
        (closed if math.dist(p.points[0], p.points[-1]) <= tol and len(p.arcs) > 1
         else open_).append(p)
    while open_:
        chain = open_.pop(0)
        names = [chain.what]
        while math.dist(chain.points[0], chain.points[-1]) > tol or len(chain.arcs) < 2:
            end = chain.points[-1]
            matches = [(i, False) for i, p in enumerate(open_)
                       if math.dist(p.points[0], end) <= tol]
            matches += [(i, True) for i, p in enumerate(open_)
                        if math.dist(p.points[-1], end) <= tol]
            if not matches:
                raise DrawingError(f"layer {layer!r}: the outline is not closed: the chain "
                                   f"{', '.join(names)} ends at ({end[0]:g}, {end[1]:g}) "
                                   "where no other curve starts")
            if len(matches) > 1:
                raise DrawingError(f"layer {layer!r}: three or more curves meet at "
                                   f"({end[0]:g}, {end[1]:g})")
            i, flip = matches[0]
            nxt = open_.pop(i)
            nxt = nxt.reversed() if flip else nxt
            chain = _Piece(chain.points + nxt.points[1:], chain.arcs + nxt.arcs, chain.what)
            names.append(nxt.what)
        chain.points[-1] = chain.points[0]
        chain.what = ", ".join(names)
        closed.append(chain)
    return closed


def _nest(outlines: list[Outline]) -> list:
    """Outlines inside others become holes (even depth: a part; odd: a hole in its parent)."""
    def key(i):  # largest first; equal areas bottom to top, then left to right
        x0, y0, _, _ = outlines[i].bbox()
        return (-float(f"{outlines[i].area():.9g}"), round(y0, 9), round(x0, 9))

    order = sorted(range(len(outlines)), key=key)
    parent = {}
    for k, i in enumerate(order):
        x, y = outlines[i].vertices[0]
        inside = [j for j in order[:k] if outlines[j].contains(x, y)]
        parent[i] = inside[-1] if inside else None  # the smallest that holds it
    depth = {}
    for i in order:
        depth[i] = 0 if parent[i] is None else depth[parent[i]] + 1
    parts = []
    for i in order:
        if depth[i] % 2:
            continue
        holes = tuple(outlines[j] for j in order if parent[j] == i)
        parts.append(WithHoles(outlines[i], holes) if holes else outlines[i])
    return parts
