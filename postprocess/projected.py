r"""Results of a reduced solution from projections: no field is expanded for them.

A :class:`~whorl.solver.solution.ReducedSolution` is x = X z, with X = [x_0, V] the
affine part and the reduced basis in the full numbering (n by m + 1) and z its
coefficients (z_0 = 1). Every quantity the results record sums over a region or reads
at a point is linear or quadratic in x, so it is a small dense operation on z once its
operator has been projected on X, the offline/online split of reduced-basis methods
(Hesthaven, Rozza and Stamm, *Certified Reduced Basis Methods for Parametrized Partial
Differential Equations*, Springer 2016; cited from memory):

- region totals (``kappa`` = depth or 2 pi, ``w`` = 1 or r, e = -j omega a + u v_f the
  electric field with coefficients c = [-j omega z, u]): the values at the quadrature
  points of sqrt(sigma w) e and sqrt(sigma w) B_k for every column are reduced once to
  their triangular factor R (a QR decomposition, made chunk by chunk), so that the loss
  is kappa |R_e c|^2 and int sigma e conj(B_k) w = (R_e c) . conj(R_k z) (Lorentz force);
  the stored energy kappa |R_K z|^2 / 2 likewise from sqrt(nu w) B; the net current
  and a stranded region's J_s conj(B) are linear forms. The factor, rather than the Gram
  matrix X^T P X, keeps round-off at the level of the expanded field: E = -j omega A +
  u v_f nearly cancels in a massive conductor deep in skin effect, and a Gram matrix,
  which squares the condition, loses the loss there (1e-5 at a / delta = 100; 1e-12
  with the factor);
- terminal quantities: flux linkage, branch voltages and driven currents are rows of X;
- point values (points, loops, lines, surface power samples): rows of the interpolation
  operator (values and gradients at the points) times X, kept per set of points;
- the Maxwell-stress force: B at the quadrature points of the region's shell of
  elements, projected (a few hundred elements).

What is not a sum, the largest loss and flux density over the elements, is found from
the potential expanded at the quadrature points (one product with the basis): a maximum
has no projection. Planar and axisymmetric models alike; moving and saturable models are
never reduced. The projections are made once per reduced space and kept in its cache.
"""

from __future__ import annotations

import numpy as np
from skfem import LinearForm, asm
from threadpoolctl import threadpool_limits

from whorl.solver.sources import Massive, Stranded


def is_reduced(solution) -> bool:
    """Whether ``solution`` is known by coefficients in a reduced space."""
    return getattr(solution, "space", None) is not None


def _plain_flux(form, k):
    """int B_k(v) w: a uniform current density times the k-th flux density component
    (B_x, B_y) or (B_r, B_z) of a test function."""

    @LinearForm
    def plain_flux(v, w):
        return form.flux_density(np.asarray(v), v.grad, w.x)[k] * form.weight(w.x)

    return plain_flux


def _tables(system):
    from whorl.postprocess.fields import _basis_tables

    return _basis_tables(system.basis)


