"""Read and validate a case file (format 1) into a :class:`~whorl.cases.spec.Case`.

Each section has its reader module (``read_model``, ``read_regions``,
``read_domain``, ``read_sources``, ``read_study``, ``read_outputs``,
``read_motion``, ``read_sweep``); this module puts them together in dependency order:
parameters first (every other value may use them), then the model (its
length unit scales geometry), materials, regions, domain, study, sources and
outputs. Any problem is a :class:`CaseError` naming the key path and, where
found, the line.

``Case.document`` holds the parsed TOML plus one extra entry, ``"_resolved"``:
``{"overrides": {...}, "waveforms": {source name: waveform of SI values}}``;
transient waveforms live only there, since the solver's source objects carry
harmonic phasors.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.limits import MAX_NESTING, MAX_SWEEP_POINTS, check_shapes, nesting_depth
from whorl.cases.lines import LineIndex
from whorl.cases.parameters import resolve, si_values
from whorl.cases.read_domain import check_regions_inside, read_domain
from whorl.cases.read_heated import resolve_heated
from whorl.cases.read_materials import lookup, read_materials
from whorl.cases.read_model import read_case, read_mesh, read_model
from whorl.cases.read_motion import read_motions
from whorl.cases.read_outputs import read_lines, read_loops, read_output, read_points
from whorl.cases.read_regions import read_regions
from whorl.cases.read_sources import read_shorted, read_sources
from whorl.cases.read_study import read_study
from whorl.cases.read_supply import read_supplies
from whorl.cases.read_surfaces import read_surfaces
from whorl.cases.read_sweep import read_sweep, sweep_size
from whorl.cases.reader import Context, Table
from whorl.cases.spec import Case
from whorl.meshes.geometry import Geometry
from whorl.solver.boundary import AppliedFieldSide
from whorl.solver.sources import Stranded

FORMAT = 1
TOP_KEYS = ("format", "case", "model", "mesh", "parameters", "material", "region", "domain",
            "source", "shorted", "study", "loop", "line", "point", "output", "sweep", "surface",
            "motion")


def load_case(path, overrides=None, max_points: int | None = MAX_SWEEP_POINTS) -> Case:
    """Read, check and resolve the case file at ``path``.

    Parameters
    ----------
    path : str or Path
    overrides : dict of str -> str or number, optional
        Parameter values replacing the file's (``--set NAME=VALUE``).
    max_points : int, optional
        Refuse a ``[sweep]`` of more points (checked before any is built; 0 or
        None: no limit).

    Raises
    ------
    CaseError
        For any bad input, naming the key path (and line where found).
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CaseError("file", f"no case file at {path}") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise CaseError("file", f"cannot read {path}: {exc}") from None
    return parse_case(text, path, overrides, max_points)


def parse_case(text: str, path=None, overrides=None,
               max_points: int | None = MAX_SWEEP_POINTS) -> Case:
    """Check and resolve case-file text (``path`` names it and anchors ``output.folder``).

    Every value of a ``[sweep]`` is also tried on its own, so a sweep that
    would fail at one of its values is reported now. The shapes are checked
    for what the mesher cannot handle (:func:`~whorl.cases.limits.check_shapes`);
    a sweep checks each point's shapes when it runs.
    """
    overrides = dict(overrides or {})
    case = _build(text, path, overrides)
    check_shapes(case.document, case.geometry)
    if case.sweep is not None:
        count = sweep_size(case.sweep)
        if max_points and count > max_points:
            raise CaseError("sweep", f"the sweep has {count} points, more than the maximum "
                                     f"of {max_points}; make it smaller or raise "
                                     "--max-points")
        index = LineIndex(text)
        for name, values in case.sweep.axes.items():
            for i, value in enumerate(values, start=1):
                try:
                    _build(text, path, {**overrides, name: value})
                except CaseError as exc:
                    raise CaseError(f"sweep.{name}[{i}]", f"with {name} = {value!r}: {exc}",
                                    index.find(("sweep", 0), name)) from None
    return case


def build_case(text: str, path=None, overrides=None) -> Case:
    """Like :func:`parse_case` but without trying every ``[sweep]`` value on its own: for
    building the points of a sweep whose case was already loaded once."""
    return _build(text, path, dict(overrides or {}))


def _toml(text: str) -> dict:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = re.search(r"line (\d+)", str(exc))
        raise CaseError("file", f"not valid TOML: {exc}", int(m.group(1)) if m else None) \
            from None
    except (RecursionError, MemoryError):
        doc = None
    if doc is None or nesting_depth(doc) > MAX_NESTING:
        raise CaseError("file", f"arrays or tables are nested more than {MAX_NESTING} deep")
    return doc


def _format(doc: dict, index: LineIndex) -> None:
    line = index.find(("", 0), "format")
    if "format" not in doc:
        raise CaseError("format", "required: start the file with 'format = 1'")
    value = doc["format"]
    if isinstance(value, bool) or value != FORMAT:
        raise CaseError("format", f"this version of whorl reads case format {FORMAT}, "
                                  f"the file says format = {value!r}; convert the file or use "
                                  "a whorl that reads that format", line)
    for key in doc:
        if key not in TOP_KEYS:
            raise CaseError(key, f"unknown top-level key (expected one of: "
                                 f"{', '.join(TOP_KEYS)})", index.find(("", 0), key)
                            or index.find((key, 0)))


def _section(ctx: Context, doc: dict, name: str, default=None) -> Table | None:
    if name not in doc:
        return None if default is None else Table(ctx, default, name, (name, 0))
    return Table(ctx, doc[name], name, (name, 0))


