"""Sweep points, grouping, store, fingerprint, mesh cache and summary rows (no solving,
except one tiny mesh). Also home of ``tiny_case``, the small case the other sweep
tests run."""

from __future__ import annotations

import csv
import re

import numpy as np
import pytest

from whorl.cases.errors import CaseError
from whorl.cases.loader import load_case
from whorl.cases.model import sized_geometry
from whorl.cases.sweep import SweepStore, case_fingerprint, expand, group_points
from whorl.cases.sweep.driver import load_sweep
from whorl.cases.sweep.meshcache import MeshCache
from whorl.cases.sweep.points import check_count, mesh_key, point_case, problem_key
from whorl.cases.sweep.summary import write_summary

TINY = """\
format = 1

[case]
name = "tiny-sweep"
title = "Tiny billet heater for sweep tests"

[model]
geometry = "axisymmetric"
order = 1

[mesh]
per_skin_depth = 1
max_size = 10

[parameters]
freq = "500 Hz"
gap = "3 mm"
current = "100 A"

[material.billet-steel]
resistivity = "2e-7 ohm*m"
relative_permeability = 10

[[region]]
name = "billet"
material = "billet-steel"
shape = "rectangle"
corner = [0, -5]
size = [20, 10]

[[region]]
name = "coil"          # a gap of -20 mm makes the coil cover the billet: a meshing failure
material = "copper"
shape = "rectangle"
corner = ["20 mm + gap", -20]
size = [30, 40]

[domain]
shape = "circle"
margin = 1.5

[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
turns = 10
current = "current"

[study]
kind = "harmonic"
frequency = "freq"

[[loop]]
name = "pickup"
at = [21, 0]

[output]
folder = "results"
"""


def tiny_case(folder, sweep: str, replace: dict | None = None, name="tiny.toml"):
    """Write the tiny case with ``sweep`` (the body of its [sweep] table) into ``folder``."""
    text = TINY
    for old, new in (replace or {}).items():
        assert old in text
        text = text.replace(old, new)
    path = folder / name
    path.write_text(text + "\n[sweep]\n" + sweep.strip() + "\n", encoding="utf-8")
    return path


def test_grid_expands_first_axis_slowest(tmp_path):
    case = load_case(tiny_case(tmp_path, 'freq = ["200 Hz", "500 Hz"]\ngap = [2, 3, 4]'))
    points = expand(case.sweep)
    assert len(points) == 6
    assert points[0] == {"freq": "200 Hz", "gap": 2}
    assert points[1] == {"freq": "200 Hz", "gap": 3}
    assert points[3] == {"freq": "500 Hz", "gap": 2}


def test_zip_and_range(tmp_path):
    case = load_case(tiny_case(tmp_path, 'mode = "zip"\nfreq = { from = 100, to = 10000, '
                                         'count = 3, scale = "log" }\ngap = [2, 3, 4]'))
    points = expand(case.sweep)
    assert [p["gap"] for p in points] == [2, 3, 4]
    assert [float(p["freq"]) for p in points] == pytest.approx([100, 1000, 10000])


@pytest.mark.parametrize(("sweep", "message"), [
    ('thickness = [1, 2]', "not a parameter"),
    ('mode = "zip"\nfreq = [100, 200]\ngap = [2, 3, 4]', "equal length"),
    ('freq = []', "empty"),
    ('mode = "grid"', "varies nothing"),
])
def test_bad_sweeps_are_named(tmp_path, sweep, message):
    with pytest.raises(CaseError, match=message) as err:
        load_case(tiny_case(tmp_path, sweep))
    assert "sweep" in err.value.key


def test_too_many_points_says_how_many(tmp_path):
    path = tiny_case(tmp_path, 'freq = { from = 100, to = 200, count = 30 }\n'
                               'current = { from = 10, to = 20, count = 40 }')
    with pytest.raises(CaseError, match=r"1200 points, more than the maximum of 1000"):
        load_sweep(path, max_points=1000)
    with pytest.raises(CaseError, match="no points"):
        check_count(0, 10)


def test_set_of_a_swept_parameter_is_refused(tmp_path):
    path = tiny_case(tmp_path, 'freq = [100, 200]')
    with pytest.raises(CaseError, match="swept"):
        load_sweep(path, {"freq": "300 Hz"})


def _cases(path, overrides_list):
    text = path.read_text()
    return {i: point_case(text, path, o) for i, o in enumerate(overrides_list, start=1)}


def test_frequency_only_points_form_one_group_sized_at_the_top_frequency(tmp_path):
    path = tiny_case(tmp_path, 'freq = ["200 Hz", "5 kHz", "1 kHz"]')
    case = load_case(path)
    cases = _cases(path, expand(case.sweep))
    groups = group_points(cases)
    assert len(groups) == 1
    group = groups[0]
    assert group.numbers == [1, 2, 3]
    assert group.frequencies == (200.0, 1000.0, 5000.0)
    # the shared mesh is the one the 5 kHz point would get on its own
    assert group.geometry == sized_geometry(cases[2])
    assert group.geometry != sized_geometry(cases[1])
    assert group.mesh_key == mesh_key(sized_geometry(cases[2]))


