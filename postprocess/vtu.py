"""Field file for an external viewer: one VTU (VTK XML unstructured grid) per solution.

The grid is the P1 triangulation of the mesh (the vertices of P2 elements
too) without the exterior disk of an open boundary. Coordinates are in the
case's length unit (metres / ``tagged.unit_m``; field data
``length_unit_m`` says how many metres one unit is); field values are SI
RMS phasors, split into real and imaginary parts, with the unit in every
array name.

Cell values are means over the cell of the quadrature-point values of
:func:`~whorl.postprocess.fields.quadrature_fields`:

- power densities (``loss_density_W_per_m3``) by volume (dV = depth dA in
  planar models, 2 pi r dA in axisymmetric ones), so that value times
  ``cell_volume_m3`` is the cell's loss exactly;
- J and E by cross-section area, so that J times the cell area is the
  current through the cell exactly;
- ``J_rms_A_per_m2`` is the square root of the area mean of abs(J)**2.

Point values of B and H are area-weighted means of the cell means of the
cells around each vertex (across a material interface they blend both
sides, H most of all); ``B_rms_T`` at a vertex is the square root of the
area-weighted mean of the cells' mean of abs(Bx)**2 + abs(By)**2. Vector
arrays have three components (x, y, 0), or (r, z, 0) in axisymmetric models.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from xml.sax.saxutils import quoteattr

import numpy as np

from whorl.postprocess.fields import quadrature_fields
from whorl.solver.materials import MU0


@dataclass
class VisibleMesh:
    """The P1 triangulation shown in files and pictures (exterior disk left out).

    ``elements`` (E,) indices of the kept mesh elements; ``vertices`` (P,)
    indices of the mesh nodes they use; ``triangles`` (E, 3) the kept
    elements in the numbering of ``vertices``; ``xy`` (2, P) coordinates in m.
    """

    elements: np.ndarray
    vertices: np.ndarray
    triangles: np.ndarray
    xy: np.ndarray


def visible_mesh(tagged) -> VisibleMesh:
    """The elements and vertices of ``tagged`` outside the exterior disk."""
    mesh = tagged.mesh
    keep = np.ones(mesh.t.shape[1], dtype=bool)
    if tagged.kelvin is not None:
        keep[tagged.elements(tagged.kelvin.subdomain)] = False
    elements = np.flatnonzero(keep)
    t = mesh.t[:3, elements]
    vertices, inverse = np.unique(t, return_inverse=True)
    triangles = inverse.reshape(t.shape).T.astype(np.int64)
    return VisibleMesh(elements, vertices, triangles, mesh.p[:, vertices])


@dataclass
class CellMeans:
    """Means over every mesh element (arrays of shape (E,) or (2, E); SI units).

    ``b`` (T) and ``j`` (A/m^2), ``e`` (V/m): complex area means; ``b_rms``
    (T) and ``j_rms`` (A/m^2): square roots of the area means of the squared
    magnitudes; ``loss`` (W/m^3): volume mean; ``area`` (m^2) and ``volume``
    (m^3, per model depth or full turn).
    """

    b: np.ndarray
    b_rms: np.ndarray
    j: np.ndarray
    j_rms: np.ndarray
    e: np.ndarray
    loss: np.ndarray
    area: np.ndarray
    volume: np.ndarray


def cell_means(solution, fields=None) -> CellMeans:
    """Cell means of the field quantities of ``solution`` (see the module notes)."""
    q = fields if fields is not None else quadrature_fields(solution)
    area = q.ds.sum(axis=1)
    volume = q.dv.sum(axis=1)

    def by_area(values):
        return (values * q.ds).sum(axis=-1) / area

    b2 = np.abs(q.b[0]) ** 2 + np.abs(q.b[1]) ** 2
    return CellMeans(
        b=by_area(q.b), b_rms=np.sqrt(by_area(b2)),
        j=by_area(q.j), j_rms=np.sqrt(by_area(np.abs(q.j) ** 2)), e=by_area(q.e),
        loss=(q.loss * q.dv).sum(axis=1) / volume, area=area, volume=volume)


def vertex_means(values, triangles, area, n_vertices) -> np.ndarray:
    """Area-weighted mean at every vertex of per-cell ``values`` (..., E)."""
    values = np.asarray(values)
    lead = values.shape[:-1]
    total = np.zeros((*lead, n_vertices), dtype=values.dtype)
    weight = np.zeros(n_vertices)
    for k in range(3):
        np.add.at(total, (..., triangles[:, k]), values * area)
        np.add.at(weight, triangles[:, k], area)
    return total / weight


def _vector(v) -> np.ndarray:
    """(2, P) -> (P, 3) with a zero third component."""
    return np.column_stack([v[0], v[1], np.zeros(v.shape[1])])


def write_fields_vtu(solution, path, extra_cells: dict | None = None) -> os.PathLike:
    """Write the fields of ``solution`` to the VTU file ``path`` (binary, zlib).

    Point data: ``A_re_Wb_per_m``, ``A_im_Wb_per_m`` (A_z or A_phi at the
    vertices), ``B_rms_T``, ``B_re_T``, ``B_im_T``, ``H_re_A_per_m``,
    ``H_im_A_per_m``. Cell data: ``region_id``, ``J_re_A_per_m2``,
    ``J_im_A_per_m2``, ``J_rms_A_per_m2``, ``E_re_V_per_m``, ``E_im_V_per_m``,
    ``loss_density_W_per_m3``, ``sigma_S_per_m``, ``mu_r``, ``cell_volume_m3``.
    Field data: ``region:NAME`` -> region id (0 is the background),
    ``length_unit_m``, ``frequency_Hz``, ``depth_m`` (planar; 0 when axisymmetric).

    Parameters
    ----------
    solution : Solution
        A harmonic or static solution (RMS phasors).
    path : str or path-like
        The file to write; its folder must exist.
    extra_cells : dict of str to ndarray, optional
        More cell data, one value per mesh element (a heating run's temperatures).

    Returns
    -------
    path-like
        ``path``.
    """
    import meshio

    system = solution.system
    tagged = solution.problem.mesh
    vis = visible_mesh(tagged)
    el = vis.elements
    means = cell_means(solution)
    nodal = system.basis.nodal_dofs[0]
    a = solution.a[nodal[vis.vertices]]
    n = vis.vertices.size

    def recover(values):
        return vertex_means(values[..., el], vis.triangles, means.area[el], n)

    b = recover(means.b)
    h = recover(system.nu * means.b)
    b_rms = np.sqrt(recover(means.b_rms ** 2))
    points = np.column_stack([vis.xy[0], vis.xy[1], np.zeros(n)]) / tagged.unit_m
    names = (tagged.background, *tagged.regions)
    field_data = {f"region:{name}": np.array([i], dtype=np.int32) for i, name in enumerate(names)}
    field_data["length_unit_m"] = np.array([tagged.unit_m])
    field_data["frequency_Hz"] = np.array([float(solution.frequency_hz)])
    field_data["depth_m"] = np.array([0.0 if tagged.axisymmetric else solution.problem.depth_m])
    cell = {
        "region_id": tagged.region_of_element()[el].astype(np.int32),
        "J_re_A_per_m2": means.j.real[el], "J_im_A_per_m2": means.j.imag[el],
        "J_rms_A_per_m2": means.j_rms[el],
        "E_re_V_per_m": means.e.real[el], "E_im_V_per_m": means.e.imag[el],
        "loss_density_W_per_m3": means.loss[el],
        "sigma_S_per_m": np.asarray(system.sigma, dtype=float)[el],
        "mu_r": 1.0 / (MU0 * np.asarray(system.nu, dtype=float)[el]),
        "cell_volume_m3": means.volume[el],
    }
    for key, values in (extra_cells or {}).items():
        cell[key] = np.asarray(values, dtype=float)[el]
    out = meshio.Mesh(
        points, [("triangle", vis.triangles)],
        point_data={"A_re_Wb_per_m": a.real, "A_im_Wb_per_m": a.imag, "B_rms_T": b_rms,
                    "B_re_T": _vector(b.real), "B_im_T": _vector(b.imag),
                    "H_re_A_per_m": _vector(h.real), "H_im_A_per_m": _vector(h.imag)},
        cell_data={k: [np.ascontiguousarray(v)] for k, v in cell.items()},
        field_data=field_data)
    meshio.vtu.write(os.fspath(path), out, binary=True, compression="zlib")
    unit = f"{tagged.unit_m:.12g} m"
    _add_field_data(path, field_data, f"whorl fields at {solution.frequency_hz:.12g} Hz: "
                    f"coordinates in units of {unit}; values SI, RMS phasors")
    return path


def _add_field_data(path, field_data, comment) -> None:
    """Add a FieldData block and a comment to a VTU file written by meshio.

    meshio's VTU writer leaves field data out, though its reader (and VTK)
    read a ``FieldData`` element of the grid; its arrays are written as text.
    """
    blocks = []
    for name, values in field_data.items():
        kind = "Int32" if values.dtype.kind == "i" else "Float64"
        text = " ".join(repr(v) for v in values.tolist())
        blocks.append(f'<DataArray type="{kind}" Name={quoteattr(name)} '
                      f'NumberOfTuples="{values.size}" format="ascii">{text}</DataArray>')
    text = Path(path).read_text(encoding="ascii")
    head, sep, tail = text.partition("<UnstructuredGrid>\n")
    if not sep:
        raise ValueError(f"{path}: not a VTU file as written by meshio")
    safe = comment.replace("--", "- -")
    Path(path).write_text(f"{head}<!-- {safe} -->\n{sep}<FieldData>\n" + "\n".join(blocks)
                          + f"\n</FieldData>\n{tail}", encoding="ascii")


def read_vtu(path):
    """Read a VTU file back as a :class:`meshio.Mesh` (cell data as one block per type)."""
    import meshio

    return meshio.vtu.read(os.fspath(path))
