r"""The heat equation on the heated regions: weak forms and the discrete domain.

Strong form, temperature T in K, loss density q in W/m^3:

.. math::

    \rho c\,\frac{\partial T}{\partial t} - \nabla\cdot(k\nabla T) = q

with, on the surfaces that lose heat (normal n pointing out),

.. math::

    -k\,\partial_n T = h\,(T - T_a) + \varepsilon\sigma_{SB}(T^4 - T_a^4)

and no flux elsewhere (the axis, flux-normal sides, faces between heated
regions). Weak form, for every test function v:

.. math::

    \int \rho c\,\dot T v\,dV + \int k\nabla T\cdot\nabla v\,dV
    + \int_S [h (T - T_a) + \varepsilon\sigma_{SB}(T^4 - T_a^4)]\,v\,dS
    = \int q v\,dV

Planar models: dV = depth dx dy, dS = depth dl. Axisymmetric models:
dV = 2 pi r dr dz, dS = 2 pi r dl; the axis needs nothing (the r weight
makes the flux through it vanish). The forms below carry the weight ``w.wt``
(depth or 2 pi r) and a unit coefficient: the per-element coefficient (k,
rho c at the element's mean temperature; h per facet) is applied by
:mod:`.elementwise`, so matrices are in W/K and J/K for the whole model.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from skfem import Basis, BilinearForm, FacetBasis, LinearForm
from skfem.helpers import dot, grad

from whorl.solver.boundary import FluxNormal
from whorl.solver.elementwise import ElementwiseMatrix, ElementwiseVector
from whorl.solver.errors import SolveError
from whorl.solver.system import ELEMENTS

STEFAN_BOLTZMANN = 5.670374419e-8
"""W/(m^2 K^4) (CODATA 2018, exact in the 2019 SI)."""


@BilinearForm
def heat_capacity(u, v, w):
    """int u v dV (times rho c per element): J/K per unit rho c."""
    return u * v * w.wt


@BilinearForm
def conduction(u, v, w):
    """int grad u . grad v dV (times k per element)."""
    return dot(grad(u), grad(v)) * w.wt


@LinearForm
def heat_source(v, w):
    """int q v dV with the loss density ``w.q`` (W/m^3) at the quadrature points."""
    return w.q * v * w.wt


@LinearForm
def volume(v, w):
    """int v dV: each dof's share of the volume (m^3)."""
    return v * w.wt


@BilinearForm
def surface_exchange(u, v, w):
    """int_S u v dS (times the exchange coefficient per facet, W/(m^2 K))."""
    return u * v * w.wt


@LinearForm
def surface_load(v, w):
    """int_S v dS (times the coefficient's right-hand side per facet)."""
    return v * w.wt


def _weight(x, axisymmetric: bool, depth_m: float):
    return 2 * np.pi * x[0] if axisymmetric else depth_m + 0.0 * x[0]


@dataclass
class SurfacePatch:
    """The facets of one ``[[surface]]`` entry: exchange matrix and load per facet."""

    facets: np.ndarray
    exchange: ElementwiseMatrix
    load: ElementwiseVector
    area_m2: np.ndarray          # per facet (dS weighted: planar x depth, axisym 2 pi r)
    dof_means: object = None     # (facets, active dofs) matrix: facet mean temperature
    region: np.ndarray | None = None  # heated region of each facet


@dataclass
class HeatDomain:
    """The heated regions' discretisation: active dofs, element data, surfaces.

    Attributes
    ----------
    basis : skfem Basis on the heated elements (global dof numbering)
    elements : global indices of the heated elements
    region : name of the heated region of each heated element
    active : global dofs that carry a temperature; unknown i is dof active[i]
    capacity, conduction : ElementwiseMatrix (J/K, W/K per unit coefficient)
    element_volume : m^3 of each heated element (planar: for the depth)
    element_mean : sparse (heated elements, unknowns) averaging matrix
    """

    basis: object
    elements: np.ndarray
    region: np.ndarray
    active: np.ndarray
    local: np.ndarray
    capacity: ElementwiseMatrix
    conduction: ElementwiseMatrix
    element_volume: np.ndarray
    element_mean: object
    axisymmetric: bool
    depth_m: float
    surfaces: list = field(default_factory=list)
    weight: object = None  # depth or 2 pi r at the quadrature points

    @property
    def size(self) -> int:
        return self.active.size

    def element_temperature(self, t: np.ndarray) -> np.ndarray:
        """Mean temperature of every heated element (K) from the unknowns ``t``."""
        return self.element_mean @ t

    def source_vector(self, q_quadrature: np.ndarray) -> np.ndarray:
        """int q v dV for the loss density at the heated elements' quadrature points."""
        b = heat_source.assemble(self.basis, q=q_quadrature, wt=self.weight)
        return b[self.active]

    def quadrature_values(self, t: np.ndarray) -> np.ndarray:
        """The temperature at the quadrature points (heated elements, points)."""
        full = np.zeros(self.basis.N)
        full[self.active] = t
        return self.basis.interpolate(full).value


