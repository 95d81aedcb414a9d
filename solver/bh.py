r"""B-H curves of saturable (soft magnetic) materials.

A :class:`BHCurve` holds measured or tabulated points (H in A/m, B in T) of a
single-valued magnetisation curve (hysteresis ignored). It is checked (starts
at the origin, added if missing; strictly rising in H and B; finite; at least
two points) and interpolated as H(B) by a monotone piecewise cubic (F. N.
Fritsch and R. E. Carlson, "Monotone piecewise cubic interpolation", SIAM J.
Numer. Anal. 17(2), 1980; SciPy's ``PchipInterpolator``): H(B) is continuous
with a continuous slope, never overshoots the data, and so the Newton tangent
is continuous too. At the origin the slope is the first chord's, H_1/B_1
(PCHIP's one-sided end formula could give 0 there, an infinite permeability);
with the other slopes at most three times their chords (a property of PCHIP)
the first interval stays monotone (Fritsch and Carlson's sufficient condition).

Beyond the last point the curve continues with slope mu0 (the material is
fully saturated: dB/dH = mu0). Two points on that line (at H_n + H_n and
H_n + 2 H_n) join the interpolated data, so that the cubic's slope at the
first of them is exactly 1/mu0 and the straight extension starts there with a
continuous slope.

Conventions for Newton's method on the vector potential: the material law is
H = nu(|B|) B with the (secant) reluctivity nu(b) = H(b)/b, and its derivative
is the differential reluctivity tensor

.. math::

    \frac{\partial \mathbf H}{\partial \mathbf B}
      = \nu I + 2\frac{d\nu}{d(b^2)}\,\mathbf B\mathbf B^T
      = \nu (I - \mathbf n\mathbf n^T) + H'(b)\,\mathbf n\mathbf n^T,
    \qquad \mathbf n = \mathbf B / b,

that is H'(b) = dH/dB along B and nu across it.

A magnetisation multiplier m in [0, 1] (a Curie transition, see the heating
study) scales the magnetisation: B = mu0 H + m (B_curve(H) - mu0 H).
:meth:`BHCurve.scaled` gives that curve.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy.interpolate import CubicHermiteSpline, PchipInterpolator

from whorl.solver.constants import MU0

SATURATION_FRACTION = 0.9  # see BHCurve.saturation_level


class CurveError(ValueError):
    """A B-H curve that cannot be used; ``row`` is the 1-based data row (None: the whole
    curve) and ``column`` ``"h"``, ``"b"`` or None."""

    def __init__(self, message: str, row: int | None = None, column: str | None = None):
        self.row, self.column, self.message = row, column, message
        super().__init__(message if row is None else f"row {row}: {message}")


def check_points(h, b) -> tuple[np.ndarray, np.ndarray]:
    """Checked copies of the points; the origin is added in front when missing.

    Raises :class:`CurveError` naming the offending row (1-based, as given).
    """
    h = np.asarray(h, dtype=float).ravel()
    b = np.asarray(b, dtype=float).ravel()
    if h.size != b.size:
        raise CurveError(f"H has {h.size} values and B has {b.size}: give one B per H")
    for k in range(h.size):
        for col, v in (("h", h[k]), ("b", b[k])):
            if not np.isfinite(v):
                raise CurveError(f"{col.upper()} is not a finite number ({v})", k + 1, col)
            if v < 0:
                raise CurveError(f"{col.upper()} must not be negative, got {v:g}", k + 1, col)
    if h.size and (h[0] == 0) != (b[0] == 0):
        raise CurveError(f"the curve must start at the origin: H = {h[0]:g} A/m with "
                         f"B = {b[0]:g} T", 1, "b" if h[0] == 0 else "h")
    for k in range(1, h.size):
        if h[k] <= h[k - 1]:
            raise CurveError(f"H must rise strictly: {h[k]:g} A/m after {h[k - 1]:g} A/m",
                             k + 1, "h")
        if b[k] <= b[k - 1]:
            raise CurveError(f"B must rise strictly: {b[k]:g} T after {b[k - 1]:g} T "
                             "(a falling or flat B-H curve cannot be used)", k + 1, "b")
    if h.size < 2:
        raise CurveError(f"a B-H curve needs at least two points, got {h.size}")
    if h[0] != 0:
        h, b = np.concatenate([[0.0], h]), np.concatenate([[0.0], b])
    return h, b


@dataclass(frozen=True, eq=False)
class BHCurve:
    """A single-valued B-H curve: points ``h`` (A/m) and ``b`` (T), starting at (0, 0).

    ``source`` says where the points come from. Build one with :meth:`from_points`
    (which checks them); evaluation is vectorised over arrays of any shape.
    """

    h: np.ndarray
    b: np.ndarray
    source: str = ""
    _h_of_b: CubicHermiteSpline = field(init=False, repr=False)
    _dh_db: object = field(init=False, repr=False)
    _b_end: float = field(init=False, repr=False)
    _h_end: float = field(init=False, repr=False)
    _energy: object = field(init=False, repr=False)

    def __post_init__(self):
        h, b = check_points(self.h, self.b)
        object.__setattr__(self, "h", h)
        object.__setattr__(self, "b", b)
        hn, bn = h[-1], b[-1]
        # two points on the saturation line beyond the data (see the module notes)
        hx = np.concatenate([h, [2 * hn, 3 * hn]])
        bx = np.concatenate([b, [bn + MU0 * hn, bn + 2 * MU0 * hn]])
        slopes = PchipInterpolator(bx, hx).derivative()(bx)
        slopes[0] = hx[1] / bx[1]  # the first chord: a finite initial permeability
        spline = CubicHermiteSpline(bx, hx, slopes, extrapolate=False)
        object.__setattr__(self, "_h_of_b", spline)
        object.__setattr__(self, "_dh_db", spline.derivative())
        object.__setattr__(self, "_b_end", float(bx[-2]))
        object.__setattr__(self, "_h_end", float(hx[-2]))
        object.__setattr__(self, "_energy", spline.antiderivative())

    @classmethod
    def from_points(cls, h, b, source: str = "") -> BHCurve:
        return cls(np.asarray(h, float), np.asarray(b, float), source)

    # -- the curve ---------------------------------------------------------------------

    def field_strength(self, b):
        """H(|B|) in A/m for flux densities ``b`` (T, >= 0)."""
        b = np.abs(np.asarray(b, dtype=float))
        inside = b <= self._b_end
        out = np.empty_like(b)
        out[inside] = self._h_of_b(b[inside])
        out[~inside] = self._h_end + (b[~inside] - self._b_end) / MU0
        return out

    def field_strength_slope(self, b):
        """dH/dB at |B| = ``b`` in m/H (the differential reluctivity along B)."""
        b = np.abs(np.asarray(b, dtype=float))
        inside = b <= self._b_end
        out = np.full_like(b, 1.0 / MU0)
        out[inside] = self._dh_db(b[inside])
        return out

    def reluctivity(self, b):
        """Secant reluctivity nu = H(b)/b in m/H (its limit dH/dB(0) at b = 0)."""
        b = np.abs(np.asarray(b, dtype=float))
        small = b < 1e-9 * max(self.b[1], 1e-300)
        safe = np.where(small, 1.0, b)
        return np.where(small, self.initial_reluctivity, self.field_strength(safe) / safe)

    def reluctivity_derivative(self, b2):
        """d nu / d(b^2) in m/(H T^2) at b^2 = ``b2`` (0 at the origin, by symmetry)."""
        b = np.sqrt(np.asarray(b2, dtype=float))
        small = b < 1e-6 * max(self.b[1], 1e-300)
        safe = np.where(small, 1.0, b)
        nu = self.field_strength(safe) / safe
        return np.where(small, 0.0, (self.field_strength_slope(safe) - nu) / (2 * safe**2))

    def flux_density(self, h):
        """B(H) in T for field strengths ``h`` (A/m, >= 0): the inverse of H(B)."""
        h = np.abs(np.asarray(h, dtype=float))
        out = np.empty_like(h)
        beyond = h >= self._h_end
        out[beyond] = self._b_end + MU0 * (h[beyond] - self._h_end)
        inside = ~beyond
        if inside.any():
            # H(B) is monotone: invert on a fine table, then polish by Newton steps
            grid_b = np.concatenate([np.linspace(0, self._b_end, 4001)])
            grid_h = self._h_of_b(grid_b)
            guess = np.interp(h[inside], grid_h, grid_b)
            for _ in range(4):
                slope = np.maximum(self._dh_db(guess), 1e-300)
                guess = np.clip(guess - (self._h_of_b(guess) - h[inside]) / slope, 0, self._b_end)
            out[inside] = guess
        return out

    def energy_density(self, b):
        """Stored magnetic energy density int_0^b H dB' in J/m^3."""
        b = np.abs(np.asarray(b, dtype=float))
        out = self._energy(np.minimum(b, self._b_end))
        extra = np.maximum(b - self._b_end, 0.0)
        return out + self._h_end * extra + extra**2 / (2 * MU0)

    @property
    def initial_reluctivity(self) -> float:
        """dH/dB at the origin (m/H)."""
        return float(self._dh_db(0.0))

    @property
    def initial_relative_permeability(self) -> float:
        return 1.0 / (MU0 * self.initial_reluctivity)

    def relative_permeability_at(self, h: float) -> float:
        """Secant relative permeability B/(mu0 H) at field strength ``h`` (A/m)."""
        return float(self.flux_density(np.array([h]))[0] / (MU0 * h))

    def saturation_level(self, fraction: float = SATURATION_FRACTION) -> float:
        """The flux density (T) at which the polarisation J = B - mu0 H reaches ``fraction``
        of its value at the last data point (which stands for the saturation polarisation).

        With the default 0.9 it marks where the steel is close to saturated: for the
        Frohlich-Kennelly law that is H = 9 H_k, where the differential permeability of the
        magnetisation has fallen to 1 % of its initial value (the choice of the level is this
        project's; it is a picture's guide, not a material property).
        """
        from scipy.optimize import brentq

        def polarisation(h):
            return float(self.flux_density(np.array([h]))[0]) - MU0 * h

        target = fraction * polarisation(float(self.h[-1]))
        h = brentq(lambda x: polarisation(x) - target, 0.0, float(self.h[-1]), xtol=1e-9,
                   rtol=1e-10)
        return polarisation(h) + MU0 * h

    def scaled(self, m: float) -> BHCurve:
        """The curve with its magnetisation times ``m``: B = mu0 H + m (B(H) - mu0 H)."""
        b = MU0 * self.h + m * (self.b - MU0 * self.h)
        return BHCurve(self.h.copy(), b, f"{self.source} (magnetisation x {m:g})")


def frohlich_kennelly(saturation_polarisation_t: float, initial_relative_permeability: float,
                      points: int = 60, h_max: float = 1e6, source: str = "") -> BHCurve:
    """Tabulate B = mu0 H + J_s H / (H_k + H), the Frohlich-Kennelly law with the vacuum
    term, whose initial relative permeability is 1 + J_s / (mu0 H_k).

    ``saturation_polarisation_t`` is J_s (T); H runs from 0 to ``h_max`` A/m on a
    logarithmic grid (the law is Frohlich's of 1881 as written by Kennelly, 1891;
    see R. M. Bozorth, *Ferromagnetism*, 1951, for the form; value from memory).
    """
    js = float(saturation_polarisation_t)
    hk = js / (MU0 * (float(initial_relative_permeability) - 1.0))
    h = np.concatenate([[0.0], np.geomspace(hk * 1e-3, h_max, points - 1)])
    b = MU0 * h + js * h / (hk + h)
    return BHCurve(h, b, source)
