"""``whorl check CASE``: validate a case file without solving and show what it holds."""

from __future__ import annotations

from whorl.cases import model
from whorl.cases.cli.common import add_case_args, add_limit_args
from whorl.cases.limits import check_mesh_estimate
from whorl.cases.loader import load_case
from whorl.cases.parameters import parse_set_args
from whorl.cases.read_sweep import sweep_size
from whorl.meshes.build import covered_regions
from whorl.meshes.errors import MeshError
from whorl.postprocess.outlines import plot_outlines

HELP = "validate a case file without solving; print what it contains"


def add_args(parser) -> None:
    add_case_args(parser, out=False, quiet=None)
    add_limit_args(parser, mesh_time=False)
    parser.add_argument("--picture", metavar="PNG",
                        help="also write a picture of the regions as drawn (outlines, holes "
                             "and region names) to this file")


def handle(args) -> int:
    case = load_case(args.case, parse_set_args(args.overrides), args.max_points)
    elements = check_mesh_estimate(case, args.max_elements)
    lines = summary(case)
    lines.insert(-1, f"  mesh       about {elements:,.0f} elements estimated (limit "
                     f"{args.max_elements:,})")
    try:
        covered = covered_regions(model.sized_geometry(case))
    except MeshError:
        covered = []  # drawing problems are the mesher's to report, at run time
    warnings = [f"WARNING: {text}" for text in model.overlap_warnings(case, covered)]
    if args.picture:
        plot_outlines(case.geometry, args.picture, title=case.title or case.name)
        lines.insert(-1, f"  picture    {args.picture}")
    for line in lines[:-1] + warnings + lines[-1:]:
        print(line)
    return 0


def _shape(shape) -> str:
    kind = getattr(shape, "kind", type(shape).__name__.lower())
    if kind == "rectangle":
        return f"rectangle corner {_xy(shape.corner)} size {_xy(shape.size)}"
    if kind == "circle":
        return f"circle center {_xy(shape.center)} radius {shape.radius:g}"
    if kind == "ring":
        return f"ring center {_xy(shape.center)} radii {shape.inner:g} to {shape.outer:g}"
    if kind == "outline":
        arcs = sum(a is not None for a in shape.arcs)
        return f"outline of {len(shape.vertices)} sides ({arcs} arcs), area {shape.area():.6g}"
    if kind == "with-holes":
        return f"{_shape(shape.outer)} less {len(shape.holes)} holes, area {shape.area():.6g}"
    return f"polygon of {len(shape.points)} points"


def _xy(p) -> str:
    return f"({p[0]:g}, {p[1]:g})"


def _phasor(z) -> str:
    import cmath
    import math
    magnitude, angle = abs(z), math.degrees(cmath.phase(z))
    return f"{magnitude:g}" + (f" at {angle:g} deg" if abs(angle) > 1e-12 else "")


def _supply(text: str, source, supply) -> str:
    """A heating study's source: its power (in place of the placeholder current), caps
    and on window."""
    if supply.power_w is not None:
        text = text.replace(f"current {_phasor(source.current)} A RMS",
                            f"power {supply.power_w:g} W")
    extra = []
    if supply.max_current_a is not None:
        extra.append(f"at most {supply.max_current_a:g} A")
    if supply.max_voltage_v is not None:
        extra.append(f"at most {supply.max_voltage_v:g} V")
    if supply.on != (0.0, float("inf")):
        extra.append(f"on from {supply.on[0]:g} s to {supply.on[1]:g} s")
    return text + ("; " + ", ".join(extra) if extra else "")


def _source(s) -> str:
    if s.kind == "applied-field":
        b = s.flux_density
        text = (f"B = ({_phasor(b[0])}, {_phasor(b[1])}) T" if isinstance(b, tuple)
                else f"Bz = {_phasor(b)} T")
        return f"applied-field, {text} RMS"
    regions = ", ".join(_compact(s.regions))
    if s.current is not None:
        drive = f"current {_phasor(s.current)} A RMS"
    elif s.voltage is not None:
        drive = f"voltage {_phasor(s.voltage)} V RMS"
    elif s.capacitance is not None:
        drive = (f"capacitor {s.capacitance:g} F charged to {s.initial_voltage:g} V"
                 + (f" plus a {s.waveform.shape} waveform" if s.waveform is not None else ""))
    else:
        drive = f"{s.drive} {s.waveform.shape} waveform (transient)"
    if s.kind == "stranded":
        ohm = (f"resistance from its material (fill factor {s.fill_factor:g})"
               if s.fill_factor is not None else f"{s.resistance:g} ohm")
        extra = f", {s.turns:g} turns, {ohm}"
    else:
        extra = f", {s.connection}"
    back = f", return {', '.join(_compact(s.return_regions))}" if s.return_regions else ""
    return f"{s.kind}{extra}, {drive}, regions {regions}{back}"


