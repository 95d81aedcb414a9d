r"""Moving conductors: the motional term sigma v x B, seen from the frame of the sources.

A rigid conductor whose shape its motion leaves unchanged (a strip running
through the model, a cylinder spinning about its own axis, a billet longer
than the model moving along the axis) has a steady field in the frame of the
sources, and carries

.. math::

    J = \sigma (E + v \times B), \qquad (v \times B)_\perp = -v\cdot\nabla A

in both geometries: planar (v_x B_y - v_y B_x = -v . grad A_z) and axisymmetric
with v = v_z e_z (v_z B_r = -v_z dA/dz, since B_r = -dA/dz). Rotation about
c with angular velocity Omega (planar, counter-clockwise positive) has
v = Omega e_z x (x - c) = Omega (-(y - c_y), x - c_x).

Weak form: the field equation gains, for every test function w,

.. math::

    \int \sigma\, (v\cdot\nabla A)\, w \; \rho

(rho = 1 planar, r axisymmetric: the weight of :func:`weight`), and the
current of a massive branch k, I_k = int_k J (per radian in axisymmetric
models, unweighted), gains - int_k sigma v . grad A. Both are frequency
independent and go into S0 (which is then not symmetric); static and transient
studies see them unchanged.

Stabilisation: where the mesh Peclet number Pe = mu sigma |v| h / 2 exceeds 1
the Galerkin solution of this convection-diffusion equation oscillates. The
streamline-upwind Petrov-Galerkin method (A. N. Brooks and T. J. R. Hughes,
"Streamline upwind/Petrov-Galerkin formulations for convection dominated
flows...", Comput. Methods Appl. Mech. Eng. 32, 199-259, 1982) adds, element by
element, the residual of the strong equation tested with tau v . grad w:

.. math::

    \sum_e \int_e \tau\, \sigma\left(v\cdot\nabla A + j\omega A - E_u\right)
        (v\cdot\nabla w)\, \rho

with E_u the applied field of a massive conductor (u planar, u / r
axisymmetric), tau = h xi(Pe) / (2 |v|), xi = coth Pe - 1/Pe (their optimal
one-dimensional choice) and h the element's length along v divided by the
element order (T. E. Tezduyar and Y. Osawa, Comput. Methods Appl. Mech. Eng.
190, 411-430, 2000, for the length along the flow). The second derivatives of
the diffusion term are left out of the residual (they vanish on P1 elements; on
P2 elements dropping them is the usual simplification). With ``"auto"`` the
term acts only on elements with Pe > 1, so a well-resolved model keeps the plain
Galerkin solution and its exact power balance.
"""

from __future__ import annotations

import logging
import warnings
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from skfem import BilinearForm, LinearForm, asm

from whorl.solver.errors import SolveError

log = logging.getLogger(__name__)

STABILISATION = ("auto", "on", "off")


@dataclass(frozen=True)
class Translation:
    """Rigid translation of ``regions`` at ``velocity`` (m/s): (vx, vy) planar,
    (0, vz) axisymmetric."""

    regions: tuple[str, ...]
    velocity: tuple[float, float]
    stabilisation: str = "auto"
    kind = "translation"

    def at(self, x):
        """Velocity (2, ...) at points ``x`` (2, ...) in m."""
        x = np.asarray(x, dtype=float)
        return np.array([np.full(x.shape[1:], self.velocity[0]),
                         np.full(x.shape[1:], self.velocity[1])])


@dataclass(frozen=True)
class Rotation:
    """Rigid rotation of ``regions`` about ``center`` (m) at ``angular_velocity``
    (rad/s, counter-clockwise positive); planar models only."""

    regions: tuple[str, ...]
    angular_velocity: float
    center: tuple[float, float] = (0.0, 0.0)
    stabilisation: str = "auto"
    kind = "rotation"

    def at(self, x):
        x = np.asarray(x, dtype=float)
        return self.angular_velocity * np.array([-(x[1] - self.center[1]),
                                                 x[0] - self.center[0]])


def moving_regions(problem) -> dict[str, object]:
    """Region name -> its motion."""
    return {r: m for m in getattr(problem, "motions", ()) for r in m.regions}


def element_velocity(problem, x, cells=None) -> np.ndarray:
    """Velocity (2, ...) at points ``x`` (2, E, Q) of the elements, or at points
    (2, P) lying in elements ``cells`` (P,); zero outside moving regions."""
    x = np.asarray(x, dtype=float)
    out = np.zeros_like(x)
    for motion in getattr(problem, "motions", ()):
        for r in motion.regions:
            elems = problem.mesh.elements(r)
            if cells is None:
                out[:, elems] = motion.at(x[:, elems])
            else:
                hit = np.isin(cells, elems) & (np.asarray(cells) >= 0)
                out[:, hit] = motion.at(x[:, hit])
    return out


