"""Pictures of a solution (PNG): a registry of field plot kinds, line and frequency curves.

Field plots are drawn on the P1 triangulation of the mesh without the
exterior disk of an open boundary, in the case's length unit, over the
outlines of the regions. Every function draws on a bare
:class:`matplotlib.figure.Figure` (Agg canvas, no pyplot state) and writes the
PNG to the path it is given.

Kinds (see :data:`PLOTS`): ``flux-lines``, ``flux-density``,
``current-density``, ``loss-density``; ``plot_field(kind, solution, path)``
draws one. Add a kind with the :func:`register_plot` decorator.
"""

from __future__ import annotations

import math
import os

import numpy as np

from whorl.postprocess.meshplot import BACKGROUND_COLOUR, PALETTE, unit_name
from whorl.postprocess.saturation import saturation_marks
from whorl.postprocess.vtu import cell_means, visible_mesh

#: Registered field plot kinds: name -> function(solution, path, **options).
PLOTS: dict = {}

OUTLINE_COLOUR = "#8f8f8f"
LINE_COLOUR = "#1f3a5f"
SATURATION_COLOUR = "#d8432b"  # cells above a steel's saturation level
MAPS = {"flux-density": "cividis", "current-density": "viridis", "loss-density": "magma"}
LOG_SPAN = 1e3  # loss maps go logarithmic when max/min exceeds this
LOG_FLOOR = 1e-6  # and show values down to this fraction of the maximum


def register_plot(name: str):
    """Decorator: make a field plot function available as ``PLOTS[name]``."""

    def wrap(fn):
        PLOTS[name] = fn
        return fn

    return wrap


def plot_field(kind: str, solution, path, **options):
    """Draw the field plot ``kind`` of ``solution`` to the PNG ``path``.

    Parameters
    ----------
    kind : str
        A name in :data:`PLOTS` (``flux-lines``, ``flux-density``,
        ``current-density``, ``loss-density``).
    solution : Solution
        Harmonic or static solution (RMS phasors).
    path : str or path-like
        The PNG file to write.
    **options
        Passed to the plot function (``dpi`` for all kinds).

    Returns
    -------
    path-like
        ``path``.
    """
    if kind not in PLOTS:
        raise ValueError(f"unknown plot kind {kind!r}; known: {', '.join(sorted(PLOTS))}")
    return PLOTS[kind](solution, path, **options)


def frequency_text(frequency_hz: float) -> str:
    """``3000.0`` -> ``"3 kHz"``; ``0`` -> ``"static (0 Hz)"``."""
    f = float(frequency_hz)
    if f == 0:
        return "static (0 Hz)"
    for scale, prefix in ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, "")):
        if abs(f) >= scale:
            return f"{f / scale:.4g} {prefix}Hz"
    return f"{f:.4g} Hz"


