r"""The plain script a user would write by hand: scikit-fem forms, ``spsolve``.

It solves the same time-harmonic eddy-current problem as whorl on the very same
mesh, with nothing but scikit-fem and ``scipy.sparse.linalg.spsolve``, and
returns the loss in every conducting region. The benchmark runs it beside whorl.

Weak forms (RMS phasors, A = 0 on every side):

- planar:  int nu grad A . grad v + j omega sigma A v - sigma u v = int J v, and for
  every free conductor (open ends, no net current) int sigma (-j omega A + u) = 0;
- axisymmetric (per radian, weight r):
  int nu (dA/dz dv/dz + (dA/dr + A/r)(dv/dr + v/r)) r + j omega sigma A v r = int J v r.

Losses: int sigma |E|^2 dV with E = -j omega A (+ u), dV = depth dx dy or 2 pi r dr dz.
"""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp
from scipy.sparse.linalg import spsolve
from skfem import Basis, BilinearForm, ElementTriP0, ElementTriP2, LinearForm, asm

MU0 = 4e-7 * np.pi


@BilinearForm
def planar_stiffness(u, v, w):
    return w.nu * (u.grad[0] * v.grad[0] + u.grad[1] * v.grad[1])


@BilinearForm
def planar_mass(u, v, w):
    return w.sigma * u * v


@LinearForm
def planar_load(v, w):
    return w.j * v


@LinearForm
def planar_coupling(v, w):
    return w.sigma * v


@BilinearForm
def axi_stiffness(u, v, w):
    r = w.x[0]
    return w.nu * (u.grad[1] * v.grad[1] + (u.grad[0] + u / r) * (v.grad[0] + v / r)) * r


@BilinearForm
def axi_mass(u, v, w):
    return w.sigma * u * v * w.x[0]


@LinearForm
def axi_load(v, w):
    return w.j * v * w.x[0]


def solve(mesh, nu, sigma, js, frequency_hz, axisymmetric, depth_m=1.0, free=(),
          regions=None):
    """Solve on ``mesh`` (a scikit-fem MeshTri in metres, A = 0 on its boundary).

    ``nu``, ``sigma``, ``js`` per element (m/H, S/m, A/m^2); ``free`` lists the
    element arrays of planar conductors that carry no net current; ``regions``
    maps a name to its element array. Returns (losses per region in W, timings s).
    """
    t0 = time.perf_counter()
    omega = 2 * np.pi * frequency_hz
    basis = Basis(mesh, ElementTriP2(), intorder=4)
    p0 = basis.with_element(ElementTriP0())
    w = {"nu": p0.interpolate(nu), "sigma": p0.interpolate(sigma)}
    if axisymmetric:
        K = asm(axi_stiffness, basis, nu=w["nu"])
        M = asm(axi_mass, basis, sigma=w["sigma"])
        b = asm(axi_load, basis, j=p0.interpolate(js))
    else:
        K = asm(planar_stiffness, basis, nu=w["nu"])
        M = asm(planar_mass, basis, sigma=w["sigma"])
        b = asm(planar_load, basis, j=p0.interpolate(js))
    A = (K + 1j * omega * M).tocsr()
    b = b.astype(complex)
    n = basis.N
    if free:  # one voltage unknown per free conductor, its current held at zero
        cols, g = [], []
        for elems in free:
            s = np.zeros(mesh.t.shape[1])
            s[elems] = sigma[elems]
            sq = p0.interpolate(s)
            cols.append(asm(planar_coupling, basis, sigma=sq))
            g.append(float((sq.value * basis.dx).sum()))
        C = sp.csr_matrix(np.column_stack(cols))
        A = sp.bmat([[A, -C], [-1j * omega * C.T, sp.diags(g)]], format="csr")
        b = np.concatenate([b, np.zeros(len(free))])
    interior = np.setdiff1d(np.arange(A.shape[0]), basis.get_dofs().all())
    t1 = time.perf_counter()
    x = np.zeros(A.shape[0], dtype=complex)
    x[interior] = spsolve(A[interior][:, interior].tocsc(), b[interior])
    t2 = time.perf_counter()
    a = basis.interpolate(x[:n])
    e = -1j * omega * np.asarray(a.value)
    u = np.zeros(mesh.t.shape[1], dtype=complex)
    for k, elems in enumerate(free):
        u[elems] = x[n + k]
    e = e + u[:, None]
    weight = 2 * np.pi * basis.mapping.F(basis.X)[0] if axisymmetric else depth_m
    density = sigma[:, None] * np.abs(e) ** 2 * basis.dx * weight
    per_element = density.sum(axis=1)
    losses = {name: float(per_element[elems].sum()) for name, elems in (regions or {}).items()}
    t3 = time.perf_counter()
    return losses, {"unknowns": int(interior.size), "assemble": t1 - t0, "solve": t2 - t1,
                    "postprocess": t3 - t2}
