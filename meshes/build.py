"""Geometry -> gmsh (in-process, headless) -> a tagged scikit-fem triangle mesh.

The model is drawn with the OpenCASCADE kernel in the case's length unit: the
domain and every region's shape, fragmented together so the mesh is conforming.
A fragment belongs to the *last* region that contains it (a later region covers
an earlier one); fragments in no region form the background ``"domain"``.
Element sizes come from :mod:`.sizing` through gmsh size fields: for every region
whose surface size is below the global maximum, a Distance field from its boundary
curves feeds a Threshold field that grows linearly with the distance (geometric
growth of neighbouring elements); regions with a ``mesh_size`` add a Constant
field inside; the Min of all is the background size field.

The result is in metres (coordinates times ``Geometry.unit_m``): straight triangles,
or with order 2 quadratic triangles whose edges on curves follow them (:mod:`.curved`).
"""

from __future__ import annotations

import math
import time

import gmsh
import numpy as np
import skfem

from whorl.meshes.curved import quadratic_mesh
from whorl.meshes.errors import MeshError
from whorl.meshes.geometry import DomainSpec, Geometry
from whorl.meshes.sizing import SizingPlan, domain_bbox, sizing_plan
from whorl.meshes.tagged import KelvinMap, TaggedMesh

BACKGROUND = "domain"
_TRIANGLE = 2  # gmsh element type: 3-node triangle
_LINE = 1  # gmsh element type: 2-node line
_TRIANGLE6 = 9  # gmsh element type: 6-node triangle (corners, then mid-edge nodes 01 12 20)
_LINE3 = 8  # gmsh element type: 3-node line (ends, then the middle)


def curved(geometry: Geometry) -> bool:
    """Whether the mesh gets mid-edge nodes on the true curves: order 2, ``curved``, and
    some boundary is curved (a straight-sided model keeps the cheaper affine elements)."""
    if geometry.options.order < 2 or not geometry.options.curved:
        return False
    if geometry.domain.shape == "circle":
        return True
    return any(math.isfinite(getattr(r.shape, "curvature_radius", lambda: math.inf)())
               for r in geometry.regions)


def build_mesh(geometry: Geometry, progress=None) -> TaggedMesh:
    """Mesh ``geometry`` with gmsh and return it as a :class:`TaggedMesh` in metres.

    Parameters
    ----------
    geometry : Geometry
        Regions, domain and sizing options; coordinates in the length unit.
    progress : callable, optional
        ``progress(message: str)``, called at each stage.

    Returns
    -------
    TaggedMesh
        First-order triangles in metres; subdomains per region and ``"domain"``
        (the background), boundaries per domain side; ``info`` holds the counts
        (``nodes``, ``elements``, ``elements_per_region``), the quality (radius
        ratio, 1 for an equilateral triangle: ``quality_min``, ``quality_mean``),
        the sizes used (``max_size``, ``surface_sizes``, length unit) and
        ``time_s``.

    Raises
    ------
    MeshError
        A region outside the domain, a region covered entirely by later ones,
        a duplicate or reserved region name, or a gmsh failure.
    """
    say = progress if progress is not None else (lambda message: None)
    start = time.perf_counter()
    _check_names(geometry)
    try:
        plan = sizing_plan(geometry)
    except ValueError as err:
        raise MeshError(str(err)) from err
    initialised_here = not gmsh.isInitialized()
    if initialised_here:
        _initialize()
    model = f"whorl-{id(geometry):x}"
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.logger.start()
        gmsh.model.add(model)
        gmsh.model.setCurrent(model)
        _set_options(geometry, plan)
        say("drawing geometry")
        owners, covered = _draw(geometry)
        sides = _side_curves(geometry)
        kelvin = _exterior_disk(geometry, owners, sides) if geometry.domain.open_boundary else None
        _physical_groups(geometry, owners, sides)
        say("setting size fields")
        _size_fields(geometry, plan, owners)
        say("meshing")
        try:
            gmsh.model.mesh.generate(2)
            if curved(geometry):
                gmsh.model.mesh.setOrder(2)
        except Exception as err:  # gmsh raises plain Exception
            raise MeshError(f"gmsh failed to mesh: {err}{_log_tail()}") from err
        say("tagging mesh")
        tagged = _to_skfem(geometry, owners, sides)
        if kelvin is not None:
            tagged.kelvin = _kelvin_map(tagged, geometry, kelvin)
    finally:
        try:
            gmsh.logger.stop()
            gmsh.model.remove()
        finally:
            if initialised_here:
                gmsh.finalize()
    q = _radius_ratio(tagged.mesh.p, tagged.mesh.t)
    tagged.info.update(
        nodes=int(tagged.mesh.p.shape[1]),
        elements=int(tagged.mesh.t.shape[1]),
        elements_per_region={n: int(len(e)) for n, e in tagged.mesh.subdomains.items()},
        quality_measure="radius ratio",
        quality_min=float(q.min()),
        quality_mean=float(q.mean()),
        max_size=plan.max_size,
        surface_sizes={r.name: r.surface for r in plan.regions},
        time_s=time.perf_counter() - start,
        covered=covered,
    )
    say(f"mesh ready: {tagged.info['nodes']} nodes, {tagged.info['elements']} elements")
    return tagged