def heat_domain(tagged, order: int, heated, surfaces=(), boundary=None,
                depth_m: float = 1.0) -> HeatDomain:
    """Discretise the heat equation on the regions ``heated`` of ``tagged``.

    Parameters
    ----------
    tagged : TaggedMesh (metres)
    order : Lagrange order, 1 or 2 (the field's)
    heated : region names
    surfaces : list of region-name tuples, one per ``[[surface]]``: the part of the
        boundary of the heated set that belongs to those regions and touches an
        unheated element or a domain side (not the axis, not a flux-normal side)
    boundary : the field problem's side conditions (flux-normal sides lose no heat)
    """
    mesh = tagged.mesh
    if not heated:
        raise SolveError("a heating study needs at least one heated region")
    elements = np.concatenate([tagged.elements(r) for r in heated])
    region = np.concatenate([np.full(tagged.elements(r).size, i) for i, r in enumerate(heated)])
    names = np.array(list(heated), dtype=object)
    basis = Basis(mesh, ELEMENTS[order](), intorder=2 * order, elements=elements)
    active = np.unique(basis.element_dofs)
    local = np.full(basis.N, -1)
    local[active] = np.arange(active.size)
    axisym = tagged.axisymmetric
    wt = _weight(np.asarray(basis.global_coordinates()), axisym, depth_m)
    capacity = ElementwiseMatrix(heat_capacity, basis, local, active.size, wt=wt)
    cond = ElementwiseMatrix(conduction, basis, local, active.size, wt=wt)
    element_volume = (wt * basis.dx).sum(axis=1)
    # Mean temperature of element e: int_e T dV / V_e.
    rows = np.repeat(np.arange(elements.size)[None, :], basis.Nbfun, axis=0)
    coo = volume.elemental(basis, wt=wt)
    shares = coo.data.reshape(-1, elements.size)          # int_e phi_i dV
    cols = local[basis.element_dofs]
    element_mean = sp.csr_matrix(((shares / element_volume[None, :]).ravel(),
                                  (rows.ravel(), cols.ravel())),
                                 shape=(elements.size, active.size))
    domain = HeatDomain(basis, elements, names[region], active, local, capacity, cond,
                        element_volume, element_mean, axisym, depth_m, weight=wt)
    heated_mask = np.zeros(mesh.t.shape[1], dtype=bool)
    heated_mask[elements] = True
    region_of = {}
    for r in heated:
        for e in tagged.elements(r):
            region_of[int(e)] = r
    closed = _closed_facets(tagged, boundary or {})
    for regions in surfaces:
        facets, owner = _surface_facets(mesh, heated_mask, region_of, set(regions), closed)
        patch = _patch(mesh, order, facets, local, active.size, axisym, depth_m)
        patch.region = np.array(owner, dtype=object)
        domain.surfaces.append(patch)
    return domain


def _closed_facets(tagged, boundary) -> set:
    """Facets no heat crosses: the axis and flux-normal sides."""
    out = set()
    for side, facets in (tagged.mesh.boundaries or {}).items():
        if side in ("axis", "exterior-axis") or isinstance(boundary.get(side), FluxNormal):
            out.update(int(f) for f in facets)
    return out


def _surface_facets(mesh, heated_mask, region_of, regions, closed) -> np.ndarray:
    f2t = mesh.f2t
    t0, t1 = f2t
    h0 = heated_mask[t0]
    h1 = np.where(t1 >= 0, heated_mask[np.maximum(t1, 0)], False)
    edge = h0 ^ h1
    out, owner = [], []
    for f in np.flatnonzero(edge):
        e = t0[f] if h0[f] else t1[f]
        if region_of.get(int(e)) in regions and int(f) not in closed:
            out.append(f)
            owner.append(region_of[int(e)])
    return np.asarray(out, dtype=np.int64), owner


def _patch(mesh, order, facets, local, size, axisym, depth_m) -> SurfacePatch:
    if facets.size == 0:
        return SurfacePatch(facets, None, None, np.zeros(0))
    fb = FacetBasis(mesh, ELEMENTS[order](), facets=facets, intorder=2 * order + 2)
    wt = _weight(np.asarray(fb.global_coordinates()), axisym, depth_m)
    exchange = ElementwiseMatrix(surface_exchange, fb, local, size, wt=wt)
    load = ElementwiseVector(surface_load, fb, local, size, wt=wt)
    area = (wt * fb.dx).sum(axis=1)
    shares = surface_load.elemental(fb, wt=wt).data.reshape(-1, facets.size)
    rows = np.repeat(np.arange(facets.size)[None, :], fb.Nbfun, axis=0)
    cols = local[fb.element_dofs]
    keep = cols >= 0
    means = sp.csr_matrix(((shares / area[None, :])[keep], (rows[keep], cols[keep])),
                          shape=(facets.size, size))
    return SurfacePatch(facets, exchange, load, area, means)