def check(problem, eddy: set[str]) -> None:
    """Every moving region must exist and carry eddy currents; no region moves twice;
    axisymmetric models only translate along the axis."""
    seen: dict[str, int] = {}
    for i, m in enumerate(problem.motions, start=1):
        if problem.axisymmetric and isinstance(m, Rotation):
            raise SolveError(f"motion {i}: rotation in an axisymmetric model (only "
                             "translation along the axis keeps the model axisymmetric)")
        if problem.axisymmetric and m.velocity[0] != 0:
            raise SolveError(f"motion {i}: a velocity across the axis (v_r = "
                             f"{m.velocity[0]:g} m/s) in an axisymmetric model")
        for r in m.regions:
            if r not in problem.mesh.regions:
                raise SolveError(f"motion {i}: no region {r!r}")
            if r not in eddy:
                raise SolveError(f"motion {i}: region {r!r} is not a conductor with eddy "
                                 "currents (conductivity 0, or a stranded winding)")
            if r in seen:
                raise SolveError(f"motion {i}: region {r!r} already moves in motion {seen[r]}")
            seen[r] = i


# ----------------------------------------------------------------------- weak forms


def _along(vel, g):
    return vel[0] * g[0] + vel[1] * g[1]


@BilinearForm
def convection(u, v, w):
    """int sigma (vel . grad u) v rho: the motional current in the field equation."""
    return w.sigma * (w.vx * u.grad[0] + w.vy * u.grad[1]) * v * w.rho


@BilinearForm
def streamline_convection(u, v, w):
    """sum_e int_e tau sigma (vel . grad u)(vel . grad v) rho (SUPG, S0)."""
    vel = (w.vx, w.vy)
    return w.tau * w.sigma * _along(vel, u.grad) * _along(vel, v.grad) * w.rho


@BilinearForm
def streamline_mass(u, v, w):
    """sum_e int_e tau sigma u (vel . grad v) rho (SUPG, S1: times j omega)."""
    return w.tau * w.sigma * u * (w.vx * v.grad[0] + w.vy * v.grad[1]) * w.rho


@LinearForm
def streamline_coupling(v, w):
    """sum_e int_e tau sigma (vel . grad v): the applied field of a massive conductor in the
    SUPG residual (u planar; u / r times the weight r axisymmetric)."""
    return w.tau * w.sigma * (w.vx * v.grad[0] + w.vy * v.grad[1])


@LinearForm
def motional_current(v, w):
    """int_k sigma vel . grad v (unweighted): the motional part of a branch's current."""
    return w.sigma * (w.vx * v.grad[0] + w.vy * v.grad[1])


# ----------------------------------------------------------------------- stabilisation


def streamline_length(basis, vel) -> np.ndarray:
    """Element length along the velocity, 2 |v| / sum_i |v . grad lambda_i| over the
    element's vertex (P1) functions, at the quadrature points (E, Q) of the basis's
    elements (all, or its ``tind``)."""
    mesh = basis.mesh
    t = mesh.t if basis.tind is None else mesh.t[:, basis.tind]
    x, y = mesh.p[0][t], mesh.p[1][t]
    twice = (x[1] - x[0]) * (y[2] - y[0]) - (x[2] - x[0]) * (y[1] - y[0])
    gx = np.array([y[1] - y[2], y[2] - y[0], y[0] - y[1]]) / twice  # (3, E)
    gy = np.array([x[2] - x[1], x[0] - x[2], x[1] - x[0]]) / twice
    speed = np.hypot(vel[0], vel[1])
    total = sum(np.abs(vel[0] * gx[i][:, None] + vel[1] * gy[i][:, None]) for i in range(3))
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(total > 0, 2 * speed / np.where(total > 0, total, 1.0), 0.0)


def peclet(basis, vel, sigma_q, nu_q, order) -> tuple[np.ndarray, np.ndarray]:
    """Mesh Peclet number mu sigma |v| h / 2 and h (element length along v over the
    order) at the quadrature points."""
    h = streamline_length(basis, vel) / order
    return sigma_q * np.hypot(vel[0], vel[1]) * h / (2 * nu_q), h


def upwind_factor(pe) -> np.ndarray:
    """xi(Pe) = coth(Pe) - 1/Pe (-> Pe/3 for small Pe, -> 1 for large)."""
    pe = np.asarray(pe, dtype=float)
    small = pe < 1e-3
    safe = np.where(small, 1.0, pe)
    return np.where(small, pe / 3, 1 / np.tanh(safe) - 1 / safe)


