"""VTU field files: written, read back with meshio, and checked against the solution.

Cell values must integrate to the region totals (loss within 1e-9 relative,
net current likewise), point values of A must be the finite-element values
at the vertices, and the exterior disk of an open boundary must stay out.
"""

from dataclasses import replace
from functools import cache

import numpy as np
import pytest
from meshing import tensor_mesh
from test_circuits import CU, STEEL, box
from test_cylinder import cylinder_problem

from whorl.postprocess.fields import quadrature_fields
from whorl.postprocess.probes import probe
from whorl.postprocess.regions import region_totals
from whorl.postprocess.vtu import (
    cell_means,
    read_vtu,
    vertex_means,
    visible_mesh,
    write_fields_vtu,
)
from whorl.solver import BUILTIN, Massive, Open, Problem, Stranded, skin_depth, solve_harmonic

POINT_NAMES = ("A_re_Wb_per_m", "A_im_Wb_per_m", "B_rms_T", "B_re_T", "B_im_T",
               "H_re_A_per_m", "H_im_A_per_m")
CELL_NAMES = ("region_id", "J_re_A_per_m2", "J_im_A_per_m2", "J_rms_A_per_m2", "E_re_V_per_m",
              "E_im_V_per_m", "loss_density_W_per_m3", "sigma_S_per_m", "mu_r", "cell_volume_m3")


@cache
def planar_p2():
    """Go and return copper bars over a steel plate, P2, coordinates written in mm."""
    tm = tensor_mesh(np.linspace(-0.1, 0.1, 41), np.linspace(-0.08, 0.08, 33), {
        "go": box(-0.04, -0.02, 0.0, 0.01), "back": box(0.02, 0.04, 0.0, 0.01),
        "plate": box(-0.06, 0.06, -0.03, -0.02)})
    problem = Problem(replace(tm, unit_m=1e-3), {"go": CU, "back": CU, "plate": STEEL,
                                                 "domain": BUILTIN["air"]},
                      sources=(Massive("bus", ("go",), "series", current=800.0,
                                       return_regions=("back",)),), order=2, depth_m=2.0)
    (sol,), _ = solve_harmonic(problem, [400.0])
    return sol


@cache
def axisymmetric_p1():
    """A copper bar in a stranded coil (r, z), P1."""
    problem, _ = cylinder_problem(0.01, skin_depth(2000.0, 5.8e6), 1.0, order=1)
    (sol,), _ = solve_harmonic(problem, [2000.0])
    return sol


@cache
def axisymmetric_p2_mixed():
    """A steel billet and an aluminium ring in a stranded coil, P2."""
    tm = tensor_mesh(np.linspace(0, 0.06, 31), np.linspace(-0.04, 0.04, 41), {
        "billet": box(0.0, 0.016, -0.02, 0.02), "ring": box(0.018, 0.022, 0.01, 0.016),
        "coil": box(0.03, 0.036, -0.02, 0.02)}, axisymmetric=True)
    problem = Problem(tm, {"billet": STEEL, "ring": BUILTIN["aluminium"], "coil": CU,
                           "domain": BUILTIN["air"]},
                      sources=(Stranded("coil", ("coil",), turns=6, current=50.0),), order=2)
    (sol,), _ = solve_harmonic(problem, [1000.0])
    return sol


@cache
def open_planar():
    """A wire over a plate in an open (Kelvin) domain meshed by gmsh, P1."""
    pytest.importorskip("gmsh")
    from whorl.meshes.build import build_mesh
    from whorl.meshes.geometry import DomainSpec, Geometry, MeshOptions, RegionSpec
    from whorl.meshes.shapes import Circle, Rectangle

    geometry = Geometry((RegionSpec("wire", Circle((0, 0), 5)),
                         RegionSpec("plate", Rectangle((-20, -15), (40, 4)), skin_depth=3)),
                        DomainSpec("circle", radius=60, open_boundary=True),
                        unit_m=1e-3, options=MeshOptions(order=1, max_size=8))
    tm = build_mesh(geometry)
    problem = Problem(tm, {"wire": CU, "plate": BUILTIN["aluminium"], "domain": BUILTIN["air"]},
                      sources=(Stranded("coil", ("wire",), turns=1, current=10.0),),
                      boundary={"outer": Open()}, order=1)
    (sol,), _ = solve_harmonic(problem, [1000.0])
    return sol


