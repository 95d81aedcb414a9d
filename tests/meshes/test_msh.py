"""msh files (gmsh 4.1 binary) round trip, and the mesh picture."""

import gmsh
import numpy as np
import pytest

from whorl.meshes import (
    Circle,
    DomainSpec,
    Geometry,
    MeshError,
    MeshOptions,
    Rectangle,
    RegionSpec,
    Ring,
    build_mesh,
    read_msh,
    write_msh,
)
from whorl.postprocess.meshplot import plot_mesh, unit_name


@pytest.fixture(scope="module", params=[1, 2], ids=["straight", "curved"])
def tagged(request):
    regions = (
        RegionSpec("shaft", Rectangle((0.0, -20.0), (6.0, 40.0)), skin_depth=1.5),
        RegionSpec("turn.1", Circle((10.0, -4.0), 2.0)),
        RegionSpec("turn.2", Circle((10.0, 4.0), 2.0)),
        RegionSpec("sleeve", Ring((0.0, 30.0), 1.0, 3.0)),
    )
    # the sleeve's ring would cross the axis: keep the model planar
    domain = DomainSpec("rectangle", corner=(-40.0, -50.0), size=(80.0, 100.0))
    return build_mesh(Geometry(regions, domain, unit_m=1e-3,
                               options=MeshOptions(order=request.param)))


def test_round_trip(tagged, tmp_path):
    path = tmp_path / "mesh.msh"
    write_msh(tagged, path)
    assert path.read_bytes().startswith(b"$MeshFormat\n4.1 1 8\n")
    back = read_msh(path)
    mesh = tagged.mesh
    assert back.points.shape[0] == mesh.p.shape[1]
    curved = tagged.mesh.p.shape[1] > tagged.mesh.t.max() + 1
    tri, line = ("triangle6", "line3") if curved else ("triangle", "line")
    triangles = [b for b in back.cells if b.type == tri]
    assert sum(len(b.data) for b in triangles) == mesh.t.shape[1]
    names = {*tagged.regions, "domain", "left", "right", "bottom", "top"}
    assert set(back.field_data) == names
    assert all(back.field_data[s][1] == 1 for s in ("left", "right", "bottom", "top"))
    # the same elements with the same coordinates, in millimetres, per physical group
    physical = back.cell_data["gmsh:physical"]
    for name in (*tagged.regions, "domain"):
        tag = back.field_data[name][0]
        blocks = [b.data for b, t in zip(back.cells, physical, strict=True)
                  if b.type == tri and t[0] == tag]
        corners = np.concatenate(blocks)[:, :3]
        got = np.sort(back.points[corners][:, :, :2].reshape(-1, 6), axis=0)
        want = mesh.p.T[mesh.t[:, tagged.elements(name)].T] / tagged.unit_m
        assert np.allclose(got, np.sort(want.reshape(-1, 6), axis=0))
    for side in ("left", "right", "bottom", "top"):
        tag = back.field_data[side][0]
        lines = [b.data for b, t in zip(back.cells, physical, strict=True)
                 if b.type == line and t[0] == tag]
        assert sum(len(x) for x in lines) == len(mesh.boundaries[side])
    x = back.points[np.concatenate(
        [b.data for b, t in zip(back.cells, physical, strict=True)
         if t[0] == back.field_data["left"][0]])][:, :, 0]
    assert np.allclose(x, -40.0)


def test_gmsh_reads_the_physical_groups(tagged, tmp_path):
    path = tmp_path / "mesh.msh"
    write_msh(tagged, path)
    gmsh.initialize(interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.open(str(path))
        groups = {gmsh.model.getPhysicalName(d, t): d for d, t in gmsh.model.getPhysicalGroups()}
        kind = 9 if tagged.mesh.p.shape[1] > tagged.mesh.t.max() + 1 else 2
        tags, _ = gmsh.model.mesh.getElementsByType(kind)
    finally:
        gmsh.finalize()
    assert groups == {**{n: 2 for n in (*tagged.regions, "domain")},
                      **{s: 1 for s in ("left", "right", "bottom", "top")}}
    assert len(tags) == tagged.mesh.t.shape[1]


def test_region_named_like_a_side_cannot_be_written(tmp_path):
    g = Geometry((RegionSpec("top", Circle((0.0, 0.0), 1.0)),),
                 DomainSpec("rectangle", corner=(-5.0, -5.0), size=(10.0, 10.0)))
    with pytest.raises(MeshError, match="top"):
        write_msh(build_mesh(g), tmp_path / "m.msh")
    assert not (tmp_path / "m.msh").exists()


def test_plot_mesh_writes_a_png(tagged, tmp_path):
    path = tmp_path / "mesh.png"
    plot_mesh(tagged, path, title="test mesh")
    data = path.read_bytes()
    assert data.startswith(b"\x89PNG") and len(data) > 10_000
    assert unit_name(1e-3) == "mm" and unit_name(1.0) == "m"
