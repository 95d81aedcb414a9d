"""One self-contained HTML report of a run: tables of the results, the pictures, cautions.

The page needs nothing but itself: CSS inline, pictures embedded as base64
data URIs, no scripts, no external links. Every piece of text taken from the
results is escaped with :func:`html.escape`. Numbers are shown with SI
prefixes and four significant digits; each table cell of a number also
carries the full value (SI units) in its ``data-value`` attribute.
"""

from __future__ import annotations

import base64
import cmath
import html
import math
from pathlib import Path

from whorl.postprocess.loops import EMF_SIGN
from whorl.postprocess.summary import NEGATIVE_R
from whorl.postprocess.tables import is_empty

#: Cautions shown prominently near the top of every report.
CAUTIONS = (
    "The results are estimates from an idealised model (linear materials, a 2D geometry, "
    "the mesh used). Confirm them by measurement before relying on them.",
    "Induction and eddy-current equipment works at high voltage and high current: only "
    "qualified people may connect, run or service it.",
    "Heated parts, coils and fixtures stay hot after the power is off and can burn.",
    "The magnetic fields around coils are subject to exposure limits for people (including "
    "wearers of implanted medical devices); check them before work near energised equipment.",
    "Follow local codes and regulations, the equipment maker's instructions and licensed "
    "practice.",
)