BUILDERS = {"planar-p2": planar_p2, "axisymmetric-p1": axisymmetric_p1,
            "axisymmetric-p2": axisymmetric_p2_mixed, "open-planar-p1": open_planar}


@pytest.fixture(scope="module", params=list(BUILDERS))
def written(request, tmp_path_factory):
    """(solution, meshio mesh read back) for each model."""
    sol = BUILDERS[request.param]()
    path = tmp_path_factory.mktemp("vtu") / f"{request.param}.vtu"
    write_fields_vtu(sol, path)
    return sol, read_vtu(path), path


def cell(mesh, name):
    return mesh.cell_data[name][0]


def areas_and_weights(sol, mesh):
    """Cell areas (m^2) from the coordinates read back and the volume weight per area."""
    unit = float(mesh.field_data["length_unit_m"][0])
    xy = mesh.points[:, :2] * unit
    tri = mesh.cells_dict["triangle"]
    d1, d2 = xy[tri[:, 1]] - xy[tri[:, 0]], xy[tri[:, 2]] - xy[tri[:, 0]]
    area = 0.5 * np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])
    if sol.problem.axisymmetric:  # int r dA = area * centroid radius, exactly
        weight = 2 * np.pi * xy[tri, 0].mean(axis=1)
    else:
        weight = np.full(tri.shape[0], sol.problem.depth_m)
    return area, weight


def region_names(mesh):
    return {int(v[0]): k.split(":", 1)[1] for k, v in mesh.field_data.items()
            if k.startswith("region:")}


def test_counts_names_and_units(written):
    sol, mesh, _ = written
    tagged = sol.problem.mesh
    vis = visible_mesh(tagged)
    assert mesh.points.shape == (vis.vertices.size, 3)
    assert mesh.cells_dict["triangle"].shape == (vis.elements.size, 3)
    assert set(POINT_NAMES) <= set(mesh.point_data)
    assert set(CELL_NAMES) <= set(mesh.cell_data)
    for name in ("B_re_T", "B_im_T", "H_re_A_per_m", "H_im_A_per_m"):
        assert mesh.point_data[name].shape == (vis.vertices.size, 3)
        assert np.all(mesh.point_data[name][:, 2] == 0)
    assert region_names(mesh) == dict(enumerate((tagged.background, *tagged.regions)))
    assert mesh.field_data["length_unit_m"][0] == tagged.unit_m
    assert mesh.field_data["frequency_Hz"][0] == sol.frequency_hz
    # Coordinates are in the case's length unit.
    assert np.allclose(mesh.points[:, :2] * tagged.unit_m, tagged.mesh.p[:, vis.vertices].T,
                       rtol=1e-14, atol=1e-15)
    assert np.all(mesh.points[:, 2] == 0)


def test_file_is_binary_and_compressed(written):
    text = written[2].read_text(encoding="ascii")
    assert 'compressor="vtkZLibDataCompressor"' in text
    assert 'Name="loss_density_W_per_m3" format="binary"' in text


def test_potential_at_vertices_is_the_finite_element_value(written):
    sol, mesh, _ = written
    a = mesh.point_data["A_re_Wb_per_m"] + 1j * mesh.point_data["A_im_Wb_per_m"]
    unit = sol.problem.mesh.unit_m
    off_axis = np.flatnonzero(mesh.points[:, 0] > 0)  # B has A/r: no probes on the axis
    pick = off_axis[np.linspace(0, off_axis.size - 1, 40).astype(int)]
    expected = probe(sol, mesh.points[pick, :2].T * unit).a
    assert np.abs(a[pick] - expected).max() <= 1e-9 * np.abs(a).max()


def test_cell_losses_and_currents_add_up_to_region_totals(written):
    """sum(loss density x area x depth or 2 pi r) per region = region loss, within 1e-9;
    sum(J x area) per region = the region's net current."""
    sol, mesh, _ = written
    totals = region_totals(sol)
    area, weight = areas_and_weights(sol, mesh)
    rid = cell(mesh, "region_id")
    loss = cell(mesh, "loss_density_W_per_m3") * area * weight
    j = (cell(mesh, "J_re_A_per_m2") + 1j * cell(mesh, "J_im_A_per_m2")) * area
    assert np.allclose(cell(mesh, "cell_volume_m3"), area * weight, rtol=1e-12)
    biggest_current = max(abs(t.current_a) for t in totals.values())
    lossy = 0
    for i, name in region_names(mesh).items():
        t = totals[name]
        assert loss[rid == i].sum() == pytest.approx(t.loss_w, rel=1e-9, abs=1e-300)
        assert abs(j[rid == i].sum() - t.current_a) <= 1e-9 * max(biggest_current, 1e-300)
        lossy += t.loss_w > 0
    assert lossy >= 1


