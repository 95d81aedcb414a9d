"""Assemble the real matrices of a problem once; combine them per frequency.

Unknowns, in order: the potential A at every finite-element dof (N), the
voltage unknown u of every branch (see :mod:`.circuits`), the current of
every *driven* source (voltage-driven or capacitor-fed), and the voltage of
every series capacitor. The system is

    S0 x + S1 dx/dt = b(t),   and with phasors   (S0 + j omega S1) x = b

with S0 and S1 real and assembled once, so a frequency list costs one
factorisation per frequency and no reassembly, and time stepping reuses them.

Rows, with kappa = depth (planar) or 2 pi (axisymmetric) and d/dt -> j omega:

- field:    K A + M dA/dt - sum_b c_b u_b - sum_s f_s I_s = sum_s' f_s' i_s'(t)
- branch b: -c_b^T dA/dt + G_b u_b - sign_b I_s(b) = sign_b i(t) (current-driven) or 0
- driven massive source:   kappa sum_b sign_b u_b + R_s I_s - v_C = v(t)
- driven stranded source:  kappa f_s^T dA/dt + R_s I_s - v_C = v(t)
- series capacitor:        C dv_C/dt + I_s = 0   (v_C drives the current out of it)

Moving conductors (:mod:`.motion`) add their frequency-independent convection
matrix to the field rows of S0 and their motional current -d_b^T A to the branch
rows of S0 (and, where streamline upwinding acts, its blocks to S0 and S1).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from skfem import Basis, ElementTriP0, ElementTriP1, ElementTriP2, asm

from whorl.solver import axisymmetric, motion, planar
from whorl.solver.boundary import AppliedFieldSide, FluxNormal, FluxParallel, Open, Potential
from whorl.solver.circuits import Branch, branches, eddy_regions
from whorl.solver.coefficients import eddy_conductivity, reluctivity
from whorl.solver.errors import SolveError
from whorl.solver.kelvin import glue, reluctivity_factor
from whorl.solver.sources import AppliedField, Massive, Stranded, current_is_unknown

ELEMENTS = {1: ElementTriP1, 2: ElementTriP2}


def formulation(problem):
    """The module of weak forms for the problem's geometry."""
    return axisymmetric if problem.axisymmetric else planar


@dataclass
class System:
    """Assembled matrices and bookkeeping for one problem (one mesh)."""

    problem: object
    form: object
    basis: object
    nu: np.ndarray  # per element (m/H)
    sigma: np.ndarray
    kappa: float
    branches: tuple[Branch, ...]
    driven: tuple  # sources whose current is an unknown, in unknown order
    S0: sp.csr_matrix
    S1: sp.csr_matrix
    stranded_load: dict  # source name -> f_s (field rows, per ampere)
    capacitors: tuple = ()  # driven sources with a series capacitor, in unknown order
    region_bases: dict = field(default_factory=dict)
    areas: dict = field(default_factory=dict)
    fixed: np.ndarray | None = None  # indices of fixed field dofs
    fixed_values: np.ndarray | None = None
    nu_q: np.ndarray | None = None  # at quadrature points, exterior-disk factor included
    target: np.ndarray | None = None  # unknown i is identified with unknown target[i]
    coupling: np.ndarray | None = None  # (N, branches): c_b, int_b sigma v (x r^0)
    conductance: np.ndarray | None = None  # (branches,): G_b
    motion: object | None = None  # motion.MotionBlocks of a model with moving conductors
    # saturable materials: (elements, energy density at their quadrature points, J/m^3)
    # of one solved state, used instead of nu |B|^2 / 2 there (see solver.newton)
    energy_q: tuple | None = None

    @property
    def n_field(self) -> int:
        return self.basis.N

    @property
    def size(self) -> int:
        return self.S0.shape[0]

    def rhs(self, omega: float = 0.0) -> np.ndarray:
        """Right-hand side of a harmonic solution: the sources' phasors (the same at every
        omega; the argument keeps the call readable beside the matrix's)."""
        return self.rhs_for({s.name: (s.voltage if current_is_unknown(s) else s.current)
                             for s in self.problem.sources if isinstance(s, Massive | Stranded)})

    def rhs_for(self, drive: dict) -> np.ndarray:
        """Right-hand side for ``drive``: source name -> its current (current-driven)
        or its voltage (driven sources; None or missing means 0 V)."""
        dtype = complex if any(isinstance(v, complex) for v in drive.values()) else float
        b = np.zeros(self.size, dtype=dtype)
        nf, nb = self.n_field, len(self.branches)
        for s in self.problem.sources:
            if isinstance(s, Stranded) and not current_is_unknown(s):
                b[:nf] += drive.get(s.name, 0.0) * self.stranded_load[s.name]
        for i, br in enumerate(self.branches):
            src = self.source(br.source)
            if src is not None and not current_is_unknown(src):
                b[nf + i] = br.sign * drive.get(src.name, 0.0)
        for k, s in enumerate(self.driven):
            b[nf + nb + k] = drive.get(s.name) or 0.0
        return b

    def source(self, name):
        for s in self.problem.sources:
            if s.name == name:
                return s
        return None

    def region_basis(self, region: str):
        """The basis restricted to one region's elements (global dof numbering), cached."""
        if region not in self.region_bases:
            self.region_bases[region] = self.basis.with_elements(
                self.problem.mesh.elements(region))
        return self.region_bases[region]