MAX_ROWS = 500  # rows shown of an extra table
NOISE = 1e-9  # region currents below this fraction of the largest are shown as 0
_PREFIXES = {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
_MIME = {".png": "image/png", ".jpg": "image/jpeg", ".jpeg": "image/jpeg", ".svg": "image/svg+xml"}

STYLE = """
body { font-family: "Segoe UI", "Helvetica Neue", Arial, sans-serif; margin: 0;
       color: #1c2430; background: #fbfaf7; }
header { background: #1f3a5f; color: #fbfaf7; padding: 1.2em 2em; }
header h1 { margin: 0 0 0.2em 0; font-size: 1.6em; }
header p { margin: 0; opacity: 0.85; }
main { padding: 1em 2em 2em 2em; max-width: 72em; }
h2 { border-bottom: 2px solid #c9a227; padding-bottom: 0.2em; margin-top: 1.6em; }
h3 { margin-bottom: 0.3em; }
.caution { background: #fff4d6; border-left: 0.5em solid #c9a227; padding: 0.6em 1.2em;
           margin: 1.2em 0; }
.caution h2 { border: none; margin-top: 0.3em; color: #7a4a00; }
table { border-collapse: collapse; margin: 0.4em 0 1em 0; font-size: 0.92em; }
caption { text-align: left; font-weight: 600; padding: 0.3em 0; }
th, td { padding: 0.25em 0.7em; border-bottom: 1px solid #d8d4ca; }
th { background: #e8e4da; text-align: left; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr:nth-child(even) td { background: #f3f1ea; }
figure { display: inline-block; margin: 0.6em 1em 0.6em 0; vertical-align: top; }
figure img { max-width: 100%; border: 1px solid #d8d4ca; background: white; }
figcaption { font-size: 0.9em; color: #4a5566; }
footer { color: #6a7380; font-size: 0.85em; padding: 1em 2em; }
"""


def format_si(value, unit: str = "") -> str:
    """``1234.5, "W"`` -> ``"1.235 kW"`` (four significant digits; ``-`` when missing)."""
    if value is None or not math.isfinite(value):
        return "-"
    if value == 0:
        return f"0 {unit}".strip()
    exp = max(-12, min(9, 3 * math.floor(math.log10(abs(value)) / 3)))
    return f"{value / 10 ** exp:.4g} {_PREFIXES[exp]}{unit}".strip()


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _num(value, unit="", shown=None) -> str:
    """A table cell of a number in SI units (``shown`` replaces the displayed value)."""
    if value is None:
        return '<td class="num">-</td>'
    text = format_si(value if shown is None else shown, unit)
    return f'<td class="num" data-value="{float(value)!r}">{_e(text)}</td>'


def _phase(z) -> str:
    return f'<td class="num">{math.degrees(cmath.phase(z)):.1f}°</td>' if z else '<td>-</td>'


def _complex(pair) -> complex:
    return complex(*pair) if pair is not None else 0j


def _table(caption, header, rows) -> str:
    """A table; ``rows`` are lists of ready cells (``<td>...``)."""
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    body = "".join("<tr>" + "".join(r) + "</tr>" for r in rows)
    return f"<table><caption>{_e(caption)}</caption><tr>{head}</tr>{body}</table>"


def _name(text) -> str:
    return f"<td>{_e(text)}</td>"


def _plain(value) -> str:
    """A table cell of a count, a plain number (6 significant digits) or text."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        return _name("-" if value is None else value)
    text = str(value) if isinstance(value, int) else f"{value:.6g}"
    return f'<td class="num" data-value="{value!r}">{_e(text)}</td>'


def _key_values(caption, items, unit=None, header=("item", "value")) -> str:
    """A two-column table; numbers with SI prefixes and ``unit`` when one is given."""
    rows = [[_name(k), _num(v, unit) if unit is not None and isinstance(v, float) else _plain(v)]
            for k, v in items]
    return _table(caption, header, rows)


def _regions(sol, axisym) -> str:
    fx, fy = ("Fr", "Fz") if axisym else ("Fx", "Fy")
    regions = sol.get("regions", {})
    # Net currents below this are round-off (a conductor with open ends): shown as 0.
    noise = NOISE * max((abs(_complex(r.get("current_a"))) for r in regions.values()),
                        default=0.0)
    wound = any("ampere_turns_a" in r for r in regions.values())
    # Regions with nothing in them (air in no source) get no row; a force component
    # that is zero everywhere (Fr of full rings) no column.
    regions = {n: r for n, r in regions.items() if not is_empty(r)}
    forces = [r.get("force_n") or (0.0, 0.0) for r in regions.values()]
    used = [k for k in (0, 1) if any(f[k] for f in forces)]
    rows = []
    for name, r in regions.items():
        current = _complex(r.get("current_a"))
        rms = r.get("current_rms_a", abs(current))
        shown = ([_num(rms, "A", shown=0.0), "<td>-</td>"] if abs(current) <= noise
                 else [_num(rms, "A"), _phase(current)])
        if wound:
            at = r.get("ampere_turns_a")
            shown.append(_num(abs(_complex(at)), "A") if at else "<td>-</td>")
        force = r.get("force_n") or (0.0, 0.0)
        rows.append([_name(name), *shown, _num(r.get("loss_w"), "W"),
                     _num(r.get("magnetic_energy_j"), "J"),
                     *(_num(force[k], "N") for k in used)])
    header = ("region", "current (RMS)", "phase", *(("ampere-turns (RMS)",) if wound else ()),
              "loss", "stored energy", *((fx, fy)[k] for k in used))
    return _table("Regions", header, rows)


def _sources(sol) -> str:
    rows, negative = [], False
    for name, s in sol.get("sources", {}).items():
        i, v = _complex(s.get("current_a")), _complex(s.get("voltage_v"))
        z = _complex(s.get("impedance_ohm"))
        p, q = s.get("power_w", 0.0), s.get("reactive_power_var", 0.0)
        apparent = math.hypot(p, q)
        pf = "-" if apparent == 0 or p < 0 else (
            f"{p / apparent:.3f} " + ("lagging" if q > 0 else "leading" if q < 0 else ""))
        negative = negative or p < 0
        rows.append([_name(name), _num(abs(i), "A"), _phase(i), _num(abs(v), "V"), _phase(v),
                     _num(abs(z), "Ω"), _num(s.get("resistance_ohm"), "Ω"),
                     _num(s.get("inductance_h"), "H"), _num(p, "W"), _num(q, "var"),
                     f'<td class="num">{_e(pf.strip())}</td>'])
    return _table("Sources (terminal values)", (
        "source", "current (RMS)", "phase", "voltage (RMS)", "phase", "|Z|", "R", "L",
        "power", "reactive power", "power factor"), rows) + (
        f"<p>{_e(NEGATIVE_R)}.</p>" if negative else "")


def _loops(sol) -> str:
    rows = []
    for name, lp in sol.get("loops", {}).items():
        flux, emf = _complex(lp.get("flux_wb")), _complex(lp.get("emf_v"))
        linkage = _complex(lp.get("flux_linkage_wb", lp.get("flux_wb")))
        rows.append([_name(name), _num(abs(flux), "Wb"), _phase(flux),
                     _num(abs(_complex(lp.get("flux_from_b_wb"))), "Wb"),
                     _num(abs(linkage), "Wb"), _num(abs(emf), "V"), _phase(emf),
                     _num(abs(_complex(lp.get("emf_from_e_v"))), "V")])
    return _table("Loops", ("loop", "flux per turn (RMS)", "phase", "flux per turn from B",
                            "flux linkage (turns x flux)", "EMF (RMS)", "phase", "EMF from E"),
                  rows) + f"<p>{_e(EMF_SIGN)}.</p>"


def _points(sol) -> str:
    rows = []
    for name, p in sol.get("points", {}).items():
        b = [_complex(c) for c in p.get("flux_density_t", ())]
        b_rms = math.sqrt(sum(abs(c) ** 2 for c in b)) if b else None
        rows.append([_name(name), _num(b_rms, "T"),
                     _num(abs(_complex(p.get("current_density_a_per_m2"))), "A/m²"),
                     _num(p.get("loss_density_w_per_m3"), "W/m³")])
    return _table("Points", ("point", "|B| (RMS)", "|J| (RMS)", "loss density"), rows)


def _derived(sol) -> str:
    """Skin depths, heating efficiency and the tuning capacitors."""
    derived = sol.get("derived", {})
    rows = [[_name(f"skin depth in {name}"), _num(d, "m")]
            for name, d in derived.get("skin_depth_m", {}).items()]
    eff = derived.get("heating_efficiency")
    if eff is not None and sol.get("sources"):
        rows.append([_name("heating efficiency (loss outside any source / all losses)"),
                     f'<td class="num">{100 * eff:.1f} %</td>'])
    for name, r in sol.get("regions", {}).items():
        if r.get("peak_surface_power_density_w_per_m2") is not None:
            x, y = r["peak_surface_power_at_m"]
            rows.append([_name(f"peak surface power density in {name} "
                               f"(at {format_si(x, 'm')}, {format_si(y, 'm')})"),
                         f'<td class="num">{r["peak_surface_power_density_w_per_m2"] / 1e4:.4g}'
                         " W/cm²</td>"])
    for name, s in sol.get("sources", {}).items():
        if s.get("tuning_capacitance_parallel_f"):
            rows.append([_name(f"{name}: capacitor across the terminals for resonance"),
                         _num(s["tuning_capacitance_parallel_f"], "F")])
            rows.append([_name(f"{name}: capacitor in series for resonance"),
                         _num(s["tuning_capacitance_series_f"], "F")])
    return _table("Derived numbers", ("quantity", "value"), rows) if rows else ""


def _solution(sol, axisym) -> list[str]:
    f = sol.get("frequency_hz", 0.0)
    title = "Static solution (0 Hz)" if f == 0 else f"At {format_si(f, 'Hz')}"
    totals = sol.get("totals", {})
    out = [f"<h2>{_e(title)}</h2>",
           _table("Totals", ("total loss", "stored magnetic energy"),
                  [[_num(totals.get("loss_w"), "W"), _num(totals.get("magnetic_energy_j"), "J")]]),
           _regions(sol, axisym)]
    if sol.get("sources"):
        out.append(_sources(sol))
    out.append(_derived(sol))
    if sol.get("loops"):
        out.append(_loops(sol))
    if sol.get("points"):
        out.append(_points(sol))
    return out


def _image(caption, path) -> str:
    path = Path(path)
    mime = _MIME.get(path.suffix.lower(), "image/png")
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return (f'<figure><img src="data:{mime};base64,{data}" alt="{_e(caption)}">'
            f"<figcaption>{_e(caption)}</figcaption></figure>")


def _extra(title, header, rows) -> str:
    shown = [[f'<td class="num" data-value="{v!r}">{_e(f"{v:.6g}")}</td>'
              if isinstance(v, int | float) else _name(v) for v in row] for row in rows[:MAX_ROWS]]
    note = (f"<p>First {MAX_ROWS} of {len(rows)} rows; the CSV file has them all.</p>"
            if len(rows) > MAX_ROWS else "")
    return _table(title, header, shown) + note


def write_report(results: dict, images: dict | None, path, tables: dict | None = None) -> Path:
    """Write the HTML report of ``results`` (a results.json record) to ``path``.

    Parameters
    ----------
    results : dict
        In the shape of results.json: ``case``, ``parameters``, ``mesh``,
        ``timing_s``, ``solver``, ``solutions``; its ``caution`` text says in one
        paragraph what :data:`CAUTIONS` lists, so the page shows the list only.
    images : dict of str to path, optional
        Caption -> PNG (or JPEG, SVG) file, embedded in the page in this order.
    path : str or path-like
        The HTML file to write.
    tables : dict of str to (header, rows), optional
        Extra tables (a line's samples, say), shown after the results; long
        ones are cut at ``MAX_ROWS`` rows.

    Returns
    -------
    Path
        ``path``.
    """
    case = results.get("case", {})
    name = case.get("name", "case")
    title = case.get("title") or name
    axisym = case.get("geometry") == "axisymmetric"
    depth = f", depth {format_si(case['depth_m'], 'm')}" if case.get("depth_m") else ""
    facts = (f"case {name} · {case.get('geometry', '?')}{depth} · "
             f"{case.get('study', 'harmonic')} study · whorl {results.get('whorl_version', '')}")
    mesh, solver = results.get("mesh", {}), results.get("solver", {})
    order = mesh.get("order")
    body = [f"<header><h1>{_e(title)}</h1><p>{_e(facts)}</p></header><main>",
            '<section class="caution"><h2>Caution</h2><ul>'
            + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS) + "</ul></section>"]
    if results.get("warnings"):
        body.append('<section class="caution"><h2>Warnings about this model</h2><ul>'
                    + "".join(f"<li>{_e(w)}</li>" for w in results["warnings"])
                    + "</ul></section>")
    body.append("<h2>Case</h2>")
    if case.get("notes"):
        body.append(f"<p>{_e(case['notes'])}</p>")
    body.append(_key_values("Parameters (SI)", list(results.get("parameters", {}).items()),
                            header=("parameter", "value")))
    body.append(_key_values("Mesh and solver", [
        ("nodes", mesh.get("nodes")), ("elements", mesh.get("elements")),
        ("unknowns", mesh.get("dofs")),
        ("element order", f"P{order} (Lagrange)" if order else "-"),
        ("least element quality", mesh.get("quality_min")),
        ("linear solver", solver.get("backend", "-")),
        *[(f"solver {k}", v) for k, v in solver.items() if k != "backend"]]))
    body.append(_key_values("Timing", list(results.get("timing_s", {}).items()), "s"))
    for sol in results.get("solutions", []):
        body.extend(_solution(sol, axisym))
    if "series" in results:
        body.append("<h2>Time series</h2><p>Every step is in results.json (block "
                    "<code>series</code>) and in the series_*.csv tables.</p>")
        if results["series"].get("loops"):
            body.append(f"<p>Loops: flux per turn and flux linkage; {_e(EMF_SIGN)}.</p>")
    if images:
        body.append("<h2>Pictures</h2>")
        body.extend(_image(caption, p) for caption, p in images.items())
    for caption, (header, rows) in (tables or {}).items():
        body.append(_extra(caption, header, rows))
    body.append("</main><footer>Written by whorl. Phasors are RMS; losses and forces are "
                "time averages; planar totals are for the model depth, axisymmetric ones "
                "for the full turn.</footer>")
    page = ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{_e(title)}</title><style>{STYLE}</style></head><body>"
            + "\n".join(body) + "</body></html>\n")
    path = Path(path)
    path.write_text(page, encoding="utf-8")
    return path