class _View:
    """A figure with one axes showing the visible mesh of a solution in its length unit."""

    def __init__(self, solution, title: str, width: float = 7.5, padding: float = 0.25):
        from matplotlib.figure import Figure
        from matplotlib.tri import Triangulation

        tagged = solution.problem.mesh
        self.tagged, self.solution = tagged, solution
        self.vis = visible_mesh(tagged)
        self.unit = unit_name(tagged.unit_m)
        xy = self.vis.xy / tagged.unit_m
        self.tri = Triangulation(xy[0], xy[1], self.vis.triangles)
        (x0, x1), (y0, y1) = self.extent(xy, padding)
        aspect = min(1.6, max(0.3, (y1 - y0) / max(x1 - x0, 1e-300)))
        self.fig = Figure(figsize=(width, 1.4 + (width - 1.8) * aspect))
        self.ax = ax = self.fig.add_subplot()
        ax.set_facecolor(BACKGROUND_COLOUR)
        ax.set_aspect("equal")
        ax.set_xlim(x0, x1)
        ax.set_ylim(y0, y1)
        names = ("r", "z") if tagged.axisymmetric else ("x", "y")
        ax.set_xlabel(f"{names[0]} [{self.unit}]")
        ax.set_ylabel(f"{names[1]} [{self.unit}]")
        ax.set_title(f"{title}, {frequency_text(solution.frequency_hz)}")

    def extent(self, xy, padding):
        """The regions' bounding box grown by ``padding`` times its larger side, within the
        mesh: the parts of interest fill the picture, not the air around them."""
        tagged = self.tagged
        mesh = tagged.mesh
        elems = [tagged.elements(r) for r in tagged.regions]
        full = ((xy[0].min(), xy[0].max()), (xy[1].min(), xy[1].max()))
        if not elems or padding is None:
            return full
        pts = mesh.p[:, mesh.t[:, np.concatenate(elems)]] / tagged.unit_m
        lo, hi = pts.reshape(2, -1).min(axis=1), pts.reshape(2, -1).max(axis=1)
        pad = padding * float(np.max(hi - lo))
        return ((max(full[0][0], lo[0] - pad), min(full[0][1], hi[0] + pad)),
                (max(full[1][0], lo[1] - pad), min(full[1][1], hi[1] + pad)))

    def outlines(self, colour=OUTLINE_COLOUR, width=0.8):
        """Draw the edges between regions and the outer edges of the visible mesh."""
        from matplotlib.collections import LineCollection

        mesh = self.tagged.mesh
        region = self.tagged.region_of_element()
        shown = np.zeros(mesh.t.shape[1], dtype=bool)
        shown[self.vis.elements] = True
        e0, e1 = mesh.f2t
        r1 = np.where(e1 >= 0, region[np.maximum(e1, 0)], -1)
        s1 = np.where(e1 >= 0, shown[np.maximum(e1, 0)], False)
        edge = (shown[e0] & s1 & (region[e0] != r1)) | (shown[e0] != s1)
        xy = mesh.p.T / self.tagged.unit_m
        self.ax.add_collection(LineCollection(xy[mesh.facets[:, edge].T], colors=colour,
                                              linewidths=width))

    def cells(self, values, mask, cmap, label, norm=None):
        """Colour the cells (values per visible element) where ``mask`` is False."""
        self.tri.set_mask(mask)
        art = self.ax.tripcolor(self.tri, facecolors=values, cmap=cmap, norm=norm,
                                shading="flat")
        from mpl_toolkits.axes_grid1 import make_axes_locatable

        bar = make_axes_locatable(self.ax).append_axes("right", size="4%", pad=0.12)
        self.bar = self.fig.colorbar(art, cax=bar, label=label)
        return art

    def edges_between(self, flag, colour, width=1.2, style="solid"):
        """Draw the mesh edges between visible cells where ``flag`` (one per mesh element)
        differs, and where a flagged cell meets the edge of the visible mesh."""
        from matplotlib.collections import LineCollection

        mesh = self.tagged.mesh
        shown = np.zeros(mesh.t.shape[1], dtype=bool)
        shown[self.vis.elements] = True
        flag = np.asarray(flag, dtype=bool) & shown
        e0, e1 = mesh.f2t
        f1 = np.where(e1 >= 0, flag[np.maximum(e1, 0)], False)
        edge = flag[e0] != f1
        xy = mesh.p.T / self.tagged.unit_m
        self.ax.add_collection(LineCollection(xy[mesh.facets[:, edge].T], colors=colour,
                                              linewidths=width, linestyles=style))

    def note(self, text):
        self.ax.text(0.5, 0.5, text, transform=self.ax.transAxes, ha="center", va="center",
                     color="#444444")

    def save(self, path, dpi=120):
        self.outlines()
        self.fig.tight_layout()
        self.fig.savefig(os.fspath(path), dpi=dpi)
        return path