def covered_regions(geometry: Geometry) -> list[tuple[str, str]]:
    """Pairs (earlier, later) of regions where the later one covers part of the earlier,
    from drawing and fragmenting the geometry without meshing it (fast; for checks)."""
    initialised_here = not gmsh.isInitialized()
    if initialised_here:
        _initialize()
    model = f"whorl-check-{id(geometry):x}"
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add(model)
        gmsh.model.setCurrent(model)
        _, covered = _draw(geometry)
    finally:
        try:
            gmsh.model.remove()
        finally:
            if initialised_here:
                gmsh.finalize()
    return covered


def _initialize():
    try:
        gmsh.initialize(interruptible=False)
    except TypeError:  # older gmsh without the keyword
        gmsh.initialize()


def _log_tail(lines: int = 5) -> str:
    try:
        log = [m for m in gmsh.logger.get() if "Error" in m or "Warning" in m]
    except Exception:
        return ""
    return (" (gmsh: " + "; ".join(log[-lines:]) + ")") if log else ""


def _check_names(geometry: Geometry):
    seen = set()
    for region in geometry.regions:
        if region.name == BACKGROUND:
            raise MeshError(f"region name '{BACKGROUND}' is reserved for the background")
        if region.name in seen:
            raise MeshError(f"region '{region.name}' is defined twice")
        seen.add(region.name)


def _set_options(geometry: Geometry, plan: SizingPlan):
    opt = gmsh.option.setNumber
    options = geometry.options
    if options.threads:
        opt("General.NumThreads", options.threads)
    opt("Mesh.Algorithm", options.algorithm)
    opt("Mesh.ElementOrder", 1)
    opt("Mesh.MeshSizeFromPoints", 0)
    opt("Mesh.MeshSizeFromCurvature", 0)
    opt("Mesh.MeshSizeExtendFromBoundary", 0)
    opt("Mesh.MeshSizeMin", 0.0)
    opt("Mesh.MeshSizeMax", plan.max_size)


def _domain_surface(occ, domain: DomainSpec, axisymmetric: bool) -> int:
    if domain.shape == "circle":
        r = domain.radius
        disk = occ.addDisk(0.0, 0.0, 0.0, r, r)
        if not axisymmetric:
            return disk
        left = occ.addRectangle(-2.0 * r, -2.0 * r, 0.0, 2.0 * r, 4.0 * r)
        out, _ = occ.cut([(2, disk)], [(2, left)])
        return out[0][1]
    if domain.shape == "rectangle":
        (x, y), (w, h) = domain.corner, domain.size
        return occ.addRectangle(x, y, 0.0, w, h)
    raise MeshError(f"unknown domain shape '{domain.shape}'")


