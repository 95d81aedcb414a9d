"""From a parsed case to the plain objects of the lower layers."""

from __future__ import annotations

from dataclasses import replace

from whorl.meshes.geometry import Geometry
from whorl.solver.materials import skin_depth
from whorl.solver.problem import Problem
from whorl.solver.sources import Stranded


def wound_regions(case) -> set[str]:
    return {r for s in case.sources if isinstance(s, Stranded)
            for r in (*s.regions, *s.return_regions)}


def sized_geometry(case) -> Geometry:
    """The case's geometry with each eddy-current region's skin depth (length unit)
    at the study's highest frequency, for the mesher's surface refinement."""
    top = max(case.study.frequencies, default=0.0)
    wound = wound_regions(case)
    regions = []
    for spec in case.geometry.regions:
        material = case.materials[case.region_material[spec.name]]
        delta = None
        if top > 0 and material.conductivity > 0 and spec.name not in wound:
            delta = skin_depth(top, material.conductivity, material.relative_permeability)
            delta /= case.unit_m
        regions.append(replace(spec, skin_depth=delta))
    return replace(case.geometry, regions=tuple(regions))


def problem(case, tagged) -> Problem:
    """The solver's problem for ``case`` on the mesh ``tagged``."""
    materials = {name: case.materials[mat] for name, mat in case.region_material.items()}
    materials.setdefault(tagged.background, materials.get("domain"))
    return Problem(mesh=tagged, materials=materials, sources=tuple(case.sources),
                   boundary=dict(case.boundary), depth_m=case.depth_m, order=case.order,
                   shorted=tuple(case.shorted))