@register_plot("flux-lines")
def plot_flux_lines(solution, path, levels: int = 24, phase_deg: float = 0.0, dpi=120):
    """Contours of A (planar) or of the flux function r A (axisymmetric).

    Solid lines: the field at the instant ``phase_deg`` of the RMS phasors'
    reference (0: the lines of Re(A)); dashed lines (AC only): a quarter period
    later, ``phase_deg`` + 90 degrees. The legend says so. Both use the same
    levels, so line spacing compares. Conducting regions are tinted, every
    region outlined.
    """
    axisym = solution.problem.axisymmetric
    view = _View(solution, "Flux lines (r A)" if axisym else "Flux lines (A)", padding=0.8)
    nodal = solution.system.basis.nodal_dofs[0][view.vis.vertices]
    phasor = solution.a[nodal] * (view.vis.xy[0] if axisym else 1.0)
    instants = [phase_deg] + ([phase_deg + 90.0] if solution.frequency_hz > 0 else [])
    sets = [np.real(phasor * np.exp(1j * math.radians(p))) for p in instants]
    conducting = solution.system.sigma[view.vis.elements] > 0
    if conducting.any():
        from matplotlib.colors import ListedColormap, to_rgb

        tint = 0.25 * np.array(to_rgb(PALETTE[0])) + 0.75 * np.array(to_rgb(BACKGROUND_COLOUR))
        view.tri.set_mask(~conducting)
        view.ax.tripcolor(view.tri, facecolors=np.zeros(conducting.size),
                          cmap=ListedColormap([tint]), shading="flat")
        view.tri.set_mask(None)
    lo = min(float(v.min()) for v in sets)
    hi = max(float(v.max()) for v in sets)
    if hi - lo > 1e-12 * max(abs(lo), abs(hi), 1e-300):
        from matplotlib.lines import Line2D

        steps = np.linspace(lo, hi, levels + 2)[1:-1]
        handles = []
        for values, style, at in zip(sets, ("solid", "dashed"), instants, strict=False):
            view.ax.tricontour(view.tri, values, levels=steps, colors=LINE_COLOUR,
                               linewidths=0.9 if style == "solid" else 0.7, linestyles=style)
            when = ("field" if len(sets) == 1 else
                    f"field at phase {at:g}°" + (" (a quarter period later)"
                                                 if style == "dashed" else ""))
            handles.append(Line2D([], [], color=LINE_COLOUR, linestyle=style, label=when))
        view.ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.12),
                       ncol=len(handles), fontsize=8, frameon=False)
    else:
        view.note("no field")
    return view.save(path, dpi)


def _scale(values, mask=None):
    """Colour norm and label suffix: logarithmic when the shown values span more than
    LOG_SPAN (a skin-deep part: linear, the picture is almost blank), down to LOG_FLOOR
    of the maximum; values are clipped to the norm's range."""
    from matplotlib.colors import LogNorm, Normalize

    shown = values if mask is None else values[~mask]
    top = float(shown.max()) if shown.size else 0.0
    positive = shown[shown > 0]
    if top > 0 and positive.size and top / float(positive.min()) > LOG_SPAN:
        norm = LogNorm(vmin=max(float(positive.min()), top * LOG_FLOOR), vmax=top)
        return norm, np.maximum(values, norm.vmin), ", log scale"
    return Normalize(vmin=0.0, vmax=max(top, 1e-300)), values, ""


@register_plot("flux-density")
def plot_flux_density(solution, path, dpi=120):
    """Map of the cell RMS magnitude of B (T), logarithmic when it spans more than three
    decades.

    In a saturable material (one with a B-H curve) the cells at or above its saturation
    level (:mod:`whorl.postprocess.saturation`) are outlined in ``SATURATION_COLOUR`` and the
    level is drawn across the colour bar; the legend gives the level in RMS and peak terms.
    """
    view = _View(solution, "|B| RMS")
    b_all = cell_means(solution).b_rms
    norm, b, log = _scale(b_all[view.vis.elements])
    view.cells(b, None, MAPS["flux-density"], f"|B| RMS [T]{log}", norm)
    handles = []
    for mark, style in zip(saturation_marks(solution, b_all), ("solid", "dashed", "dotted",
                                                                "dashdot") * 4, strict=False):
        from matplotlib.lines import Line2D

        view.edges_between(mark.saturated, SATURATION_COLOUR, style=style)
        if norm.vmin <= mark.level_t <= norm.vmax:
            view.bar.ax.axhline(mark.level_t, color=SATURATION_COLOUR, linewidth=1.5,
                                linestyle=style)
        rms = " RMS" if solution.frequency_hz > 0 else ""
        where = "" if mark.saturated.any() else ", not reached"
        text = (f"saturation level of {mark.material}: {mark.level_t:.3g} T{rms}"
                + (f" ({mark.peak_level_t:.3g} T peak)" if rms else "") + where)
        handles.append(Line2D([], [], color=SATURATION_COLOUR, linestyle=style, label=text))
    if handles:
        view.ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.12),
                       ncol=1, fontsize=8, frameon=False)
    return view.save(path, dpi)