def _p0(basis, values):
    """Interpolate a per-element array as a piecewise constant at quadrature points."""
    return basis.with_element(ElementTriP0()).interpolate(values)


def assemble(problem, progress=None) -> System:
    """Assemble the real matrices S0, S1 of ``problem``."""
    if problem.order not in ELEMENTS:
        raise SolveError(f"element order must be 1 or 2, got {problem.order}")
    form = formulation(problem)
    mesh = problem.mesh.mesh
    basis = Basis(mesh, ELEMENTS[problem.order](), intorder=2 * problem.order)
    nu = reluctivity(problem)
    sigma = eddy_conductivity(problem)
    kappa = 2 * np.pi if problem.axisymmetric else problem.depth_m
    if progress:
        progress("assembling")
    nu_q = np.asarray(_p0(basis, nu))
    kelvin = problem.mesh.kelvin
    if kelvin is not None:
        ext = problem.mesh.elements(kelvin.subdomain)
        x = basis.mapping.F(basis.X)[:, ext]
        nu_q[ext] *= reluctivity_factor(x, kelvin, problem.axisymmetric)
    K = asm(form.stiffness, basis, nu=nu_q)
    M = asm(form.conductor_mass, basis, sigma=_p0(basis, sigma))
    brs = branches(problem)
    driven = tuple(s for s in problem.sources
                   if isinstance(s, Massive | Stranded) and current_is_unknown(s))
    caps = tuple(s for s in driven if s.capacitance is not None)
    system = System(problem, form, basis, nu, sigma, kappa, brs, driven,
                    None, None, {}, caps)

    def region_vectors(region):
        rb = system.region_basis(region)
        s_r = sigma[problem.mesh.elements(region)]  # per element (temperature-dependent)
        c = asm(form.voltage_coupling, rb, sigma=s_r[:, None])
        g = float(asm(form.voltage_conductance, rb, sigma=s_r[:, None]))
        return c, g

    nf, nb, nd = basis.N, len(brs), len(driven)
    C = np.zeros((nf, nb))
    G = np.zeros(nb)
    for i, br in enumerate(brs):
        for r in br.regions:
            c, g = region_vectors(r)
            C[:, i] += c
            G[i] += g
    for s in problem.sources:
        if isinstance(s, Stranded):
            f = np.zeros(nf)
            for sign, regions in ((1.0, s.regions), (-1.0, s.return_regions)):
                for r in regions:
                    rb = system.region_basis(r)
                    area = float(asm(form.cross_section, rb))
                    system.areas[r] = area
                    f += sign * s.turns / area * asm(form.source_load, rb,
                                                     j=np.ones((rb.nelems, 1)))
            system.stranded_load[s.name] = f

    system.coupling, system.conductance = C, G
    system.nu_q = nu_q
    # Blocks of S0 (omega-free) and S1 (multiplied by j omega).
    C_sp = sp.csr_matrix(C)
    nc = len(caps)
    S0 = [[K, -C_sp, None, None], [None, sp.diags(G), None, None],
          [None, None, None, None], [None, None, None, None]]
    S1 = [[M, None, None, None], [-C_sp.T, None, None, None],
          [None, None, None, None], [None, None, None, None]]
    if problem.motions:
        motion.check(problem, set(eddy_regions(problem)))
        mb = motion.assemble_motion(problem, basis, form, sigma, nu, brs, _p0)
        system.motion = mb
        S0[0][0] = K + mb.field
        S0[0][1] = -sp.csr_matrix(C + mb.coupling)
        S0[1][0] = -sp.csr_matrix(mb.current)
        if mb.mass is not None:
            S1[0][0] = M + mb.mass
    if nd:
        FI = np.zeros((nf, nd))     # field rows, driven-current columns
        BI = np.zeros((nb, nd))     # branch rows, driven-current columns
        IU = np.zeros((nd, nb))     # driven rows, branch columns (S0)
        IA = np.zeros((nd, nf))     # driven rows, field columns (S1)
        RR = np.zeros(nd)
        for k, s in enumerate(driven):
            RR[k] = s.resistance
            if isinstance(s, Stranded):
                FI[:, k] = -system.stranded_load[s.name]
                IA[k] = kappa * system.stranded_load[s.name]
            else:
                for i, br in enumerate(brs):
                    if br.source == s.name:
                        BI[i, k] = -br.sign
                        IU[k, i] = kappa * br.sign
        S0[0][2] = sp.csr_matrix(FI)
        S0[1][2] = sp.csr_matrix(BI)
        S0[2][1] = sp.csr_matrix(IU)
        S0[2][2] = sp.diags(RR)
        S1[2][0] = sp.csr_matrix(IA)
    if nc:
        IC = np.zeros((nd, nc))  # driven rows, capacitor-voltage columns
        CI = np.zeros((nc, nd))  # capacitor rows, driven-current columns
        for m, s in enumerate(caps):
            k = driven.index(s)
            IC[k, m] = -1.0
            CI[m, k] = 1.0
        S0[2][3] = sp.csr_matrix(IC)
        S0[3][2] = sp.csr_matrix(CI)
        S1[3][3] = sp.diags([float(s.capacitance) for s in caps])
    n = nf + nb + nd + nc
    shapes = (nf, nb, nd, nc)
    system.S0 = _block(S0, shapes, n)
    system.S1 = _block(S1, shapes, n)
    system.fixed, system.fixed_values = dirichlet(problem, basis, form)
    system.target = np.arange(n)
    if kelvin is not None:
        system.target[:nf] = glue(basis, kelvin)
    if problem.mesh.axisymmetric is False and system.fixed.size == 0:
        raise SolveError("no side of the domain fixes A (every side is flux-normal): "
                         "the potential floats; make at least one side flux-parallel")
    return system