def _draw(geometry: Geometry) -> tuple[dict[str, list[int]], list[tuple[str, str]]]:
    """Draw, fragment and assign fragments: region name (and background) -> surface tags,
    and the pairs (earlier, later) of regions where the later one covers part of the
    earlier."""
    occ = gmsh.model.occ
    domain = _domain_surface(occ, geometry.domain, geometry.axisymmetric)
    shapes = []
    for region in geometry.regions:
        try:
            drawn = region.shape.occ(occ)
        except Exception as err:
            raise MeshError(f"region '{region.name}': cannot draw its shape: {err}") from err
        shapes.append([(2, t) for t in (drawn if isinstance(drawn, list) else [drawn])])
    try:
        _, parts = occ.fragment([(2, domain)], [s for group in shapes for s in group])
    except Exception as err:
        raise MeshError(f"cannot combine the regions: {err}{_log_tail()}") from err
    inside = {tag for dim, tag in parts[0] if dim == 2}
    owner = {tag: None for tag in inside}
    covered = set()  # (earlier region, later region that covers part of it)
    pieces_of = iter(parts[1:])
    for region, group in zip(geometry.regions, shapes, strict=True):
        for _ in group:
            for dim, tag in next(pieces_of):
                if dim == 2:
                    if owner.get(tag) is not None and owner[tag] != region.name:
                        covered.add((owner[tag], region.name))
                    owner[tag] = region.name
    stray = [tag for tag in owner if tag not in inside]
    for tag in stray:
        name = owner.pop(tag)
        region = next(r for r in geometry.regions if r.name == name)
        if occ.getMass(2, tag) > 1e-9 * max(region.shape.area(), 1e-300):
            raise MeshError(f"region '{name}' reaches outside the domain")
        occ.remove([(2, tag)], recursive=True)
    occ.synchronize()
    owners = {region.name: [] for region in geometry.regions}
    owners[BACKGROUND] = []
    for tag, name in sorted(owner.items()):
        owners[BACKGROUND if name is None else name].append(tag)
    for region in geometry.regions:
        if not owners[region.name]:
            raise MeshError(f"region '{region.name}' is covered entirely by later regions")
    return owners, sorted(covered)


def _side_curves(geometry: Geometry) -> dict[str, list[int]]:
    """Outer boundary curves of the model sorted into the domain's sides."""
    domain, axisym = geometry.domain, geometry.axisymmetric
    names = domain.sides(axisym)
    x0, y0, x1, y1 = domain_bbox(domain, axisym)
    tol = 1e-6 * max(x1 - x0, y1 - y0)
    surfaces = [(2, t) for _, t in gmsh.model.getEntities(2)]
    curves = sorted({abs(t) for _, t in gmsh.model.getBoundary(surfaces, combined=True)})
    sides = {name: [] for name in names}
    for tag in curves:
        a, b, _, c, d, _ = gmsh.model.getBoundingBox(1, tag)
        vertical, horizontal = c - a < tol, d - b < tol
        if domain.shape == "circle":
            side = "axis" if axisym and vertical and abs(a) < tol else "outer"
        elif vertical and abs(a - x0) < tol:
            side = names[0]  # "left", or "axis" on r = 0
        elif vertical and abs(a - x1) < tol:
            side = "right"
        elif horizontal and abs(b - y0) < tol:
            side = "bottom"
        elif horizontal and abs(b - y1) < tol:
            side = "top"
        else:
            raise MeshError(f"boundary curve {tag} lies on no side of the domain")
        sides[side].append(tag)
    return sides


