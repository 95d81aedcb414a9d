"""Results of reduced solutions from projections (postprocess/projected.py): an internal
check. The record of every reduced frequency, made from the projected operators (region
totals, terminal quantities, loops, points, surface power, shell forces; Hesthaven, Rozza
and Stamm 2016, offline/online split), equals the record made the ordinary way from the
expanded field (x = V y evaluated at the quadrature points) to round-off."""

from __future__ import annotations

import numpy as np
import pytest
from test_frequency_rom import HEATER, wire_frequency, wire_problem

from whorl.cases import model
from whorl.cases.loader import parse_case
from whorl.meshes.build import build_mesh
from whorl.postprocess.records import solution_record
from whorl.solver.harmonic import solve_harmonic
from whorl.solver.solution import ReducedSolution, Solution

SKIP = {"relative_mismatch"}  # itself a round-off figure, checked against its tolerance


def _leaves(node, path=()):
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _leaves(v, (*path, k))
    elif isinstance(node, list | tuple):
        for i, v in enumerate(node):
            yield from _leaves(v, (*path, i))
    else:
        yield path, node


def _key(path):
    """The quantity a leaf belongs to: its last named key (``impedance_ohm``...)."""
    return next(p for p in reversed(path) if isinstance(p, str))


def assert_same_record(projected, expanded, rel=1e-8, atol=1e-15):
    """Every number equal to ``rel`` of the largest magnitude of its own quantity, or to
    ``atol`` in its SI unit (forces that vanish but for the mesh's asymmetry)."""
    a, b = dict(_leaves(projected)), dict(_leaves(expanded))
    assert a.keys() == b.keys()
    scale = {}
    for path, v in b.items():
        if isinstance(v, float) and np.isfinite(v):
            scale[_key(path)] = max(scale.get(_key(path), 0.0), abs(v))
    checked = 0
    for path, vb in b.items():
        va = a[path]
        if _key(path) in SKIP:
            continue
        if isinstance(vb, float) and not isinstance(vb, bool):
            if np.isnan(vb):
                assert np.isnan(va), path
                continue
            assert abs(va - vb) <= rel * scale[_key(path)] + atol, (path, va, vb)
            checked += 1
        else:
            assert va == vb, path
    return checked


def reduced_solutions(problem, freqs):
    sols, info = solve_harmonic(problem, freqs, reduced="on")
    reduced = [s for s in sols if isinstance(s, ReducedSolution)]
    assert len(reduced) >= 3
    return reduced


def test_projected_record_equals_the_expanded_field_record_axisymmetric():
    """Voltage-fed coil, magnetic billet, aluminium sleeve (axisymmetric), with two points
    and a three-turn loop: losses, energies, currents, Lorentz and Maxwell forces, surface
    power, terminal quantities, loop fluxes and EMFs, point values."""
    case = parse_case(HEATER)
    problem = model.problem(case, build_mesh(model.sized_geometry(case)))
    points = {"inside": (0.010, 0.005), "gap": (0.016, 0.0)}
    loops = [{"name": "pickup", "turns": 3, "at": (0.021, 0.0)}]
    checked = 0
    for s in reduced_solutions(problem, list(case.study.frequencies)):
        a = solution_record(s, points, loops)
        b = solution_record(Solution(s.system, s.frequency_hz, s.x), points, loops)
        checked += assert_same_record(a, b)
        assert a["totals"]["power_balance"]["relative_mismatch"] < 1e-9
    assert checked > 300


def test_projected_record_equals_the_expanded_field_record_with_strong_skin_effect():
    """A massive round wire (planar, its branch voltage an unknown) up to a / delta = 100,
    where E = -j omega A + u nearly cancels inside: the loss from the projected factor
    still equals the expanded field's to round-off."""
    freqs = list(np.geomspace(wire_frequency(0.5), wire_frequency(100), 14))
    _, problem = wire_problem(freqs, mesh_for=wire_frequency(20))
    for s in reduced_solutions(problem, freqs):
        a = solution_record(s)
        b = solution_record(Solution(s.system, s.frequency_hz, s.x))
        assert_same_record(a, b)
        assert a["regions"]["wire"]["loss_w"] == pytest.approx(b["regions"]["wire"]["loss_w"],
                                                               rel=1e-10)


def test_totals_and_terminals_do_not_expand_the_field(monkeypatch):
    """The sums and terminal quantities of a reduced solution never form x (only the
    peaks over elements do, from the potential at the quadrature points)."""
    from whorl.postprocess.circuits import source_results
    from whorl.postprocess.projected import region_values

    case = parse_case(HEATER)
    problem = model.problem(case, build_mesh(model.sized_geometry(case)))
    s = reduced_solutions(problem, list(case.study.frequencies))[0]
    region_values(s)
    source_results(s)
    assert s._x is None