def _block(blocks, shapes, n):
    """bmat that tolerates empty block rows and columns."""
    rows = []
    for i, row in enumerate(blocks):
        if shapes[i] == 0:
            continue
        rows.append([blk if blk is not None or shapes[j] == 0 else
                     sp.csr_matrix((shapes[i], shapes[j])) for j, blk in enumerate(row)
                     if shapes[j] > 0])
    out = sp.bmat(rows, format="csr")
    assert out.shape == (n, n)
    return out


def dirichlet(problem, basis, form):
    """Fixed field dofs and their values from the side conditions (A in Wb/m)."""
    mesh = problem.mesh.mesh
    dofs, values = [], []
    applied = [s for s in problem.sources if isinstance(s, AppliedField)]
    sides = list(mesh.boundaries) if mesh.boundaries else []
    kelvin = problem.mesh.kelvin
    for side in sides:
        cond = problem.condition(side)
        if kelvin is not None and side == kelvin.arc:
            continue  # glued to the domain's circle
        if side == "axis" and problem.axisymmetric or kelvin and side == kelvin.axis_side:
            cond = FluxParallel()
        if isinstance(cond, FluxNormal):
            continue
        if isinstance(cond, Open):
            if kelvin is None:
                raise SolveError(f"side {side!r} is open but the mesh has no exterior disk")
            continue
        d = basis.get_dofs(side).all()
        if isinstance(cond, FluxParallel):
            v = np.zeros(d.size, dtype=complex)
        elif isinstance(cond, Potential):
            v = np.full(d.size, complex(cond.value))
        elif isinstance(cond, AppliedFieldSide):
            if not applied:
                raise SolveError(f"side {side!r} is 'applied-field' but no applied-field source")
            x, y = basis.doflocs[:, d]
            v = sum(form.applied_potential(s.flux_density, x, y) for s in applied)
            v = np.asarray(v, dtype=complex) * np.ones(d.size)
        else:
            raise SolveError(f"side {side!r}: unknown condition {cond!r}")
        dofs.append(d)
        values.append(v)
    if kelvin is not None and not problem.axisymmetric:
        # The exterior disk's centre is the point at infinity: A = 0 there fixes the gauge.
        dofs.append(np.array([kelvin.centre_node]))
        values.append(np.zeros(1, dtype=complex))
    if not dofs:
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=complex)
    d = np.concatenate(dofs)
    v = np.concatenate(values)
    d, first = np.unique(d, return_index=True)  # a corner shared by two sides: first wins
    return d, v[first]
