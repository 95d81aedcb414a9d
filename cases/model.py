"""From a parsed case to the plain objects of the lower layers."""

from __future__ import annotations

import math
from dataclasses import replace

from whorl.meshes.geometry import Geometry
from whorl.solver.boundary import Open
from whorl.solver.materials import skin_depth
from whorl.solver.problem import Problem
from whorl.solver.sources import Stranded
from whorl.solver.windings import region_resistances


def wound_regions(case) -> set[str]:
    return {r for s in case.sources if isinstance(s, Stranded)
            for r in (*s.regions, *s.return_regions)}


def sizing_frequency(case) -> float:
    """The frequency (Hz) the mesh is sized for: the highest of a harmonic study; for a
    transient one 1/(20 step), about the fastest variation the steps resolve (a rule of
    this project: a period of 20 steps)."""
    if case.study.kind == "transient":
        return 1.0 / (20.0 * case.study.step_s)
    return max(case.study.frequencies, default=0.0)


SIZING_FIELD = 1e4
"""A/m: the field strength at which a B-H curve's permeability sizes the mesh (a typical
surface field of induction heating, common practice)."""


def sizing_permeability(material) -> float:
    """Relative permeability for the mesh's skin-depth rule: the material's own, or for a
    B-H curve its secant permeability B/(mu0 H) at ``SIZING_FIELD``."""
    if material.bh_curve is not None:
        return material.bh_curve.relative_permeability_at(SIZING_FIELD)
    return material.relative_permeability


def sized_geometry(case) -> Geometry:
    """The case's geometry with each eddy-current region's skin depth (length unit)
    at :func:`sizing_frequency` (a rotating region: at least at its turning frequency
    Omega / (2 pi)), for the mesher's surface refinement; an open
    boundary asks the mesher for the exterior disk."""
    top = sizing_frequency(case)
    wound = wound_regions(case)
    spinning = {r: abs(m.angular_velocity) / (2 * math.pi)
                for m in case.motions if m.kind == "rotation" for r in m.regions}
    regions = []
    for spec in case.geometry.regions:
        material = case.materials[case.region_material[spec.name]]
        delta = None
        # a rotating body sees the field alternate at least at its turning frequency
        freq = max(top, spinning.get(spec.name, 0.0))
        if freq > 0 and material.conductivity > 0 and spec.name not in wound:
            delta = skin_depth(freq, material.conductivity, sizing_permeability(material))
            delta /= case.unit_m
        regions.append(replace(spec, skin_depth=delta))
    domain = case.geometry.domain
    if any(isinstance(c, Open) for c in case.boundary.values()):
        domain = replace(domain, open_boundary=True)
    return replace(case.geometry, regions=tuple(regions), domain=domain)


def problem(case, tagged) -> Problem:
    """The solver's problem for ``case`` on the mesh ``tagged``."""
    materials = {name: case.materials[mat] for name, mat in case.region_material.items()}
    materials.setdefault(tagged.background, materials.get("domain"))
    problem = Problem(mesh=tagged, materials=materials, sources=tuple(case.sources),
                      boundary=dict(case.boundary), depth_m=case.depth_m, order=case.order,
                      shorted=tuple(case.shorted), motions=tuple(case.motions))
    return with_winding_resistance(problem)


def with_winding_resistance(problem: Problem) -> Problem:
    """Each stranded source with a ``fill_factor`` gets its DC resistance from its
    regions' material and geometry (:mod:`whorl.solver.windings`)."""
    sources = []
    for s in problem.sources:
        if isinstance(s, Stranded) and s.fill_factor is not None:
            s = replace(s, resistance=sum(region_resistances(problem, s, s.fill_factor)
                                          .values()))
        sources.append(s)
    return replace(problem, sources=tuple(sources))


def overlap_warnings(case, covered) -> list[str]:
    """A source's region drawn over part of another conductor (a coil drawn into the
    shaft): the later region takes the overlap, which is rarely what was meant.
    ``covered`` lists (earlier, later) region pairs (:func:`whorl.meshes.build.covered_regions`
    or the mesh's ``info["covered"]``)."""
    owner = {r: s.name for s in case.sources
             for r in (*getattr(s, "regions", ()), *getattr(s, "return_regions", ()))}
    out = []
    for earlier, later in covered:
        if later not in owner:
            continue
        material = case.materials[case.region_material[earlier]]
        if material.conductivity > 0 or earlier in owner:
            out.append(f"region {later!r} of source {owner[later]!r} covers part of the "
                       f"conductor {earlier!r}: the overlap belongs to {later!r} and is cut out "
                       f"of {earlier!r}; move or resize one of them unless that is meant")
    return out