def _compact(names) -> list[str]:
    """``turn.1 ... turn.8`` shown as ``turn.1..8``."""
    out, i, names = [], 0, list(names)
    while i < len(names):
        stem, _, num = names[i].rpartition(".")
        j = i
        while (num.isdigit() and j + 1 < len(names)
               and names[j + 1] == f"{stem}.{int(num) + j + 1 - i}"):
            j += 1
        out.append(names[i] if j == i else f"{names[i]}..{int(num) + j - i}")
        i = j + 1
    return out


def summary(case) -> list[str]:
    """Lines describing a loaded case."""
    g = case.geometry
    lines = [f"case {case.name}: {case.title}"]
    if case.path:
        lines.append(f"  file       {case.path}")
    depth = "" if case.axisymmetric else f", depth {case.depth_m:g} m"
    lines.append(f"  model      {case.geometry_kind}, length unit {case.length_unit} "
                 f"({case.unit_m:g} m){depth}, order {case.order}")
    if case.parameters:
        lines.append("  parameters " + ", ".join(f"{k} = {v:g}" for k, v in
                                                 case.parameters.items()) + " (SI)")
    lines.append(f"  regions    {len(g.regions)}")
    width = max(len(r.name) for r in g.regions)
    for r in g.regions:
        size = f", mesh size {r.mesh_size:g}" if r.mesh_size else ""
        lines.append(f"    {r.name:<{width}}  {case.region_material[r.name]:<14} "
                     f"{_shape(r.shape)}{size}")
    d = g.domain
    where = (f"radius {d.radius:g}" if d.shape == "circle"
             else f"corner {_xy(d.corner)} size {_xy(d.size)}")
    lines.append(f"  domain     {d.shape} {where}, material {case.region_material['domain']}")
    if case.boundary:
        lines.append("  boundary   " + ", ".join(f"{side} {cond.kind}" for side, cond in
                                                 case.boundary.items()))
    lines.append("  materials  " + ", ".join(
        f"{m.name} ({m.conductivity:.4g} S/m, "
        + (f"B-H curve, initial mu_r {m.relative_permeability:.4g})" if m.bh_curve is not None
           else f"mu_r {m.relative_permeability:g})")
        for m in case.materials.values()))
    for s in case.sources:
        supply = case.supplies.get(s.name)
        text = _source(s)
        if supply is not None:
            text = _supply(text, s, supply)
        lines.append(f"  source     {s.name}: {text}")
    for group in case.shorted:
        lines.append(f"  shorted    {', '.join(group.regions)}")
    for m in case.motions:
        regions = ", ".join(_compact(m.regions))
        if m.kind == "rotation":
            what = (f"rotation at {m.angular_velocity:g} rad/s "
                    f"({m.angular_velocity * 30 / 3.141592653589793:g} rpm) about "
                    f"{_xy(tuple(c / case.unit_m for c in m.center))}")
        else:
            what = f"translation at {_xy(m.velocity)} m/s"
        lines.append(f"  motion     {regions}: {what}, stabilisation {m.stabilisation}")
    st = case.study
    if st.kind == "transient":
        lines.append(f"  study      transient to {st.end_s:g} s in steps of {st.step_s:g} s "
                     f"({st.scheme}, fields every {st.save_every} steps)")
    elif st.kind == "heating":
        spec = st.heating
        lines.append(f"  study      heating at {st.frequencies[0]:g} Hz to {st.end_s:g} s, steps "
                     f"up to {st.step_s:g} s ({st.scheme}); start {spec.initial_k - 273.15:g} "
                     f"degC; heated {', '.join(spec.heated)}; field re-solved every "
                     f"{spec.field_update_k:g} K")
        for i, sf in enumerate(case.surfaces, start=1):
            window = (f" from {sf.start_s:g} s" if sf.start_s > 0 else "") + (
                f" until {sf.end_s:g} s" if sf.end_s != float("inf") else "")
            eps = "" if sf.emissivity is None else f", emissivity {sf.emissivity}"
            lines.append(f"  surface    {i}: {', '.join(sf.regions)}: h {sf.convection:g} "
                         f"W/(m^2 K) to {sf.ambient_k - 273.15:g} degC{eps}{window}")
    else:
        lines.append(f"  study      {st.kind} at " + ", ".join(f"{f:g}" for f in
                                                              st.frequencies) + " Hz")
    outputs = [f"{len(case.loops)} loops", f"{len(case.lines)} lines",
               f"{len(case.points)} points"]
    lines.append(f"  outputs    {', '.join(outputs)}; folder {case.output.folder}; "
                 f"fields {'yes' if case.output.fields else 'no'}, "
                 f"plots {'yes' if case.output.plots else 'no'}")
    if case.sweep is not None:
        axes = " x ".join(f"{name} ({len(v)})" for name, v in case.sweep.axes.items())
        lines.append(f"  sweep      {case.sweep.mode}: {axes} = {sweep_size(case.sweep)} points")
    lines.append("ok: the case is valid")
    return lines