@register_plot("current-density")
def plot_current_density(solution, path, dpi=120):
    """Map of the cell RMS magnitude of J (A/m^2), drawn only in conductors and windings,
    logarithmic when it spans more than three decades."""
    view = _View(solution, "|J| RMS")
    j = cell_means(solution).j_rms[view.vis.elements]
    conductor = (solution.system.sigma[view.vis.elements] > 0) | (j > 0)
    if conductor.any():
        norm, j, log = _scale(j, ~conductor)
        view.cells(j, ~conductor, MAPS["current-density"], f"|J| RMS [A/m²]{log}", norm)
    else:
        view.note("no conductors")
    return view.save(path, dpi)


@register_plot("loss-density")
def plot_loss_density(solution, path, dpi=120):
    """Map of the eddy-current loss density (W/m^3, time average), logarithmic when it spans
    more than three decades."""
    from matplotlib.colors import LogNorm, Normalize

    view = _View(solution, "Loss density")
    loss = cell_means(solution).loss[view.vis.elements]
    conductor = solution.system.sigma[view.vis.elements] > 0
    top = float(loss.max()) if loss.size else 0.0
    if top <= 0 or not conductor.any():
        view.note("no eddy-current loss")
        return view.save(path, dpi)
    low = float(loss[loss > 0].min())
    if top / low > LOG_SPAN:
        norm, label = LogNorm(vmin=max(low, top * LOG_FLOOR), vmax=top), "[W/m³], log scale"
        loss = np.maximum(loss, norm.vmin)
    else:
        norm, label = Normalize(vmin=0.0, vmax=top), "[W/m³]"
    view.cells(loss, ~conductor, MAPS["loss-density"], f"loss density {label}", norm)
    return view.save(path, dpi)


_LINE_GROUPS = (  # unit suffix of a line-table column -> panel label
    ("_wb_per_m", "A [Wb/m]"), ("_a_per_m2", "J [A/m²]"), ("_a_per_m", "H [A/m]"),
    ("_v_per_m", "E [V/m]"), ("_w_per_m3", "loss density [W/m³]"), ("_t", "B [T]"),
)


def _line_quantities(header):
    """Map panel label -> list of (name, column of the real part, column of the imaginary part
    or None) for the field columns of a line table."""
    panels: dict = {}
    for k, name in enumerate(header):
        if name.endswith("_im"):
            continue
        base = name[:-3] if name.endswith("_re") else name
        imag = header.index(base + "_im") if name.endswith("_re") else None
        for suffix, label in _LINE_GROUPS:
            if base.endswith(suffix):
                panels.setdefault(label, []).append((base[: -len(suffix)], k, imag))
                break
    return panels


def plot_line(header, rows, path, title: str = "Line", dpi=120):
    """Magnitudes of the quantities of a line table (see ``tables.line_rows``) against distance.

    Parameters
    ----------
    header : list of str
        Column names as written to the line CSV (``distance_UNIT`` and field
        columns with their SI unit in the name), with or without a leading
        ``frequency_hz`` column (one curve per frequency).
    rows : list of lists of float
        The samples. Complex columns (``_re``, ``_im``) are drawn as RMS
        magnitudes, one panel per physical quantity.
    path : str or path-like
        The PNG file to write.
    title : str
        Figure title (the frequency is added when there is one).

    Returns
    -------
    path-like
        ``path``.
    """
    from matplotlib.figure import Figure

    if not rows:
        raise ValueError("a line plot needs at least one row")

    data = np.array(rows, dtype=float).reshape(len(rows), len(header))
    dist_col = next(k for k, n in enumerate(header) if n.startswith("distance_"))
    unit = header[dist_col][len("distance_"):]
    x_col, x_label = _along(header, data, dist_col, unit)
    if "frequency_hz" in header:
        fcol = data[:, header.index("frequency_hz")]
        freqs = list(dict.fromkeys(fcol.tolist()))
    else:
        fcol, freqs = None, [None]
    panels = _line_quantities(header)
    ncols = 2
    nrows = max(1, math.ceil(len(panels) / ncols))
    fig = Figure(figsize=(10, 2.8 * nrows + 0.6))
    axes = fig.subplots(nrows, ncols, squeeze=False).ravel()
    for ax, (label, quantities) in zip(axes, panels.items(), strict=False):
        for f in freqs:
            sel = slice(None) if f is None else fcol == f
            for name, re, im in quantities:
                y = np.hypot(data[sel, re], data[sel, im]) if im is not None else data[sel, re]
                tag = name if len(freqs) == 1 else f"{name}, {frequency_text(f)}"
                ax.plot(data[sel, x_col], y, label=tag, linewidth=1.2)
        ax.set_ylabel(label)
        ax.set_xlabel(x_label)
        ax.grid(True, color="#dddddd", linewidth=0.6)
        ax.legend(fontsize="x-small", frameon=False)
    for ax in axes[len(panels):]:
        ax.set_visible(False)
    suffix = f", {frequency_text(freqs[0])}" if len(freqs) == 1 and freqs[0] is not None else ""
    fig.suptitle(f"{title}{suffix} (RMS magnitudes)")
    fig.tight_layout()
    fig.savefig(os.fspath(path), dpi=dpi)
    return path