def test_rms_magnitudes_are_consistent(written):
    """|J| RMS of a cell is at least the magnitude of its mean J; in conductors
    loss density = mean |J|^2 / sigma."""
    sol, mesh, _ = written
    j = np.hypot(cell(mesh, "J_re_A_per_m2"), cell(mesh, "J_im_A_per_m2"))
    j_rms = cell(mesh, "J_rms_A_per_m2")
    assert np.all(j_rms >= j * (1 - 1e-12))
    if not sol.problem.axisymmetric:  # area and volume means coincide in planar models
        sigma = cell(mesh, "sigma_S_per_m")
        eddy = sigma > 0
        assert np.allclose(cell(mesh, "loss_density_W_per_m3")[eddy],
                           j_rms[eddy] ** 2 / sigma[eddy], rtol=1e-9)


def test_flux_density_at_vertices_is_the_area_mean_of_cell_means(written):
    """Recomputed here from the quadrature values, with the cells read back."""
    sol, mesh, _ = written
    q = quadrature_fields(sol)
    elements = visible_mesh(sol.problem.mesh).elements
    ds = q.ds[elements]
    b_cell = (q.b[:, elements] * ds).sum(-1) / ds.sum(-1)
    area = ds.sum(-1)
    tri = mesh.cells_dict["triangle"]
    total = np.zeros((2, len(mesh.points)), dtype=complex)
    weight = np.zeros(len(mesh.points))
    for k in range(3):
        np.add.at(total, (slice(None), tri[:, k]), b_cell * area)
        np.add.at(weight, tri[:, k], area)
    b = total / weight
    got = mesh.point_data["B_re_T"][:, :2].T + 1j * mesh.point_data["B_im_T"][:, :2].T
    assert np.abs(got - b).max() <= 1e-12 * np.abs(b).max()
    b_rms = mesh.point_data["B_rms_T"]
    assert np.all(b_rms >= np.sqrt(np.abs(got[0]) ** 2 + np.abs(got[1]) ** 2) * (1 - 1e-9))


def test_recovered_flux_density_agrees_with_probe_away_from_interfaces():
    """In the air well inside the busbar model the vertex values of B are within 5 % of
    the largest value there of the finite-element field (the recovery is a smoothing)."""
    sol = planar_p2()
    vis = visible_mesh(sol.problem.mesh)
    means = cell_means(sol)
    b = vertex_means(means.b[:, vis.elements], vis.triangles, means.area[vis.elements],
                     vis.vertices.size)
    x, y = vis.xy
    far = (np.abs(x) < 0.07) & (y > 0.03) & (y < 0.07)
    exact = probe(sol, vis.xy[:, far]).b
    assert np.abs(b[:, far] - exact).max() < 0.05 * np.abs(exact).max()


def test_materials_per_cell(written):
    sol, mesh, _ = written
    names = region_names(mesh)
    rid = cell(mesh, "region_id")
    for i, name in names.items():
        material = sol.problem.materials[name]
        sel = rid == i
        assert np.allclose(cell(mesh, "mu_r")[sel], material.relative_permeability, rtol=1e-12)
        eddy = cell(mesh, "sigma_S_per_m")[sel]
        assert np.all((eddy == 0) | np.isclose(eddy, material.conductivity, rtol=1e-12))


def test_exterior_disk_is_left_out(tmp_path):
    sol = open_planar()
    mesh = read_vtu(write_fields_vtu(sol, tmp_path / "open.vtu"))
    kelvin = sol.problem.mesh.kelvin
    radius = kelvin.radius / sol.problem.mesh.unit_m
    assert np.hypot(mesh.points[:, 0], mesh.points[:, 1]).max() <= radius * (1 + 1e-9)
    n_ext = sol.problem.mesh.elements(kelvin.subdomain).size
    assert len(mesh.cells_dict["triangle"]) == sol.problem.mesh.mesh.t.shape[1] - n_ext
    assert "exterior" not in region_names(mesh).values()
