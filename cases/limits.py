"""Documented limits on what a case file may ask for, checked before anything is built.

A few characters of input must not exhaust the machine: every count a case
file gives (copies of a repeated region, values of a range, points of a sweep,
time steps, samples along a line, polygon corners) is checked against a limit
here *before* a list of that length is built, and the estimated mesh size is
checked before gmsh is started (:func:`check_mesh_estimate`, see
:mod:`whorl.meshes.estimate`). Each refusal is a :class:`CaseError` (exit 2)
naming the key and the count.
"""

from __future__ import annotations

import math

from whorl.cases.errors import CaseError
from whorl.meshes.estimate import DEFAULT_MAX_ELEMENTS, estimate_elements
from whorl.meshes.validate import ShapeProblem, check_geometry

#: Copies of one ``[[region]]`` made by ``repeat``.
MAX_REPEAT = 10_000
#: Values of one list or ``{from, to, count}`` range (frequencies, sweep values).
MAX_VALUES = 10_000
#: Time steps of a transient study (``end / step``).
MAX_STEPS = 1_000_000
#: Samples along one ``[[line]]``.
MAX_SAMPLES = 100_000
#: Corners of one polygon.
MAX_POLYGON_POINTS = 10_000
#: Points of one sweep (``--max-points`` raises it).
MAX_SWEEP_POINTS = 10_000
#: Nesting depth of a case file's arrays and tables.
MAX_NESTING = 50

#: Largest size of a source quantity (SI): far beyond any induction equipment, so that
#: products of them (power, energy, force) stay finite.
MAX_MAGNITUDE = {"current": 1e12, "voltage": 1e12, "flux_density": 1e6, "potential": 1e12,
                 "resistance": 1e12}

LIMITS = {
    "repeat count": MAX_REPEAT, "values of a list or range": MAX_VALUES,
    "transient steps": MAX_STEPS, "line samples": MAX_SAMPLES,
    "polygon points": MAX_POLYGON_POINTS, "estimated mesh elements": DEFAULT_MAX_ELEMENTS,
}


def check_count(table, key: str, count, limit: int, what: str) -> None:
    """Refuse ``count`` (a float is fine: 1e300 is refused without an int) above ``limit``."""
    if not (isinstance(count, int | float) and math.isfinite(count)) or count > limit:
        shown = f"{count:g}" if isinstance(count, int | float) else repr(count)
        raise table.error(key, f"{shown} {what} is more than the limit of {limit:,}")


def nesting_depth(value, limit: int = MAX_NESTING) -> int:
    """Depth of nested lists and tables in ``value``, walked without recursion; stops
    counting at ``limit + 1``."""
    deepest, stack = 0, [(value, 0)]
    while stack:
        item, depth = stack.pop()
        deepest = max(deepest, depth)
        if deepest > limit:
            return deepest
        if isinstance(item, dict):
            stack.extend((v, depth + 1) for v in item.values())
        elif isinstance(item, list):
            stack.extend((v, depth + 1) for v in item)
    return deepest


def _region_key(case, name: str) -> str:
    """The key path of the ``[[region]]`` table that made region ``name``."""
    return _region_key_in(case.document, name)


def _region_key_in(document: dict, name: str) -> str:
    raw = document.get("region", [])
    for i, table in enumerate(raw if isinstance(raw, list) else [raw], start=1):
        base = table.get("name") if isinstance(table, dict) else None
        if base == name or (isinstance(base, str) and name.startswith(base + ".")
                            and name[len(base) + 1:].isdigit()):
            return f"region[{i}]"
    return f"region {name}"


def _domain_key(document: dict, part: str) -> str:
    domain = document.get("domain", {})
    domain = domain if isinstance(domain, dict) else {}
    for name in (part, "margin", "size", "radius"):
        if name in domain:
            return f"domain.{name}"
    return "domain"


def check_shapes(document: dict, geometry) -> None:
    """Shape sanity (:func:`whorl.meshes.validate.check_geometry`) as a :class:`CaseError`
    naming the region's key."""
    try:
        check_geometry(geometry)
    except ShapeProblem as problem:
        if problem.region == "domain":
            raise CaseError(_domain_key(document, problem.part), problem.message) from None
        key = _region_key_in(document, problem.region)
        if problem.part:
            key = f"{key}.{problem.part}"
        raise CaseError(key, f"region {problem.region!r}: {problem.message}") from None


def _driver_key(case, part) -> str:
    """The key that drives one part of a mesh estimate."""
    options = case.geometry.options
    if part.where == "background" or part.rule in ("max_size", "domain mesh_size"):
        if part.rule == "domain mesh_size":
            return "domain.mesh_size"
        return "mesh.max_size" if options.max_size is not None else "domain"
    region = _region_key(case, part.where)
    if part.rule == "mesh_size":
        return f"{region}.mesh_size"
    if part.rule == "skin depth":
        if options.per_skin_depth is not None and options.per_skin_depth > 8:
            return "mesh.per_skin_depth"
        return "study.step" if case.study.kind == "transient" else "study.frequency"
    if part.rule == "thickness":
        return "mesh.across" if options.across > 3 else region
    return region


def check_mesh_estimate(case, max_elements: int | None = None, geometry=None) -> float:
    """Estimate the case's mesh and refuse it above ``max_elements``.

    Parameters
    ----------
    case : Case
    max_elements : int, optional
        The limit (default :data:`~whorl.meshes.estimate.DEFAULT_MAX_ELEMENTS`;
        ``--max-elements`` on the command line).
    geometry : Geometry, optional
        The sized geometry, if already made.

    Returns
    -------
    float
        The estimated element count.

    Raises
    ------
    CaseError
        Naming the key that drives the count, the estimate and the limit.
    """
    from whorl.cases.model import sized_geometry

    limit = DEFAULT_MAX_ELEMENTS if max_elements is None else int(max_elements)
    geometry = sized_geometry(case) if geometry is None else geometry
    try:
        estimate = estimate_elements(geometry)
    except (ValueError, ZeroDivisionError, OverflowError) as exc:
        raise CaseError("mesh", f"cannot size the mesh: {exc}") from None
    if estimate.total <= limit:
        return estimate.total
    part = estimate.largest()
    key = _driver_key(case, part)
    where = ("the background" if part.where == "background"
             else f"region {part.where!r} ({part.what})")
    unit = case.length_unit
    advice = {"skin depth": "a lower frequency or more elements per skin depth than the "
                            "model needs? (mesh.per_skin_depth)",
              "mesh_size": "is the mesh_size typed in the wrong unit?",
              "max_size": "is the size typed in the wrong unit?",
              "domain mesh_size": "is the size typed in the wrong unit?",
              "thickness": "is the region very thin, or typed in the wrong unit?",
              "curvature": "is the radius typed in the wrong unit?"}[part.rule]
    shown = "more than 1e300" if not math.isfinite(estimate.total) else f"{estimate.total:.3g}"
    raise CaseError(key, f"the mesh would have about {shown} elements, more than the limit "
                         f"of {limit:,} (raise it with --max-elements): most come from "
                         f"{where}, element size {part.size:.3g} {unit} set by its "
                         f"{part.rule}; {advice}")
