"""Where a saturable material is close to saturation: the level a |B| picture marks.

A material with a B-H curve has a saturation level B_s
(:meth:`whorl.solver.bh.BHCurve.saturation_level`: where its polarisation reaches 90 % of
the curve's last value). Pictures show RMS magnitudes; in a harmonic solution the
effective permeability is taken at the peak amplitude sqrt(2) |B|_RMS (see
:mod:`whorl.solver.effective`), so the RMS level marked is B_s / sqrt(2). In a static or
instantaneous solution the level is B_s itself. Elements whose magnetisation is reduced
(near or above the Curie point at their temperature, or by ``Problem.element_magnetisation``)
are not marked: their curve is not the material's.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from whorl.solver.coefficients import magnetisation


@dataclass(frozen=True)
class SaturationMark:
    """The saturation level of one saturable material in one solution.

    ``level_t`` is the marked level in the picture's quantity (T, RMS for a harmonic
    solution), ``peak_level_t`` the curve's own B_s (T), ``saturated`` a boolean per mesh
    element: in the material and at or above the level.
    """

    material: str
    level_t: float
    peak_level_t: float
    saturated: np.ndarray


def saturation_marks(solution, b_cell) -> list[SaturationMark]:
    """One mark per saturable material of ``solution``'s problem.

    ``b_cell`` holds the cell magnitudes of B shown in the picture (T, one per mesh
    element: RMS for a harmonic solution).
    """
    problem = solution.problem
    tagged = problem.mesh
    n_el = tagged.mesh.t.shape[1]
    full = magnetisation(problem) >= 0.999  # the Curie factor and any given multiplier
    by_material: dict = {}
    for region in tagged.regions:
        material = problem.materials.get(region)
        if material is None or getattr(material, "bh_curve", None) is None:
            continue
        by_material.setdefault(material.name, (material, []))[1].append(region)
    marks = []
    factor = math.sqrt(2.0) if solution.frequency_hz > 0 else 1.0
    for name, (material, regions) in by_material.items():
        peak = material.bh_curve.saturation_level()
        level = peak / factor
        inside = np.zeros(n_el, dtype=bool)
        for region in regions:
            inside[tagged.elements(region)] = True
        marks.append(SaturationMark(name, level, peak,
                                    inside & full & (np.asarray(b_cell) >= level)))
    return marks
