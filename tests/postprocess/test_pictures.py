"""Pictures that read right: logarithmic colours for skin-deep fields, lines against the
coordinate along them, pictures of a frequency list named by frequency, distinct region
colours, the open boundary's exterior disk never framed."""

from pathlib import Path

import numpy as np
from matplotlib.colors import LogNorm, Normalize

from whorl.cases.cli import main
from whorl.postprocess.meshplot import region_colours
from whorl.postprocess.plots import _along, _scale

ROOT = Path(__file__).resolve().parents[2]


def test_colour_scale_goes_logarithmic_over_three_decades():
    # |J| in a part 20 skin depths thick falls by e^-20: linear colours show one stripe
    depth = np.linspace(0, 20, 200)
    norm, shown, label = _scale(np.exp(-depth))
    assert isinstance(norm, LogNorm) and "log" in label
    assert shown.min() >= norm.vmin
    norm, _, label = _scale(np.linspace(0.5, 1.0, 10))
    assert type(norm) is Normalize and label == ""


def test_lines_are_drawn_against_the_coordinate_along_them():
    header = ["frequency_hz", "r_mm", "z_mm", "distance_mm", "b_rms_t"]
    axial = np.array([[50.0, 12.0, z, z + 5.0, 1.0] for z in np.linspace(-5, 5, 11)])
    k, label = _along(header, axial, 3, "mm")
    assert header[k] == "z_mm" and label == "z [mm]"
    slanted = np.array([[50.0, t, t, t * 2**0.5, 1.0] for t in np.linspace(0, 1, 11)])
    k, label = _along(header, slanted, 3, "mm")
    assert header[k] == "distance_mm" and "distance" in label


def test_region_colours_are_distinct():
    for n in (3, 12, 13, 40):
        colours = [str(c) for c in region_colours(n)]
        assert len(set(colours)) == n


def test_frequency_list_pictures_are_named_by_frequency(tmp_path):
    text = (ROOT / "cases" / "verification" / "cylinder-in-coil.toml").read_text()
    text = text.replace('frequency = "freq"', 'frequency = ["1 kHz", "3 kHz"]')
    text += "\n[output]\nplots = true\nfields = true\n"
    path = tmp_path / "list.toml"
    path.write_text(text)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "-q"]) == 0
    folder = tmp_path / "out" / "cylinder-in-coil"
    names = {p.name for p in folder.iterdir()}
    for kind in ("flux-lines", "flux-density", "current-density", "loss-density"):
        assert {f"{kind}_1kHz.png", f"{kind}_3kHz.png"} <= names
    assert {"fields_1kHz.vtu", "surface_billet_3kHz.csv"} <= names


def test_mesh_picture_leaves_out_the_exterior_disk(tmp_path, monkeypatch):
    from matplotlib.figure import Figure

    frames = []
    original = Figure.savefig

    def keep(fig, *args, **kwargs):
        frames.append((*fig.axes[0].get_xlim(), *fig.axes[0].get_ylim()))
        return original(fig, *args, **kwargs)

    monkeypatch.setattr(Figure, "savefig", keep)
    case = ROOT / "cases" / "verification" / "coil-inductance-open.toml"
    assert main(["mesh", str(case), "--out", str(tmp_path)]) == 0
    from whorl.cases.loader import load_case

    domain = load_case(case).geometry.domain
    reach = domain.radius if domain.shape == "circle" else max(domain.size)
    # the exterior disk sits 3 radii up the axis: the frame stays on the domain
    assert frames and max(abs(v) for v in frames[-1]) <= reach * (1 + 1e-9)
