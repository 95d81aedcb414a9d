"""The ``[[source]]`` and ``[[shorted]]`` tables.

Harmonic and static sources carry RMS phasors: ``current`` (A) or ``voltage``
(V) with ``phase`` in degrees. Transient sources carry a ``waveform`` of
instantaneous values instead; the solver objects then have neither current
nor voltage but a waveform object (the SI dicts are also returned
separately). A transient source with ``capacitance`` (and ``initial_voltage``)
is a capacitor discharging through it; its ``resistance`` is in series.
"""

from __future__ import annotations

import cmath
import math

from whorl.cases.errors import CaseError
from whorl.cases.names import valid_name
from whorl.cases.read_regions import expand
from whorl.cases.reader import Context, Table, array_of_tables
from whorl.solver.sources import AppliedField, Massive, Shorted, Stranded
from whorl.solver.waveforms import from_dict

KINDS = ("stranded", "massive", "applied-field")
_DRIVEN = {"name", "kind", "regions", "return_regions"}
_KEYS = {
    ("stranded", False): _DRIVEN | {"turns", "current", "voltage", "phase", "resistance",
                                    "fill_factor"},
    ("massive", False): _DRIVEN | {"connection", "current", "voltage", "phase", "resistance"},
    ("applied-field", False): {"name", "kind", "flux_density", "phase"},
    ("stranded", True): _DRIVEN | {"turns", "resistance", "waveform", "drive", "capacitance",
                                   "initial_voltage", "fill_factor"},
    ("massive", True): _DRIVEN | {"connection", "waveform", "drive", "resistance",
                                  "capacitance", "initial_voltage"},
    ("applied-field", True): {"name", "kind", "flux_density"},
}
HEATING_KEYS = {"power", "max_current", "max_voltage", "on"}
"""Keys a stranded or massive source takes in a heating study (see read_supply)."""
WAVEFORM_KEYS = {"step": {"value"}, "sine": {"peak", "frequency", "phase"},
                 "ramp": {"value", "rise"}, "table": {"points"}}


def read_sources(ctx: Context, document: dict, regions: list[str], conductivity,
                 transient: bool, heating: bool = False):
    """Sources in file order and the transient waveforms by source name.

    Parameters
    ----------
    conductivity : callable
        ``conductivity(region) -> S/m``; massive sources need conductors.
    transient : bool
        True for a transient study (sources take ``waveform``).
    heating : bool
        True for a heating study: sources may also take ``power``, ``max_current``,
        ``max_voltage`` and ``on`` (read by :mod:`.read_supply`).

    Returns
    -------
    sources : tuple
        Stranded, Massive and AppliedField objects.
    waveforms : dict
        Source name -> waveform dict of SI values (transient studies only).
    """
    sources, waveforms, owner = [], {}, {}
    for i, raw in enumerate(array_of_tables(ctx, document, "source"), start=1):
        name = raw.data.get("name")
        path = f"source.{name}" if isinstance(name, str) and name else f"source[{i}]"
        table = Table(ctx, raw.data, path, raw.block)
        table.allow(set().union(*_KEYS.values()) | HEATING_KEYS, required=("name", "kind"))
        name = table.string("name")
        if not valid_name(name):
            raise table.error("name", f"{name!r} is not a valid source name")
        if any(s.name == name for s in sources):
            raise table.error("name", f"source name {name!r} is used twice")
        kind = table.string("kind", choices=KINDS)
        allowed = _KEYS[(kind, transient)]
        if heating and kind != "applied-field":
            allowed = allowed | HEATING_KEYS
        for key in table.data:
            if key in HEATING_KEYS and not heating:
                raise table.error(key, f"{key!r} belongs to heating studies only "
                                       "([study] kind = \"heating\")")
            if key not in allowed:
                study = "transient" if transient else "harmonic and static"
                raise table.error(key, f"{key!r} does not belong to a {kind} source in a "
                                       f"{study} study (it takes {', '.join(sorted(allowed))})")
        if kind == "applied-field":
            sources.append(_applied(ctx, table, name, transient))
            continue
        source, waveform = _driven(ctx, table, name, kind, regions, conductivity, transient,
                                   heating)
        for key, names in (("regions", source.regions), ("return_regions",
                                                         source.return_regions)):
            for region in names:
                if region in owner:
                    raise table.error(key, f"region {region!r} already belongs to "
                                           f"{owner[region]}")
                owner[region] = f"source {name!r}"
        sources.append(source)
        if waveform is not None:
            waveforms[name] = waveform
    applied = [s for s in sources if s.kind == "applied-field"]
    if len(applied) > 1:
        raise CaseError(f"source.{applied[1].name}", "a model takes at most one "
                        "applied-field source")
    return tuple(sources), waveforms