def _exterior_disk(geometry: Geometry, owners, sides):
    """Add the exterior disk of an open boundary beside the domain (a copy of the domain
    circle shifted by 3 radii; along z in axisymmetric models so it stays on the axis) and
    make its arc's mesh a translated copy of the domain's. Returns the offset."""
    domain = geometry.domain
    if domain.shape != "circle":
        raise MeshError("an open boundary needs a circle domain")
    occ = gmsh.model.occ
    r = domain.radius
    offset = (0.0, 3.0 * r) if geometry.axisymmetric else (3.0 * r, 0.0)
    outer = sides["outer"]
    surface = _domain_surface(occ, DomainSpec("circle", radius=r), geometry.axisymmetric)
    occ.translate([(2, surface)], offset[0], offset[1], 0.0)
    centre = None if geometry.axisymmetric else occ.addPoint(offset[0], offset[1], 0.0)
    occ.synchronize()
    curves = [abs(t) for _, t in gmsh.model.getBoundary([(2, surface)], oriented=False)]
    arc, axis = [], []
    for tag in curves:
        a, _, _, c, _, _ = gmsh.model.getBoundingBox(1, tag)
        on_axis = geometry.axisymmetric and c - a < 1e-6 * r and abs(a) < 1e-6 * r
        (axis if on_axis else arc).append(tag)
    if len(arc) != len(outer):
        raise MeshError("open boundary: regions must not touch the domain's circle")
    matched = []
    for tag in outer:  # pair each domain arc with its translated copy by their centres
        bb = np.array(gmsh.model.getBoundingBox(1, tag))
        best = min(arc, key=lambda t: np.abs(np.array(gmsh.model.getBoundingBox(1, t))
                                             - bb - [*offset, 0, *offset, 0]).sum())
        matched.append(best)
    shift = [1, 0, 0, offset[0], 0, 1, 0, offset[1], 0, 0, 1, 0, 0, 0, 0, 1]
    gmsh.model.mesh.setPeriodic(1, matched, outer, shift)
    if centre is not None:
        gmsh.model.mesh.embed(0, [centre], 2, surface)
    owners["exterior"] = [surface]
    sides["exterior-arc"] = matched
    if axis:
        sides["exterior-axis"] = axis
    return offset


def _kelvin_map(tagged: TaggedMesh, geometry: Geometry, offset) -> KelvinMap:
    scale = geometry.unit_m
    p = tagged.mesh.p
    centre = int(np.argmin((p[0] - offset[0] * scale) ** 2 + (p[1] - offset[1] * scale) ** 2))
    return KelvinMap(geometry.domain.radius * scale, (offset[0] * scale, offset[1] * scale),
                     centre)


def _physical_groups(geometry, owners, sides):
    names = [r.name for r in geometry.regions] + [BACKGROUND]
    names += [n for n in owners if n not in names]
    for tag, name in enumerate(names, start=1):
        if owners[name]:
            gmsh.model.addPhysicalGroup(2, owners[name], tag, name=name)
    for tag, (name, curves) in enumerate(sides.items(), start=len(names) + 1):
        if curves:
            gmsh.model.addPhysicalGroup(1, curves, tag, name=name)


def _size_fields(geometry: Geometry, plan: SizingPlan, owners):
    """Background size field; regions of equal sizes share fields (fewer evaluations)."""
    field = gmsh.model.mesh.field
    graded, capped = {}, {}
    for sizing in plan.regions:
        surfaces = owners[sizing.name]
        if sizing.surface < plan.max_size:
            boundary = gmsh.model.getBoundary([(2, t) for t in surfaces], combined=True)
            graded.setdefault(sizing.surface, set()).update(abs(t) for _, t in boundary)
        if sizing.interior < plan.max_size:
            capped.setdefault(sizing.interior, []).extend(surfaces)
    fields = []
    for surface, curves in sorted(graded.items()):
        curves = sorted(curves)
        longest = max(gmsh.model.occ.getMass(1, c) for c in curves)
        dist = field.add("Distance")
        field.setNumbers(dist, "CurvesList", curves)
        field.setNumber(dist, "Sampling", min(int(math.ceil(2.0 * longest / surface)) + 2, 200000))
        grade = field.add("Threshold")
        field.setNumber(grade, "InField", dist)
        field.setNumber(grade, "SizeMin", surface)
        field.setNumber(grade, "SizeMax", plan.max_size)
        field.setNumber(grade, "DistMin", 0.0)
        field.setNumber(grade, "DistMax", plan.grading_distance(surface))
        fields.append(grade)
    for interior, surfaces in sorted(capped.items()):
        cap = field.add("Constant")
        field.setNumber(cap, "VIn", interior)
        field.setNumber(cap, "VOut", plan.max_size)
        field.setNumbers(cap, "SurfacesList", surfaces)
        field.setNumber(cap, "IncludeBoundary", 1)
        fields.append(cap)
    if not fields:
        return
    low = field.add("Min")
    field.setNumbers(low, "FieldsList", fields)
    field.setAsBackgroundMesh(low)


