"""``whorl verify``: run the shipped verification cases and compare with the references.

Each case file in ``cases/verification/`` has a check function here (registered
under the file's stem) that turns the run's results into :class:`Check` rows:
the computed number, the closed-form reference (:mod:`whorl.cases.references`),
its published source and the tolerance. The cases run at the parameters they
are shipped with; the test suite runs them over wider ranges.
"""

from __future__ import annotations

import cmath
import html
import math
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from whorl.cases import references as ref
from whorl.cases.loader import load_case
from whorl.cases.run import solve_case

FOLDER = Path(__file__).resolve().parent / "verification"

CHECKS: dict[str, Callable] = {}


@dataclass
class Check:
    """One computed number beside its reference (relative ``tolerance``)."""

    case: str
    quantity: str
    unit: str
    computed: float
    reference: float
    tolerance: float
    source: str

    @property
    def error(self) -> float:
        return abs(self.computed - self.reference) / abs(self.reference)

    @property
    def passed(self) -> bool:
        return math.isfinite(self.computed) and self.error <= self.tolerance


def register(stem: str):
    def wrap(fn):
        CHECKS[stem] = fn
        return fn

    return wrap


def _material(case, region):
    return case.materials[case.region_material[region]]


def _source(case, name):
    return next(s for s in case.sources if s.name == name)