def _phasor(table: Table, key: str) -> complex:
    value = table.value(key, "current" if key == "current" else "voltage")
    phase = table.value("phase", "angle", 0.0)
    return complex(value) if phase == 0 else value * cmath.exp(1j * math.radians(phase))


def _driven(ctx, table, name, kind, regions, conductivity, transient, heating=False):
    listed = expand(table.names("regions"), regions, table, "regions")
    back = ()
    if table.has("return_regions"):
        if ctx.axisymmetric:
            raise table.error("return_regions", "return regions exist in planar models only")
        back = expand(table.names("return_regions"), regions, table, "return_regions")
        both = sorted(set(back) & set(listed))
        if both:
            raise table.error("return_regions", f"{both[0]!r} is also in regions")
    if kind == "massive":
        for region in listed + back:
            if conductivity(region) <= 0:
                raise table.error("regions", f"region {region!r} does not conduct: a massive "
                                             "source needs conductors (use stranded for a "
                                             "winding in a non-conducting region)")
    current = voltage = waveform = capacitance = None
    drive, initial = "current", 0.0
    if transient:
        if table.has("capacitance"):
            capacitance = table.positive("capacitance", "capacitance")
            initial = table.value("initial_voltage", "voltage", 0.0)
            drive = table.string("drive", "voltage", ("voltage",))
            if table.has("waveform"):
                waveform = read_waveform(table.table("waveform"), drive)
        else:
            if table.has("initial_voltage"):
                raise table.error("initial_voltage", "initial_voltage goes with capacitance")
            drive = table.string("drive", "current", ("current", "voltage"))
            waveform = read_waveform(table.table("waveform"), drive)
    elif heating and table.has("power"):
        for key in ("current", "voltage"):
            if table.has(key):
                raise table.error(key, "give one of current, voltage and power")
        current = 1.0 + 0j  # scaled at every field solution to the power asked
    else:
        if table.has("current") == table.has("voltage"):
            raise table.error("current", "give exactly one of current and voltage"
                              + (" (or power)" if heating else ""))
        if table.has("current"):
            current = _phasor(table, "current")
        else:
            voltage = _phasor(table, "voltage")
    shape = from_dict(waveform) if waveform else None
    extra = {"waveform": shape, "drive": drive, "capacitance": capacitance,
             "initial_voltage": initial}
    resistance = table.positive("resistance", "resistance", 0.0, zero=True)
    if kind == "stranded":
        turns = table.positive("turns", "dimensionless", 1.0)
        fill = _fill_factor(table, (*listed, *back), conductivity)
        return Stranded(name, listed, turns, current, voltage, resistance, back,
                        **extra, fill_factor=fill), waveform
    connection = table.string("connection", "series", ("series", "parallel"))
    return Massive(name, listed, connection, current, voltage, back,
                   resistance=resistance, **extra), waveform


def _fill_factor(table: Table, regions, conductivity) -> float | None:
    """The winding's copper fill (0 < f <= 1) when its DC resistance is to be computed
    from the regions' material (default 1 when a region conducts); None when
    ``resistance`` is given or no region conducts."""
    conducting = [r for r in regions if conductivity(r) > 0]
    if table.has("fill_factor"):
        if table.has("resistance"):
            raise table.error("fill_factor", "give resistance or fill_factor, not both: the "
                                             "fill factor only serves to compute the resistance")
        if not conducting:
            raise table.error("fill_factor", "the winding's regions do not conduct: give their "
                                             "material a conductivity, or give resistance")
        fill = table.positive("fill_factor", "dimensionless")
        if fill > 1:
            raise table.error("fill_factor", f"must be at most 1, got {fill:g}")
        return fill
    if table.has("resistance") or not conducting:
        return None
    return 1.0