def _along(header, data, dist_col, unit):
    """The column to plot against: the coordinate that varies along a line parallel to an
    axis (z for an axial line, r for a radial one), else the distance from its start."""
    coords = [k for k, n in enumerate(header[:dist_col]) if n.endswith(f"_{unit}")]
    varying = [k for k in coords if np.ptp(data[:, k]) > 1e-9 * max(np.ptp(data[:, dist_col]),
                                                                    1e-300)]
    if len(varying) == 1:
        name = header[varying[0]][: -len(unit) - 1]
        return varying[0], f"{name} [{unit}]"
    return dist_col, f"distance along the line [{unit}]"


def _prefix(values):
    """Scale and SI prefix for values of this size: (1e-6, "µ") for microhenries."""
    finite = np.abs(values[np.isfinite(values)])
    top = float(finite.max()) if finite.size else 0.0
    if top == 0:
        return 1.0, ""
    exp = min(9, max(-12, 3 * math.floor(math.log10(top) / 3)))
    return 10.0 ** exp, {-12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}[exp]


def plot_frequency_curves(records, path, title: str = "Frequency response", dpi=120):
    """Total loss, and each source's resistance and inductance, against frequency.

    Parameters
    ----------
    records : list of dict
        ``solutions`` entries of results.json (any order). Loss in W,
        resistance in ohm and inductance in H, drawn with SI prefixes.
    path : str or path-like
        The PNG file to write.
    title : str
        Figure title (the frequency span is added).

    Returns
    -------
    path-like
        ``path``.

    Notes
    -----
    The frequency axis is logarithmic unless a frequency is 0 (a static study).
    """
    from matplotlib.figure import Figure

    records = sorted(records, key=lambda r: r["frequency_hz"])
    f = np.array([r["frequency_hz"] for r in records], dtype=float)
    sources = list(dict.fromkeys(name for r in records for name in r["sources"]))
    fig = Figure(figsize=(7.5, 8.5))
    axes = fig.subplots(3, 1, sharex=True)
    axes[0].plot(f, [r["totals"]["loss_w"] for r in records], "o-", color=LINE_COLOUR)
    axes[0].set_ylabel("total loss [W]")
    for ax, key, quantity, unit in ((axes[1], "resistance_ohm", "resistance", "Ω"),
                                    (axes[2], "inductance_h", "inductance", "H")):
        y = np.array([[r["sources"][name][key] if name in r["sources"] else np.nan
                       for r in records] for name in sources], dtype=float).reshape(-1, f.size)
        scale, prefix = _prefix(y)
        for k, name in enumerate(sources):
            ax.plot(f, y[k] / scale, "o-", color=PALETTE[k % len(PALETTE)], label=name)
        ax.set_ylabel(f"{quantity} [{prefix}{unit}]")
    for ax in axes:
        if f.size and f.min() > 0:
            ax.set_xscale("log")
        ax.grid(True, which="both", color="#dddddd", linewidth=0.6)
    if sources:
        axes[1].legend(fontsize="small", frameon=False)
    axes[2].set_xlabel("frequency [Hz]")
    span = f"{frequency_text(f.min())} to {frequency_text(f.max())}" if f.size else "no data"
    fig.suptitle(f"{title}, {span}")
    fig.tight_layout()
    fig.savefig(os.fspath(path), dpi=dpi)
    return path