@register("cylinder-in-coil")
def _cylinder(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    coil = _source(case, "coil")
    h0 = coil.turns * abs(coil.current) / p["slice"]  # Ampere's law, long coil
    billet = _material(case, "billet")
    expected = ref.cylinder_power_per_length(h0, p["radius"], billet.conductivity,
                                             billet.relative_permeability, p["freq"]) * p["slice"]
    return [Check(case.name, "billet loss", "W", sol["regions"]["billet"]["loss_w"], expected,
                  0.01, "E. J. Davies, P. Simpson, Induction Heating Handbook, 1979")]


@register("slab-in-field")
def _slab(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    plate = _material(case, "slab")
    sigma, mu, d = plate.conductivity, plate.relative_permeability, p["thickness"]
    bx, by = _source(case, "field").flux_density
    b0 = math.hypot(abs(bx), abs(by))
    k = ref.slab_propagation(sigma, mu, p["freq"])
    half = d / 2 + p["gap"]  # flux conservation across the air gaps gives the surface field
    h_s = 2 * b0 * half / (ref.MU0 * (2 * half - d)
                           + ref.MU0 * mu * (2 / k) * cmath.tanh(k * d / 2))
    height = sol["regions"]["slab"]["area_m2"] / d
    expected = ref.slab_loss_per_area(h_s, d, sigma, mu, p["freq"]) * height * case.depth_m
    return [Check(case.name, "slab loss", "W", sol["regions"]["slab"]["loss_w"], expected, 0.01,
                  "R. L. Stoll, The Analysis of Eddy Currents, 1974")]


@register("round-wire-skin-effect")
def _wire(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    current = abs(_source(case, "feed").current)
    z = ref.round_wire_impedance(p["radius"], _material(case, "wire").conductivity, p["freq"])
    wire = sol["regions"]["wire"]
    omega = 2 * math.pi * p["freq"]
    source = ("S. Ramo, J. R. Whinnery, T. Van Duzer, Fields and Waves in Communication "
              "Electronics, 1994")
    return [Check(case.name, "AC resistance per metre", "ohm/m",
                  wire["loss_w"] / current**2 / case.depth_m, z.real, 0.01, source),
            Check(case.name, "internal inductance per metre", "H/m",
                  2 * wire["magnetic_energy_j"] / current**2 / case.depth_m, z.imag / omega,
                  0.01, source)]


@register("two-wire-line")
def _line(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    current = abs(_source(case, "line").current)
    force = sol["regions"]["go"]["force_n"]
    return [Check(case.name, "inductance per metre", "H/m",
                  sol["sources"]["line"]["inductance_h"] / case.depth_m,
                  ref.two_wire_inductance(p["spacing"], p["radius"]), 0.005,
                  "F. W. Grover, Inductance Calculations, 1946"),
            Check(case.name, "force between the wires per metre", "N/m",
                  math.hypot(*force) / case.depth_m,
                  ref.parallel_force_per_length(current, p["spacing"]), 0.01,
                  "Ampere's force law, mu0 I^2 / (2 pi d)")]


@register("coil-inductance-open")
def _coil(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    turns = _source(case, "winding").turns
    expected = ref.coil_inductance(p["r_in"], p["r_out"], p["height"], turns)
    return [Check(case.name, "inductance (open boundary)", "H",
                  sol["sources"]["winding"]["inductance_h"], expected, 0.005,
                  "Maxwell's filament formula integrated (Maxwell 1873; Grover 1946)")]


@register("solenoid-field")
def _solenoid(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    coil = _source(case, "coil")
    b = sol["points"]["centre"]["flux_density_t"][1]
    return [Check(case.name, "axial flux density in the bore", "T", math.hypot(*b),
                  ref.MU0 * coil.turns * abs(coil.current) / p["slice"], 0.005,
                  "Ampere's law for a long solenoid, B = mu0 N I / h")]


@register("sphere-in-field")
def _sphere(case, results):
    p, sol = results["parameters"], results["solutions"][0]
    b = abs(_source(case, "field").flux_density)
    expected = ref.sphere_loss(p["radius"], _material(case, "ball").conductivity, b, p["freq"])
    return [Check(case.name, "sphere loss", "W", sol["regions"]["ball"]["loss_w"], expected,
                  0.001, "L. D. Landau, E. M. Lifshitz, Electrodynamics of Continuous Media, "
                         "1984, sec. 59")]


def available() -> list[str]:
    """Stems of the shipped case files that have checks, in name order."""
    return sorted(p.stem for p in FOLDER.glob("*.toml") if p.stem in CHECKS)


def verify(names=None, progress=None) -> tuple[list[Check], dict]:
    """Run the named verification cases (default: all); returns the checks and the time
    (s) each case took."""
    say = progress or (lambda message: None)
    checks, timing = [], {}
    for name in names or available():
        say(f"{name}: solving")
        start = time.perf_counter()
        case = load_case(FOLDER / f"{name}.toml")
        results, _, _ = solve_case(case)
        checks += CHECKS[name](case, results)
        timing[name] = time.perf_counter() - start
    return checks, timing


def table_lines(checks: list[Check]) -> list[str]:
    """The checks as a plain-text table."""
    out = [f"{'case':<24} {'quantity':<36} {'computed':>12} {'reference':>12} {'error':>9} "
           f"{'tolerance':>9}  result"]
    for c in checks:
        out.append(f"{c.case:<24} {c.quantity + ' [' + c.unit + ']':<36} {c.computed:>12.5g} "
                   f"{c.reference:>12.5g} {100 * c.error:>8.3f}% {100 * c.tolerance:>8.2g}%  "
                   f"{'pass' if c.passed else 'FAIL'}")
    return out


def write_html(checks: list[Check], timing: dict, path) -> Path:
    """A self-contained page: each number beside its reference, source, tolerance, result."""
    e = html.escape
    rows = "".join(
        f"<tr class=\"{'pass' if c.passed else 'fail'}\"><td>{e(c.case)}</td>"
        f"<td>{e(c.quantity)} [{e(c.unit)}]</td><td class=num>{c.computed:.6g}</td>"
        f"<td class=num>{c.reference:.6g}</td><td class=num>{100 * c.error:.3f} %</td>"
        f"<td class=num>{100 * c.tolerance:g} %</td><td>{e(c.source)}</td>"
        f"<td>{'pass' if c.passed else 'FAIL'}</td></tr>" for c in checks)
    passed = sum(c.passed for c in checks)
    from whorl import __version__

    page = (
        "<!doctype html><html><head><meta charset=utf-8><title>whorl verification</title>"
        "<style>body{font-family:system-ui,sans-serif;margin:2em;color:#222}"
        "table{border-collapse:collapse}td,th{border:1px solid #ccc;padding:.25em .6em}"
        "td.num{text-align:right;font-variant-numeric:tabular-nums}"
        "tr.fail td{background:#fde0e0}tr.pass td:last-child{color:#17692c}</style></head>"
        f"<body><h1>whorl {e(__version__)}: verification</h1>"
        f"<p>{passed} of {len(checks)} checks pass; {len(timing)} cases in "
        f"{sum(timing.values()):.1f} s. Each case is a file in cases/verification/; its "
        "notes say how the model reproduces the reference's assumptions.</p>"
        "<table><tr><th>case</th><th>quantity</th><th>computed</th><th>reference</th>"
        "<th>error</th><th>tolerance</th><th>source of the reference</th><th>result</th></tr>"
        f"{rows}</table></body></html>")
    path = Path(path)
    path.write_text(page, encoding="utf-8")
    return path