def _applied(ctx: Context, table: Table, name: str, transient: bool) -> AppliedField:
    phase = 0.0 if transient else table.value("phase", "angle", 0.0)
    turn = cmath.exp(1j * math.radians(phase))
    if ctx.axisymmetric:
        raw = table.raw("flux_density")
        if isinstance(raw, list):
            raise table.error("flux_density", "axisymmetric models take one value, the axial "
                                              "flux density Bz")
        return AppliedField(name, table.value("flux_density", "flux_density") * turn)
    bx, by = table.vector("flux_density", "flux_density", 2, geometry=False)
    return AppliedField(name, (bx * turn, by * turn))


def read_waveform(table: Table, drive: str) -> dict:
    """A transient waveform as a dict of SI values (``shape`` plus its keys).

    ``step``: ``value``; ``sine``: ``peak``, ``frequency``, ``phase`` (degrees,
    default 0); ``ramp``: ``value``, ``rise``; ``table``: ``points`` =
    ``[[t, value], ...]`` with non-decreasing times from t >= 0.
    """
    shape = table.string("shape", choices=tuple(WAVEFORM_KEYS))
    keys = WAVEFORM_KEYS[shape]
    required = tuple(sorted(keys - {"phase"}))
    table.allow(keys | {"shape"}, required=required)
    kind = "current" if drive == "current" else "voltage"
    out: dict = {"shape": shape, "drive": drive}
    if shape in ("step", "ramp"):
        out["value"] = table.value("value", kind)
    if shape == "ramp":
        out["rise_s"] = table.positive("rise", "time")
    if shape == "sine":
        out["peak"] = table.value("peak", kind)
        out["frequency_hz"] = table.positive("frequency", "frequency")
        out["phase_deg"] = table.value("phase", "angle", 0.0)
    if shape == "table":
        out["points"] = _points(table, kind)
    return out


def _points(table: Table, kind: str) -> list[tuple[float, float]]:
    raw = table.raw("points")
    if not isinstance(raw, list) or not raw:
        raise table.error("points", "expected a list of [time, value] pairs")
    points, key = [], table.key("points")
    for i, p in enumerate(raw, start=1):
        if not isinstance(p, list) or len(p) != 2:
            raise table.error(f"points[{i}]", f"expected [time, value], got {p!r}")
        t = table.convert(p[0], f"{key}[{i}][1]", "time", False, "points")
        v = table.convert(p[1], f"{key}[{i}][2]", kind, False, "points")
        if t < 0 or (points and t < points[-1][0]):
            raise table.error(f"points[{i}]", "times must start at >= 0 and not decrease")
        points.append((t, v))
    return points


def read_shorted(ctx: Context, document: dict, regions: list[str], conductivity,
                 sources) -> tuple:
    """``[[shorted]]`` groups (planar only): conductors in no source, joined at their ends."""
    in_source = {r for s in sources for r in getattr(s, "regions", ())
                 + getattr(s, "return_regions", ())}
    groups, seen = [], {}
    for table in array_of_tables(ctx, document, "shorted"):
        table.allow({"regions"}, required=("regions",))
        if ctx.axisymmetric:
            raise table.error("regions", "[[shorted]] applies to planar models; an "
                                         "axisymmetric conductor is already a closed ring")
        names = expand(table.names("regions"), regions, table, "regions")
        for region in names:
            if conductivity(region) <= 0:
                raise table.error("regions", f"region {region!r} does not conduct")
            if region in in_source:
                raise table.error("regions", f"region {region!r} belongs to a source")
            if region in seen:
                raise table.error("regions", f"region {region!r} is already in {seen[region]}")
            seen[region] = table.path
        if len(names) < 2:
            raise table.error("regions", "a shorted group joins at least two conductors")
        groups.append(Shorted(names))
    return tuple(groups)