def _chunks(system, X, elems, chunk=4000):
    """Per chunk of ``elems``: (elements, A (e, Q, m), (B_0, B_1), coordinates
    (2, e, Q, 1)) of the columns of X at the quadrature points."""
    basis, form = system.basis, system.form
    phi, dphi, xq = _tables(system)
    for ch in np.array_split(elems, max(1, -(-elems.size // chunk))):
        rows = X[basis.element_dofs[:, ch]]                      # (K, e, m)
        a = np.einsum("kem,keq->eqm", rows, phi[:, ch])
        g = np.einsum("kem,kieq->ieqm", rows, dphi[:, :, ch])
        x = xq[:, ch][..., None]
        yield ch, a, form.flux_density(a, g, x), x


class _Region:
    """The projected operators of one region (see the module)."""

    def __init__(self, proj, name, elems):
        """``elems``: the elements the region's totals sum over (the background's include
        the exterior disk of an open boundary, as in :func:`.regions.region_totals`)."""
        system, X = proj.system, proj.Xa
        problem = system.problem
        form = system.form
        self.name = name
        self.area = float(system.basis.dx[elems].sum())
        self.u_row = None  # row of X of the branch voltage u of this region
        for i, br in enumerate(system.branches):
            if name in br.regions:
                self.u_row = proj.X[system.n_field + i]
        # stranded sources through this region: (sign turns / area, source)
        self.strands = []
        for s in problem.sources:
            if isinstance(s, Stranded):
                for sign, regions in ((1.0, s.regions), (-1.0, s.return_regions)):
                    if name in regions:
                        self.strands.append((sign * s.turns / system.areas[name], s))
        self.conducting = bool(elems.size and np.any(system.sigma[elems] > 0))
        self.empty = elems.size == 0
        if self.empty:
            return
        rb = system.region_basis(name)
        self._energy(system, X, elems)
        if self.conducting:
            self._conductor(system, X, elems)
        if self.strands:
            self.E = [np.asarray(asm(_plain_flux(form, k), rb)) @ X for k in (0, 1)]

    def _energy(self, system, X, elems):
        """Stored energy kappa |R_K z|^2 / 2 from the triangular factor of the values of
        sqrt(nu w) B at the quadrature points (stable, as for the loss below)."""
        from scipy.linalg import qr

        R = None
        for ch, _, (b0, b1), _ in _chunks(system, X, elems):
            root = np.sqrt(system.nu_q[ch] * system.basis.dx[ch]
                           * system.form.weight(_tables(system)[2][:, ch]))[..., None]
            block = np.concatenate([(b0 * root).reshape(-1, X.shape[1]),
                                    (b1 * root).reshape(-1, X.shape[1])])
            R = qr(block if R is None else np.vstack([R, block]), mode="r")[0]
            R = R[: min(R.shape)]
        self.R_K = R

    def _conductor(self, system, X, elems):
        """Loss, current and Lorentz force of a conductor, stably: the values at the
        quadrature points of sqrt(sigma w) e (e's coefficients w = [-j omega z, u]) and of
        sqrt(sigma w) B_k, side by side, reduced to their triangular factor R by a QR
        decomposition made chunk by chunk; then loss = kappa |R_e w|^2 and
        int sigma e conj(B_k) w = (R_e w) . conj(R_k z). A Gram matrix X^T P X would
        square the condition: where E = -j omega A + u v_f nearly cancels (a massive
        conductor deep in skin effect) its round-off swamps the loss."""
        from scipy.linalg import qr

        basis, form = system.basis, system.form
        xq = _tables(system)[2]
        m = X.shape[1]
        parts = m + (self.u_row is not None)
        R = None
        self.current_row = np.zeros(parts, dtype=X.dtype)
        for ch, a, (b0, b1), x in _chunks(system, X, elems):
            sig = system.sigma[ch][:, None]
            root = np.sqrt(sig * basis.dx[ch] * form.weight(xq[:, ch]))[..., None]
            cols = [a]
            if self.u_row is not None:
                cols.append(np.broadcast_to(form.voltage_field(1.0, x), a.shape[:2] + (1,)))
            e_cols = np.concatenate(cols, axis=-1)                   # (e, Q, parts)
            self.current_row += np.einsum("eq,eqm->m", sig * basis.dx[ch], e_cols)
            block = np.concatenate([e_cols * root, b0 * root, b1 * root], axis=-1)
            block = block.reshape(-1, block.shape[-1])
            R = qr(block if R is None else np.vstack([R, block]), mode="r")[0]
            R = R[: min(R.shape)]
        self.R_e = R[:, :parts]
        self.R_b = [R[:, parts: parts + m], R[:, parts + m:]]

    def totals(self, z, omega, kappa, currents):
        """(net current, loss, energy, (integral of J conj(B_0), of J conj(B_1)))."""
        energy = 0.0
        if not self.empty:
            bz = self.R_K @ z
            energy = 0.5 * kappa * float(np.real(np.vdot(bz, bz)))
        current, loss = 0j, 0.0
        flux_j = np.zeros(2, dtype=complex)
        if self.conducting:
            w = -1j * omega * z
            if self.u_row is not None:
                w = np.concatenate([w, [self.u_row @ z]])
            current += complex(self.current_row @ w)
            ew = self.R_e @ w
            loss = kappa * float(np.real(np.vdot(ew, ew)))
            for k in (0, 1):
                flux_j[k] += kappa * np.sum(ew * np.conj(self.R_b[k] @ z))
        for coef, s in self.strands:
            js = coef * currents[s.name]
            current += js * self.area
            for k in (0, 1):
                flux_j[k] += kappa * js * np.conj(self.E[k] @ z)
        return current, loss, energy, flux_j


class Projections:
    """Everything projected once per reduced space and system."""

    def __init__(self, system, space):
        self.system = system
        self.X = space.columns
        self.Xa = self.X[: system.n_field]
        problem = system.problem
        tagged = problem.mesh
        self.names = (tagged.background, *tagged.regions)
        index = tagged.region_of_element()
        self.regions = {name: _Region(self, name, np.flatnonzero(index == i))
                        for i, name in enumerate(self.names)}
        self.flux_rows = {}
        nf = system.n_field
        for s in problem.sources:
            if isinstance(s, Stranded):
                self.flux_rows[s.name] = system.kappa * system.stranded_load[s.name] @ self.Xa
            elif isinstance(s, Massive):
                row = np.zeros(self.X.shape[1])
                for i, br in enumerate(system.branches):
                    if br.source == s.name:
                        row = row + br.sign * system.kappa * (system.coupling[:, i] @ self.Xa
                                                              / system.conductance[i])
                self.flux_rows[s.name] = row
        self.u_rows = self.X[nf: nf + len(system.branches)]
        self.points = {}   # (cells, reference coordinates) -> (value rows, gradient rows)
        self.shells = {}   # region -> shell operator or None


def projections(solution) -> Projections:
    """The projections of ``solution``'s space (made on first use, then kept)."""
    cache = solution.space.cache
    key = ("projections", id(solution.system))
    if key not in cache:
        # thin dense products: threaded BLAS only loses on them (as in frequency_rom)
        with threadpool_limits(limits=1, user_api="blas"):
            cache[key] = Projections(solution.system, solution.space)
    return cache[key]


def source_currents(solution) -> dict:
    return {s.name: solution.source_current(s) for s in solution.problem.sources
            if isinstance(s, Stranded | Massive)}


def terminal_values(solution, source) -> tuple[complex, complex, complex]:
    """(current, voltage, flux linkage) of a stranded or massive source."""
    proj = projections(solution)
    z = solution.coefficients
    current = solution.source_current(source)
    psi = complex(proj.flux_rows[source.name] @ z)
    if isinstance(source, Stranded):
        voltage = 1j * solution.omega * psi + source.resistance * current
    else:
        u = proj.u_rows @ z
        voltage = complex(sum(br.sign * solution.system.kappa * u[i]
                              for i, br in enumerate(solution.system.branches)
                              if br.source == source.name) + source.resistance * current)
    return current, voltage, psi


def region_values(solution) -> dict:
    """name -> (area, current, loss, energy, (int J conj(B_0) dV, int J conj(B_1) dV))."""
    proj = projections(solution)
    currents = source_currents(solution)
    return {name: (r.area, *r.totals(solution.coefficients, solution.omega,
                                     solution.system.kappa, currents))
            for name, r in proj.regions.items()}


def point_values(solution, cells, ref):
    """A and grad A (2, P) at reference coordinates ``ref`` (2, P, 1) of elements ``cells``
    (P, all in the mesh), from the interpolation rows times X, kept per set of points."""
    proj = projections(solution)
    key = (cells.tobytes(), ref.tobytes())
    if key not in proj.points:
        basis = solution.system.basis
        dofs = basis.element_dofs[:, cells]
        val = np.zeros((cells.size, proj.X.shape[1]), dtype=proj.X.dtype)
        grad = np.zeros((2, cells.size, proj.X.shape[1]), dtype=proj.X.dtype)
        for k in range(basis.Nbfun):
            phi = basis.elem.gbasis(basis.mapping, ref, k, tind=cells)[0]
            rows = proj.Xa[dofs[k]]
            val += np.asarray(phi)[:, 0][:, None] * rows
            grad += phi.grad[:, :, 0][:, :, None] * rows[None]
        proj.points[key] = (val, grad)
    val, grad = proj.points[key]
    z = solution.coefficients
    return _times(val, z), _times(grad, z)


def _times(rows, z):
    """``rows @ z`` over the last axis for complex z, as one matrix product of the rows
    flattened to two axes, without a complex copy of real ``rows``."""
    flat = rows.reshape(-1, rows.shape[-1])
    if np.iscomplexobj(flat):
        out = flat @ z
    else:
        out = flat @ np.column_stack([z.real, z.imag])
        out = out[:, 0] + 1j * out[:, 1]
    return out.reshape(rows.shape[:-1])


def shell_flux(solution, region, shell):
    """B (2, S, Q) at the quadrature points of the ``shell`` elements, projected."""
    proj = projections(solution)
    if region not in proj.shells:
        from whorl.postprocess.fields import _basis_tables

        system = solution.system
        basis = system.basis
        phi, dphi, x = _basis_tables(basis)
        dofs = basis.element_dofs[:, shell]                  # (K, S)
        rows = proj.Xa[dofs]                                 # (K, S, m)
        a = np.einsum("ksm,ksq->sqm", rows, phi[:, shell])
        g = np.einsum("ksm,kisq->isqm", rows, dphi[:, :, shell])
        xs = x[:, shell][..., None]
        b0, b1 = system.form.flux_density(a, g, xs)
        proj.shells[region] = np.array([b0, b1])              # (2, S, Q, m)
    return _times(proj.shells[region], solution.coefficients)


def _peak_operators(system):
    """Sparse rows (element, quadrature point) x dofs giving B_0 and B_1 at every
    quadrature point, and A at those of conducting elements, from the basis tables."""
    import scipy.sparse as sp

    from whorl.postprocess.fields import _basis_tables

    basis = system.basis
    phi, dphi, x = _basis_tables(basis)                     # (K,E,Q), (K,2,E,Q), (2,E,Q)
    K, E, Q = phi.shape
    b0, b1 = system.form.flux_density(phi, dphi.transpose(1, 0, 2, 3), x[:, None])
    cols = np.broadcast_to(basis.element_dofs[:, :, None], (K, E, Q))

    def matrix(values, keep):
        n = keep.size
        r = np.broadcast_to(np.arange(n * Q).reshape(1, n, Q), (K, n, Q))
        return sp.csr_matrix((np.broadcast_to(values, (K, E, Q))[:, keep].ravel(),
                              (r.ravel(), cols[:, keep].ravel())), shape=(n * Q, basis.N))

    every = np.arange(E)
    conducting = np.flatnonzero(system.sigma > 0)
    return matrix(b0, every), matrix(b1, every), conducting, matrix(phi, conducting)


BATCH = 16  # reduced frequencies whose peaks are found together (one pass over the rows)


def peak_fields(solution):
    """Per element: the largest |B(t)| (T); the loss density at the quadrature points
    (W/m^3, zero outside conductors); their coordinates. From sparse rows of the flux
    density and potential at the quadrature points (made once per space) applied to the
    potential expanded (a product with the basis), for up to ``BATCH`` frequencies of the
    same space at once (the solutions that share it, in order), so that the rows are read
    once per batch."""
    from whorl.postprocess.fields import _basis_tables

    system = solution.system
    cache = solution.space.cache
    key = ("peaks", id(system))
    if key not in cache:
        cache[key] = _peak_operators(system)
    found = cache.setdefault(("peaks found", id(system)), {})
    if id(solution) not in found:
        members = [s for s in getattr(solution.space, "members", ()) if id(s) not in found]
        start = next((k for k, s in enumerate(members) if s is solution), None)
        batch = [solution] if start is None else members[start: start + BATCH]
        for s, value in zip(batch, _peaks(system, cache[key], batch), strict=True):
            found[id(s)] = value
    b_peak, loss = found.pop(id(solution))
    return loss, _basis_tables(system.basis)[2], b_peak


def _peaks(system, operators, batch):
    """(largest |B(t)| per element, loss density per quadrature point) of each solution."""
    from whorl.postprocess.fields import _basis_tables, element_sources

    op0, op1, conducting, a_op = operators
    x = _basis_tables(system.basis)[2]
    E, Q = x.shape[1:]
    n = len(batch)
    coeff = np.column_stack([s.coefficients for s in batch])
    pot = batch[0].space.expand(coeff)[: system.n_field]        # (N, n)
    both = np.hstack([pot.real, pot.imag])
    b0, b1 = op0 @ both, op1 @ both
    # |B(t)| peak^2 = |Bx|^2 + |By|^2 + |Bx^2 + By^2|, in real arithmetic
    xr, xi, yr, yi = b0[:, :n], b0[:, n:], b1[:, :n], b1[:, n:]
    square = xr * xr + yr * yr
    minus = xi * xi + yi * yi
    both_sq = square + minus + np.hypot(square - minus, 2 * (xr * xi + yr * yi))
    b_peak = np.sqrt(both_sq.reshape(E, Q, n).max(axis=1))
    out = []
    av = a_op @ both if conducting.size else None
    xc = x[:, conducting]
    for k, s in enumerate(batch):
        loss = np.zeros((E, Q))
        if conducting.size:
            a = (av[:, k] + 1j * av[:, n + k]).reshape(-1, Q)
            u, _ = element_sources(s)
            e = -1j * s.omega * a + system.form.voltage_field(u[conducting][:, None], xc)
            loss[conducting] = system.sigma[conducting][:, None] * np.abs(e) ** 2
        out.append((b_peak[:, k], loss))
    return out
