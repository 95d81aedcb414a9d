"""Sweep points: the ``[sweep]`` table expanded, each point's case, and the groups
of points that share work.

Reuse, in two tiers
-------------------
*Frequency groups* (one mesh, one assembly). Two points belong to the same
group when their cases are equal in everything but the study's frequency list
(geometry before skin-depth sizing, materials, sources, boundaries, outputs,
order and depth). A group is solved in one worker as one frequency list: the
union of its points' frequencies, on one mesh, with the matrices assembled
once. Since the mesher sizes conductor surfaces from the skin depth at the
*highest* frequency it is given, the group's mesh is sized for the highest
frequency of the whole group, exactly as ``whorl run`` sizes a case with a
frequency list. The grouping is made over every point of the sweep (done or
not), so a resumed sweep meshes a group just as an uninterrupted one does.

*Mesh sharing* (one mesh). Groups whose sized geometry (with those skin
depths) is equal share the mesh through the mesh cache, keyed by a hash of
the sized geometry (:func:`mesh_key`).
"""

from __future__ import annotations

import hashlib
import itertools
import json
from dataclasses import dataclass, field, replace

from whorl.cases import loader
from whorl.cases.errors import CaseError
from whorl.cases.limits import MAX_SWEEP_POINTS
from whorl.cases.model import sized_geometry

DEFAULT_MAX_POINTS = MAX_SWEEP_POINTS
MESH_CACHE_VERSION = 1


def expand(spec) -> list[dict]:
    """Every point of a sweep as a dict parameter name -> override value.

    Parameters
    ----------
    spec : SweepSpec
        ``mode`` grid (every combination; the first axis varies slowest) or
        zip (the lists side by side).

    Returns
    -------
    list of dict
        In point order: point number ``k`` (from 1) is entry ``k - 1``.
    """
    names = list(spec.axes)
    lists = [list(spec.axes[n]) for n in names]
    if spec.mode == "zip":
        combos = zip(*lists, strict=True)
    else:
        combos = itertools.product(*lists)
    return [dict(zip(names, combo, strict=True)) for combo in combos]


def check_count(count: int, max_points: int) -> None:
    """Refuse an empty sweep or one of more than ``max_points`` points."""
    if count == 0:
        raise CaseError("sweep", "the sweep has no points: give each swept parameter at "
                                 "least one value")
    if max_points and count > max_points:
        raise CaseError("sweep", f"the sweep has {count} points, more than the maximum of "
                                 f"{max_points}; make it smaller or raise --max-points")


def point_key(overrides: dict) -> str:
    """A point's identity in the store: its swept values as canonical JSON."""
    return json.dumps(overrides, sort_keys=True, default=str)


def point_case(text: str, path, overrides: dict):
    """The case of one point: the file's text with ``overrides`` applied.

    The whole sweep (each value on its own) was checked when the case was first
    loaded, so a point is built without checking every sweep value again.
    Raises :class:`CaseError` when this combination of values is bad input.
    """
    return loader.build_case(text, path, overrides)


def problem_key(case) -> str:
    """Hash of everything that defines a point's problem except its frequencies."""
    parts = (case.geometry_kind, case.unit_m, case.depth_m, case.order, case.geometry,
             sorted(case.materials.items()), sorted(case.region_material.items()),
             sorted(case.boundary.items()), case.sources, case.shorted, case.study.kind,
             case.loops, case.lines, case.points, getattr(case, "motions", ()))
    return hashlib.sha256(repr(parts).encode()).hexdigest()[:20]


def mesh_key(geometry) -> str:
    """Hash of a sized geometry (skin depths included): the mesh-cache key."""
    text = f"v{MESH_CACHE_VERSION}:{geometry!r}"
    return hashlib.sha256(text.encode()).hexdigest()[:20]


@dataclass
class Group:
    """Points solved together: same problem, different frequencies.

    ``case`` is the first point's case with the union of the group's
    frequencies (sorted); ``geometry`` is its sized geometry, meshed once.
    """

    key: str
    numbers: list[int]
    case: object
    geometry: object
    mesh_key: str
    frequencies: tuple[float, ...] = field(default=())


def group_points(cases: dict) -> list[Group]:
    """Group point cases (point number -> Case) that differ only in frequency.

    Groups come in the order of their lowest point number.
    """
    by_key: dict[str, list[int]] = {}
    for number in sorted(cases):
        by_key.setdefault(problem_key(cases[number]), []).append(number)
    groups = []
    for key, numbers in by_key.items():
        freqs = sorted({f for n in numbers for f in cases[n].study.frequencies})
        first = cases[numbers[0]]
        case = replace(first, study=replace(first.study, frequencies=tuple(freqs)))
        geometry = sized_geometry(case)
        groups.append(Group(key, numbers, case, geometry, mesh_key(geometry), tuple(freqs)))
    return groups


def subgroup(group: Group, numbers: list[int], cases: dict):
    """The case to solve for some points of ``group``: their frequencies only, on
    the group's mesh (the caller passes the mesh sized for the whole group)."""
    freqs = sorted({f for n in numbers for f in cases[n].study.frequencies})
    return replace(group.case, study=replace(group.case.study, frequencies=tuple(freqs)))