def test_geometry_and_current_changes_split_groups_but_current_shares_the_mesh(tmp_path):
    path = tiny_case(tmp_path, 'gap = [2, 4]\ncurrent = ["100 A", "200 A"]')
    cases = _cases(path, expand(load_case(path).sweep))
    groups = group_points(cases)
    assert [g.numbers for g in groups] == [[1], [2], [3], [4]]
    keys = [g.mesh_key for g in groups]
    assert keys[0] == keys[1] and keys[2] == keys[3] and keys[0] != keys[2]
    assert problem_key(cases[1]) != problem_key(cases[2])


def test_fingerprint_ignores_sweep_and_comments_not_values(tmp_path):
    a = load_case(tiny_case(tmp_path, 'freq = [100, 200]', name="a.toml"))
    b = load_case(tiny_case(tmp_path, 'freq = [100, 200, 300]\n# more points',
                            {"[model]": "# a comment\n[model]"}, name="b.toml"))
    c = load_case(tiny_case(tmp_path, 'freq = [100, 200]', {"turns = 10": "turns = 12"},
                            name="c.toml"))
    assert case_fingerprint(a, {}) == case_fingerprint(b, {})
    assert case_fingerprint(a, {}) != case_fingerprint(c, {})
    assert case_fingerprint(a, {}) != case_fingerprint(a, {"current": "5 A"})


def test_store_keeps_numbers_and_requeues(tmp_path):
    store = SweepStore(tmp_path / "s.sqlite")
    assert store.db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    first = store.sync_points([{"f": 1}, {"f": 2}, {"f": 3}])
    assert first == [1, 2, 3]
    store.mark_running([1, 2])
    store.mark_done(1, [{"frequency_hz": 1.0, "total_loss_w": 2.0}], 0.5)
    store.mark_failed(3, "boom")
    # an extended sweep keeps old numbers; a dropped point becomes inactive
    assert store.sync_points([{"f": 2}, {"f": 1}, {"f": 4}]) == [2, 1, 4]
    assert [p["point"] for p in store.points()] == [1, 2, 4]
    assert store.requeue(retry_failed=False) == 1  # point 2 was left running
    counts = store.counts()
    assert (counts["done"], counts["pending"], counts["total"]) == (1, 2, 3)
    assert store.requeue(retry_failed=True) == 1  # point 3 (inactive but failed)
    store.close()
    ro = SweepStore(tmp_path / "s.sqlite", readonly=True)
    assert ro.points()[0]["rows"][0]["total_loss_w"] == 2.0
    ro.close()


def test_summary_rows_for_done_and_failed_points(tmp_path):
    points = [
        {"point": 1, "status": "done", "error": "", "overrides": {"freq": "1 kHz"},
         "params_si": {"freq": 1000.0, "status": 3.0},
         "rows": [{"frequency_hz": 1000.0, "total_loss_w": 1.5},
                  {"frequency_hz": 2000.0, "total_loss_w": 2.5}]},
        {"point": 2, "status": "failed", "error": "meshing failed: x",
         "overrides": {"freq": "2 kHz"}, "params_si": None, "rows": None},
    ]
    path = write_summary(points, ["freq"], tmp_path / "summary.csv")
    with open(path, newline="") as f:
        rows = list(csv.DictReader(f))
    assert list(rows[0])[:6] == ["point", "status", "error", "freq", "parameter.status",
                                 "frequency_hz"]
    assert [r["point"] for r in rows] == ["1", "1", "2"]
    assert float(rows[1]["total_loss_w"]) == 2.5
    assert rows[2]["error"] == "meshing failed: x" and rows[2]["total_loss_w"] == ""
    assert rows[2]["freq"] == "2 kHz"


def test_mesh_cache_round_trip(tmp_path):
    from whorl.meshes.build import build_mesh

    case = load_case(tiny_case(tmp_path, 'freq = [100, 200]'))
    mesh = build_mesh(sized_geometry(case))
    cache = MeshCache(tmp_path / "cache")
    assert cache.load("k") is None
    cache.save("k", mesh)
    back = cache.load("k")
    np.testing.assert_array_equal(back.mesh.p, mesh.mesh.p)
    np.testing.assert_array_equal(back.mesh.t, mesh.mesh.t)
    for name, idx in mesh.mesh.subdomains.items():
        np.testing.assert_array_equal(back.mesh.subdomains[name], idx)
    for name, idx in mesh.mesh.boundaries.items():
        np.testing.assert_array_equal(back.mesh.boundaries[name], idx)
    assert (back.regions, back.axisymmetric, back.unit_m) == (mesh.regions, True, 1e-3)
    assert not [p for p in (tmp_path / "cache").iterdir() if re.search(r"\.tmp$", p.name)]