def stabilisation_weight(basis, vel, sigma_q, nu_q, order, motions, moving_mask):
    """The SUPG weight tau (E, Q) in s (length over speed), zero where stabilisation is
    off, and a summary: largest Peclet number, stabilised and moving element counts."""
    pe, h = peclet(basis, vel, sigma_q, nu_q, order)
    speed = np.hypot(vel[0], vel[1])
    modes = {m.stabilisation for m in motions}
    on = moving_mask[:, None] & (speed > 0)
    if modes == {"off"}:
        on &= False
    elif "on" not in modes:
        on &= pe > 1
    with np.errstate(divide="ignore", invalid="ignore"):
        tau = np.where(on, h * upwind_factor(pe) / (2 * np.where(speed > 0, speed, 1.0)), 0.0)
    moving = moving_mask[:, None] & (speed > 0)
    summary = {"peclet_max": float(pe[moving].max()) if moving.any() else 0.0,
               "stabilised_elements": int(on.any(axis=1).sum()),
               "moving_elements": int(moving.any(axis=1).sum())}
    return tau, summary


# ----------------------------------------------------------------------- assembly


@dataclass
class MotionBlocks:
    """Extra blocks of the system from the motion (see the module's docstring).

    ``field`` (N, N) and ``coupling`` (N, branches) go into S0 (field rows: + field A,
    - coupling u); ``mass`` (N, N) into S1; ``current`` (branches, N) is the motional
    current per unit A of each branch (its rows gain - current A in S0).
    """

    field: sp.csr_matrix
    mass: sp.csr_matrix | None
    coupling: np.ndarray
    current: np.ndarray
    velocity_q: np.ndarray
    summary: dict


def assemble_motion(problem, basis, form, sigma, nu, brs, p0) -> MotionBlocks:
    """The motion's blocks for ``problem`` on ``basis`` (sigma, nu per element).

    The forms are integrated over the moving elements only (every term carries the
    velocity, zero elsewhere), so the cost follows the size of the moving parts, not of
    the model; ``velocity_q`` is returned on all elements for postprocessing.
    """
    x = basis.mapping.F(basis.X)  # (2, E, Q)
    vel_all = element_velocity(problem, x)
    nel = problem.mesh.mesh.t.shape[1]
    moving_mask = np.zeros(nel, dtype=bool)
    for r in moving_regions(problem):
        moving_mask[problem.mesh.elements(r)] = True
    moving = np.flatnonzero(moving_mask)
    mb = basis.with_elements(moving)
    vel = vel_all[:, moving]
    sigma_q = np.asarray(p0(basis, sigma))[moving]
    nu_q = np.asarray(p0(basis, nu))[moving]
    rho = form.weight(x[:, moving])
    field = asm(convection, mb, sigma=sigma_q, vx=vel[0], vy=vel[1], rho=rho)
    tau, summary = stabilisation_weight(mb, vel, sigma_q, nu_q, problem.order,
                                        problem.motions, np.ones(moving.size, dtype=bool))
    nf, nb = basis.N, len(brs)
    coupling = np.zeros((nf, nb))
    mass = None
    if summary["stabilised_elements"]:
        field = field + asm(streamline_convection, mb, sigma=sigma_q, vx=vel[0], vy=vel[1],
                            rho=rho, tau=tau)
        mass = asm(streamline_mass, mb, sigma=sigma_q, vx=vel[0], vy=vel[1], rho=rho,
                   tau=tau)
        log.info("motion: streamline upwinding on (SUPG, Brooks and Hughes 1982) in %d of %d "
                 "moving elements; largest mesh Peclet number %.3g",
                 summary["stabilised_elements"], summary["moving_elements"],
                 summary["peclet_max"])
    elif summary["peclet_max"] > 1:
        warnings.warn(f"motion: the mesh Peclet number reaches {summary['peclet_max']:.3g} "
                      "(> 1) with stabilisation off: the solution may oscillate; refine the "
                      "moving regions or let stabilisation act", stacklevel=2)
    current = np.zeros((nb, nf))
    where = np.full(nel, -1)
    where[moving] = np.arange(moving.size)
    for i, br in enumerate(brs):
        for r in br.regions:
            if r not in moving_regions(problem):
                continue
            elems = problem.mesh.elements(r)
            rb = basis.with_elements(elems)
            at = where[elems]  # the region's elements among the moving ones
            vr = vel[:, at]
            s_r = sigma_q[at]
            current[i] += asm(motional_current, rb, sigma=s_r, vx=vr[0], vy=vr[1])
            if summary["stabilised_elements"]:
                coupling[:, i] += asm(streamline_coupling, rb, sigma=s_r, vx=vr[0], vy=vr[1],
                                      tau=tau[at])
    return MotionBlocks(sp.csr_matrix(field), None if mass is None else sp.csr_matrix(mass),
                        coupling, current, vel_all, summary)