def _parameters(doc: dict, index: LineIndex, overrides: dict) -> dict:
    raw = doc.get("parameters", {})
    if not isinstance(raw, dict):
        raise CaseError("parameters", "expected a [parameters] table",
                        index.find(("", 0), "parameters"))

    def key_of(name, overridden):
        if overridden:
            return f"--set {name}", None
        return f"parameters.{name}", index.find(("parameters", 0), name)

    return resolve(raw, overrides, key_of)


def _build(text: str, path, overrides: dict) -> Case:
    index = LineIndex(text)
    index.check_duplicates()
    doc = _toml(text)
    _format(doc, index)
    ctx = Context(index, folder=Path(path).resolve().parent if path else None)
    ctx.params = _parameters(doc, index, overrides)

    info = read_case(_section(ctx, doc, "case", {}), Path(path).stem if path else "case")
    model = read_model(_section(ctx, doc, "model", {}))
    ctx.length_unit, ctx.unit_m = model.length_unit, model.unit_m
    ctx.axisymmetric = model.axisymmetric
    ctx.temperature_k = model.temperature_k
    options = read_mesh(_section(ctx, doc, "mesh"), model.order)

    defined = read_materials(ctx, doc.get("material"), model.temperature_k)
    entries = read_regions(ctx, doc)
    region_names = [e.spec.name for e in entries]
    domain_table = _section(ctx, doc, "domain", {})
    domain = read_domain(ctx, domain_table, [e.spec.shape for e in entries])
    check_regions_inside(domain.spec, entries)

    materials, region_material = {}, {}
    for entry in entries:
        material = lookup(entry.material, defined, entry.table, "material")
        materials[material.name] = material
        region_material[entry.spec.name] = material.name
    background = lookup(domain.material, defined, domain_table, "material")
    materials[background.name] = background
    region_material["domain"] = background.name

    if "study" not in doc:
        raise CaseError("study", "required: add a [study] table (kind = \"harmonic\", "
                                 "\"static\" or \"transient\")")
    study = read_study(_section(ctx, doc, "study"))

    def conductivity(region: str) -> float:
        return materials[region_material[region]].conductivity

    heating = study.kind == "heating"
    sources, waveforms = read_sources(ctx, doc, region_names, conductivity,
                                      study.kind == "transient", heating)
    supplies = read_supplies(ctx, doc) if heating else {}
    if heating:
        study = resolve_heated(ctx, _section(ctx, doc, "study"), study, region_names,
                               region_material, materials, sources, defined)
    region_materials = {r: materials[region_material[r]] for r in region_names}
    surfaces = read_surfaces(ctx, doc, region_names,
                             study.heating.heated if heating else (), region_materials,
                             heating)
    _check_applied(ctx, doc, domain.boundary, sources)
    _check_dc_windings(ctx, sources, study)
    shorted = read_shorted(ctx, doc, region_names, conductivity, sources)
    wound = {r for s in sources if s.kind == "stranded" for r in (*s.regions, *s.return_regions)}
    motions = read_motions(ctx, doc, entries, domain.spec, conductivity, wound)

    geometry = Geometry(tuple(e.spec for e in entries), domain.spec, model.axisymmetric,
                        model.unit_m, options)
    document = dict(doc)
    document["_resolved"] = {"overrides": dict(overrides), "waveforms": waveforms}
    return Case(
        name=info.name, title=info.title, notes=info.notes,
        geometry_kind=model.geometry, length_unit=model.length_unit, unit_m=model.unit_m,
        depth_m=model.depth_m, order=model.order, solver=model.solver,
        parameters=si_values(ctx.params), materials=materials,
        region_material=region_material, geometry=geometry, boundary=domain.boundary,
        sources=sources, shorted=shorted, study=study,
        loops=read_loops(ctx, doc, domain.spec), lines=read_lines(ctx, doc, domain.spec),
        points=read_points(ctx, doc, domain.spec),
        output=read_output(_section(ctx, doc, "output")),
        sweep=read_sweep(_section(ctx, doc, "sweep"), list(ctx.params)),
        path=Path(path) if path else None, document=document, text=text,
        surfaces=surfaces, supplies=supplies, temperature_k=model.temperature_k,
        motions=motions,
    )


def _check_dc_windings(ctx: Context, sources, study) -> None:
    """A voltage on a stranded winding without resistance at 0 Hz has no current that
    satisfies it (V = R I with R = 0): refuse it here, before anything is meshed."""
    if 0.0 not in study.frequencies:
        return
    for i, s in enumerate(sources, start=1):
        if (isinstance(s, Stranded) and s.voltage is not None and s.resistance == 0
                and s.fill_factor is None):
            raise CaseError(f"source.{s.name}.voltage", "a voltage-driven stranded winding at "
                            "0 Hz needs a resistance (at DC, V = R I): give `resistance`, or "
                            "a conducting material for its regions, or drive it by current",
                            ctx.index.find(("source", i), "voltage"))


def _check_applied(ctx: Context, doc: dict, boundary: dict, sources) -> None:
    applied = [s for s in sources if s.kind == "applied-field"]
    sides = [side for side, cond in boundary.items() if isinstance(cond, AppliedFieldSide)]
    if sides and not applied:
        raise CaseError(f"domain.boundary.{sides[0]}", "an applied-field side needs an "
                        "applied-field [[source]] giving the field",
                        ctx.index.find(("domain.boundary", 0), sides[0])
                        or ctx.index.find(("domain", 0), sides[0]))
    if applied and not sides:
        raise CaseError(f"source.{applied[0].name}", "an applied-field source acts on domain "
                        "sides marked \"applied-field\": mark at least one in "
                        "[domain.boundary]")