def _to_skfem(geometry: Geometry, owners, sides) -> TaggedMesh:
    node_tags, coords, _ = gmsh.model.mesh.getNodes(returnParametricCoord=False)
    index = np.full(int(node_tags.max()) + 1, -1, dtype=np.int64)
    index[node_tags.astype(np.int64)] = np.arange(len(node_tags))
    xy = coords.reshape(-1, 3)[:, :2]
    six = curved(geometry)
    kind, count = (_TRIANGLE6, 6) if six else (_TRIANGLE, 3)
    blocks, labels = [], []
    for name, tags in owners.items():
        for tag in tags:
            blocks.append(_elements(2, tag, kind, count, index))
            labels.append(name)
    full = np.concatenate(blocks, axis=0)
    tri = full[:, :3]
    used, t = np.unique(tri, return_inverse=True)
    t = t.reshape(-1, 3)
    renumber = np.full(len(node_tags), -1, dtype=np.int64)
    renumber[used] = np.arange(len(used))
    p = xy[used].T * geometry.unit_m
    mesh = skfem.MeshTri(np.ascontiguousarray(p), np.ascontiguousarray(t.T))
    if six:
        mesh = quadratic_mesh(mesh, t, xy[full[:, 3:]] * geometry.unit_m)
    bounds = np.cumsum([0] + [len(b) for b in blocks])
    subdomains = {name: [] for name in owners}
    for k, name in enumerate(labels):
        subdomains[name].append(np.arange(bounds[k], bounds[k + 1]))
    subdomains = {n: np.concatenate(v) if v else np.zeros(0, dtype=np.int64)
                  for n, v in subdomains.items()}
    boundaries = {}
    for name, curves in sides.items():
        pairs = [renumber[_elements(1, c, _LINE3 if six else _LINE, 3 if six else 2,
                                    index)[:, :2]] for c in curves]
        pairs = np.concatenate(pairs, axis=0) if pairs else np.zeros((0, 2), dtype=np.int64)
        boundaries[name] = _facet_indices(mesh, pairs, name)
    ordered = {r.name: subdomains[r.name] for r in geometry.regions}
    ordered[BACKGROUND] = subdomains[BACKGROUND]
    ordered.update({n: v for n, v in subdomains.items() if n not in ordered})
    mesh = mesh.with_subdomains(ordered).with_boundaries(boundaries)
    return TaggedMesh(mesh, tuple(r.name for r in geometry.regions), geometry.unit_m,
                      geometry.axisymmetric, BACKGROUND)


def _elements(dim, tag, kind, nodes, index) -> np.ndarray:
    types, _, node_lists = gmsh.model.mesh.getElements(dim, tag)
    out = [index[np.asarray(n, dtype=np.int64)].reshape(-1, nodes)
           for ty, n in zip(types, node_lists, strict=True) if ty == kind]
    return np.concatenate(out, axis=0) if out else np.zeros((0, nodes), dtype=np.int64)


def _facet_indices(mesh, pairs: np.ndarray, side: str) -> np.ndarray:
    """Indices into ``mesh.facets`` of the node pairs ``pairs`` (shape (n, 2))."""
    if len(pairs) == 0:
        return np.zeros(0, dtype=np.int64)
    n = np.int64(mesh.p.shape[1])
    facets = np.sort(mesh.facets, axis=0).astype(np.int64)
    keys = facets[0] * n + facets[1]
    order = np.argsort(keys)
    pairs = np.sort(pairs, axis=1)
    wanted = pairs[:, 0] * n + pairs[:, 1]
    pos = np.searchsorted(keys, wanted, sorter=order)
    pos = np.minimum(pos, len(keys) - 1)
    found = order[pos]
    if np.any(keys[found] != wanted):
        raise MeshError(f"side '{side}': boundary edges do not match the mesh facets")
    return np.unique(found)


def _radius_ratio(p: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Radius ratio 2 r_in / r_circ of each triangle (1 for equilateral, 0 degenerate)."""
    a = np.linalg.norm(p[:, t[1]] - p[:, t[2]], axis=0)
    b = np.linalg.norm(p[:, t[2]] - p[:, t[0]], axis=0)
    c = np.linalg.norm(p[:, t[0]] - p[:, t[1]], axis=0)
    return (b + c - a) * (c + a - b) * (a + b - c) / (a * b * c)
