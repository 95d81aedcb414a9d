"""The ``[[motion]]`` tables: conductors in steady rigid motion.

A translation (``velocity``: planar [vx, vy], axisymmetric [0, vz]) or, in planar
models, a rotation (``angular_velocity`` about ``center``). The motion must leave
each moving region's shape unchanged, so that the field is steady in the frame
of the sources:

- translation: the region is a band along the velocity that runs through the
  model (every point of it, moved along the velocity either way, stays in the
  region until it leaves the domain): a strip or a billet longer than the model;
- rotation: the region is a circle or a ring centred on ``center``.

Each problem is a :class:`CaseError` naming the key path and why.
"""

from __future__ import annotations

import math

import numpy as np

from whorl.cases.read_regions import expand
from whorl.cases.reader import Context, Table, array_of_tables
from whorl.meshes.shapes import Circle, Ring
from whorl.meshes.validate import contains
from whorl.solver.motion import STABILISATION, Rotation, Translation

KEYS = {"regions", "velocity", "angular_velocity", "center", "stabilisation"}


def read_motions(ctx: Context, document: dict, entries, domain, conductivity,
                 wound: set[str]) -> tuple:
    """The motions of the case as solver objects (SI: m/s, rad/s, centre in m).

    ``entries`` are the regions as read (shapes in the length unit), ``domain`` the
    domain spec, ``conductivity(region)`` in S/m and ``wound`` the regions of
    stranded sources.
    """
    shapes = {e.spec.name: e.spec.shape for e in entries}
    names = list(shapes)
    moved: dict[str, str] = {}
    out = []
    for table in array_of_tables(ctx, document, "motion"):
        table.allow(KEYS, required=("regions",))
        regions = expand(table.names("regions"), names, table, "regions")
        for i, r in enumerate(regions, start=1):
            key = f"regions[{i}]"
            if conductivity(r) <= 0:
                raise table.error(key, f"region {r!r} does not conduct (conductivity 0): only "
                                       "conductors move")
            if r in wound:
                raise table.error(key, f"region {r!r} is a stranded winding: a winding "
                                       "carries no eddy currents and its motion has no effect")
            if r in moved:
                raise table.error(key, f"region {r!r} already moves in {moved[r]}: a region "
                                       "takes part in one motion only")
            moved[r] = table.path
        mode = table.string("stabilisation", "auto", STABILISATION)
        if table.has("velocity") == table.has("angular_velocity"):
            raise table.error(None, "give either 'velocity' (a translation) or "
                                    "'angular_velocity' with 'center' (a rotation)")
        if table.has("velocity"):
            if table.has("center"):
                raise table.error("center", "'center' belongs to a rotation "
                                            "('angular_velocity'), not a translation")
            out.append(_translation(ctx, table, regions, shapes, domain, mode))
        else:
            out.append(_rotation(ctx, table, regions, shapes, mode))
    return tuple(out)


def _translation(ctx, table: Table, regions, shapes, domain, mode) -> Translation:
    velocity = table.vector("velocity", "velocity", 2, geometry=False)
    if ctx.axisymmetric and velocity[0] != 0:
        raise table.error("velocity[1]", f"a velocity across the axis (v_r = {velocity[0]:g} "
                                         "m/s): in an axisymmetric model bodies move along "
                                         "the axis only, velocity = [0, vz]")
    if math.hypot(*velocity) == 0:
        return Translation(tuple(regions), velocity, mode)  # at rest (a sweep's first point)
    for r in regions:
        why = _not_a_band(shapes[r], velocity, domain)
        if why:
            raise table.error("velocity", f"region {r!r}: the motion would change its shape "
                                          f"({why}); a translating region must be a band "
                                          "along the velocity that runs through the model")
    return Translation(tuple(regions), velocity, mode)


def _rotation(ctx, table: Table, regions, shapes, mode) -> Rotation:
    if ctx.axisymmetric:
        raise table.error("angular_velocity", "rotation in an axisymmetric model: bodies "
                                              "there only move along the axis (velocity)")
    omega = _angular_velocity(table)
    if not table.has("center"):
        raise table.error("center", "a rotation needs its 'center' [x, y]")
    center = table.point("center")
    for r in regions:
        shape = shapes[r]
        if not isinstance(shape, Circle | Ring):
            raise table.error("regions", f"region {r!r} is a {getattr(shape, 'kind', 'shape')}"
                                         ": the rotation would change its shape; a rotating "
                                         "region must be a circle or ring centred on 'center'")
        size = shape.radius if isinstance(shape, Circle) else shape.outer
        if math.dist(shape.center, center) > 1e-9 * max(size, 1e-300):
            raise table.error("center", f"region {r!r} is centred at ({shape.center[0]:g}, "
                                        f"{shape.center[1]:g}), not on the centre of rotation "
                                        f"({center[0]:g}, {center[1]:g}): the rotation would "
                                        "change its shape")
    centre_m = (center[0] * ctx.unit_m, center[1] * ctx.unit_m)
    return Rotation(tuple(regions), omega, centre_m, mode)


def _angular_velocity(table: Table) -> float:
    raw = table.raw("angular_velocity")
    if isinstance(raw, str) and "hz" in raw.lower():
        raise table.error("angular_velocity", f"{raw!r}: give an angular velocity in rpm or "
                                              "rad/s (a frequency in Hz is ambiguous here: "
                                              "write '3000 rpm' or '314.2 rad/s')")
    return table.value("angular_velocity", "angular_velocity")


# ------------------------------------------------------------------ shape invariance


def _not_a_band(shape, velocity, domain) -> str | None:
    """Why ``shape`` is not invariant under translation along ``velocity`` within the
    domain (None when it is). Checked on a grid of points of the region, each moved
    along the velocity both ways in small steps."""
    if contains(shape, np.zeros(1), np.zeros(1)) is None:
        return f"whorl cannot check a {getattr(shape, 'kind', 'shape')} for this"
    x0, y0, x1, y1 = shape.bbox()
    size = max(x1 - x0, y1 - y0)
    # points strictly inside (shrunk grid), so that boundaries do not decide
    gx, gy = np.meshgrid(np.linspace(x0, x1, 41)[1:-1], np.linspace(y0, y1, 41)[1:-1])
    pts = np.array([gx.ravel(), gy.ravel()])
    pts = pts[:, contains(shape, *pts)]
    if pts.size == 0:
        return None
    if domain.shape == "circle":
        reach = 2 * domain.radius
    else:
        reach = math.hypot(*domain.size)
    direction = np.asarray(velocity, dtype=float) / math.hypot(*velocity)
    steps = np.linspace(0.0, reach, max(int(80 * reach / max(size, 1e-300)), 200))[1:]
    tol = 1e-9 * max(reach, size)
    for sign in (1.0, -1.0):
        for s in steps:
            moved = pts + sign * s * direction[:, None]
            in_domain = _in_domain(domain, moved[0], moved[1], tol)
            if not in_domain.any():
                break
            keep = in_domain & ~contains(shape, *moved)
            if keep.any():
                k = int(np.flatnonzero(keep)[0])
                return (f"the point ({moved[0, k]:g}, {moved[1, k]:g}) would pass from the "
                        "region into the rest of the model")
    return None


def _in_domain(domain, x, y, tol) -> np.ndarray:
    """Strictly inside the domain (a point on its side has left the model)."""
    if domain.shape == "circle":
        return np.hypot(x, y) < domain.radius - tol
    (cx, cy), (w, h) = domain.corner, domain.size
    return (cx + tol < x) & (x < cx + w - tol) & (cy + tol < y) & (y < cy + h - tol)
