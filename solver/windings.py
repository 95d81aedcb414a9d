r"""DC resistance of a stranded winding from its regions' material and geometry.

A region of cross-section A holding N turns of wire filling the fraction f of
it carries each turn in a wire of section f A / N; with the mean length l of a
turn's path through the region,

    R = N^2 l / (sigma f A)

(resistance of a uniform conductor, R = length / (sigma x section); any
circuits text). The mean length is 2 pi r_c in an axisymmetric model, r_c the
radius of the region's centroid (exact: the turn lengths are linear in r), and
the model depth in a planar one: each region is one side of the turns, the end
connections outside the model are not counted. The winding's regions (and
return regions) are in series, so their resistances add.
"""

from __future__ import annotations

import numpy as np


def region_geometry(tagged, name: str) -> tuple[float, float]:
    """Area (m^2) of region ``name`` and the radius / x of its centroid (m)."""
    mesh = tagged.mesh
    elems = tagged.elements(name)
    p = mesh.p[:, mesh.t[:3, elems]]  # 2 x 3 x n corner coordinates
    area = 0.5 * np.abs((p[0, 1] - p[0, 0]) * (p[1, 2] - p[1, 0])
                        - (p[0, 2] - p[0, 0]) * (p[1, 1] - p[1, 0]))
    total = float(area.sum())
    centre = float((area * p[0].mean(axis=0)).sum() / total) if total > 0 else 0.0
    return total, centre


def region_resistances(problem, source, fill_factor: float = 1.0) -> dict[str, float]:
    """Region name -> DC resistance (ohm) of the winding's turns in it; 0 for a region
    whose material does not conduct."""
    out = {}
    for name in (*source.regions, *source.return_regions):
        sigma = problem.materials[name].conductivity
        area, centre = region_geometry(problem.mesh, name)
        if sigma <= 0 or area <= 0:
            out[name] = 0.0
            continue
        length = 2 * np.pi * centre if problem.axisymmetric else problem.depth_m
        out[name] = source.turns ** 2 * length / (sigma * fill_factor * area)
    return out


def resistance_shares(problem, source) -> dict[str, float]:
    """Region name -> its fraction of the winding's resistance, in proportion to
    l / (sigma A) (conducting regions; l / A when none conducts). The shares split a
    given ``resistance`` and its loss among the winding's regions."""
    weights = {}
    for name in (*source.regions, *source.return_regions):
        area, centre = region_geometry(problem.mesh, name)
        length = 2 * np.pi * centre if problem.axisymmetric else problem.depth_m
        weights[name] = length / area if area > 0 else 0.0
    sigma = {n: problem.materials[n].conductivity for n in weights}
    if any(v > 0 for v in sigma.values()):
        weights = {n: w / sigma[n] if sigma[n] > 0 else 0.0 for n, w in weights.items()}
    total = sum(weights.values())
    return {n: w / total if total > 0 else 1.0 / len(weights) for n, w in weights.items()}
