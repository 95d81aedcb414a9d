"""The HTML report: parsed back, its tables hold the results, its pictures decode, it
stands alone (no external resources, no scripts) and carries the cautions."""

import base64
import re
import shutil
import subprocess
from functools import cache
from html.parser import HTMLParser

import matplotlib.image
import pytest
from test_vtu import planar_p2

from whorl.postprocess.plots import plot_field, plot_frequency_curves
from whorl.postprocess.records import solution_record
from whorl.postprocess.report import CAUTIONS, format_si, write_report
from whorl.postprocess.tables import line_rows
from whorl.solver import solve_harmonic

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
TITLE = 'Bus bars <over> a "plate" & more'
CHROMIUM = "/usr/bin/chromium"
_PREFIX = {"p": 1e-12, "n": 1e-9, "µ": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}


class Page(HTMLParser):
    """Tables (caption, rows of (text, data-value) cells), images, links, scripts, text."""

    def __init__(self):
        super().__init__()
        self.tables, self.srcs, self.hrefs, self.tags, self.text = [], [], [], [], []
        self._cell = None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        self.tags.append(tag)
        if "src" in attrs:
            self.srcs.append(attrs["src"])
        if "href" in attrs:
            self.hrefs.append(attrs["href"])
        if tag == "table":
            self.tables.append({"caption": "", "rows": []})
        elif tag == "tr":
            self.tables[-1]["rows"].append([])
        elif tag in ("td", "th"):
            self._cell = ["", attrs.get("data-value")]
        elif tag == "caption":
            self._cell = ["", None]

    def handle_endtag(self, tag):
        if tag in ("td", "th"):
            self.tables[-1]["rows"][-1].append(tuple(self._cell))
            self._cell = None
        elif tag == "caption":
            self.tables[-1]["caption"] = self._cell[0]
            self._cell = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell[0] += data

    def table(self, caption, index=0):
        found = [t for t in self.tables if t["caption"] == caption]
        return found[index]["rows"]


def shown_value(text):
    """``"1.235 kW"`` -> 1235.0 (the number and its SI prefix)."""
    m = re.fullmatch(r"(-?[\d.]+(?:e[-+]?\d+)?) ?(\S*?)(W|A|J|N|V|Ω|H|var|T|A/m²|W/m³)?", text)
    assert m, text
    prefix = m.group(2) if m.group(3) else ""
    return float(m.group(1)) * _PREFIX[prefix]


@cache
def results():
    """A results.json record of the planar model at two frequencies, with a point and a loop."""
    sol = planar_p2()
    sols = [sol, *solve_harmonic(sol.problem, [1600.0])[0]]
    records = [solution_record(s, {"above": (0.0, 0.03)}) for s in sols]
    records[0]["loops"] = {"pickup & sense": {"turns": 2.0, "flux_wb": [1e-6, -2e-7],
                                              "flux_from_b_wb": [1e-6, -2e-7],
                                              "flux_linkage_wb": [2e-6, -4e-7],
                                              "emf_v": [-7.5e-4, -2.5e-3],
                                              "emf_from_e_v": [-7.5e-4, -2.5e-3]}}
    mesh = sol.problem.mesh.mesh
    return {
        "format": 1, "whorl_version": "0.1.0",
        "case": {"name": "bus-bars", "title": TITLE, "geometry": "planar", "depth_m": 2.0,
                 "length_unit": "mm", "study": "harmonic"},
        "parameters": {"freq": 400.0, "gap": 0.02, "label": "<b>bold</b>"},
        "mesh": {"nodes": int(mesh.p.shape[1]), "elements": int(mesh.t.shape[1]),
                 "dofs": int(sol.system.size), "order": 2, "quality_min": 0.71},
        "timing_s": {"mesh": 0.0, "assemble": 0.01, "solve": 0.2, "postprocess": 0.05,
                     "total": 0.26},
        "solver": {"backend": "scipy-superlu", "unknowns": int(sol.system.size)},
        "solutions": records,
        "caution": "Estimates only.",
    }, sols


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    res, sols = results()
    images = {"flux density, 400 Hz": plot_field("flux-density", sols[0], folder / "b.png",
                                                 dpi=50),
              "frequency response": plot_frequency_curves(res["solutions"], folder / "f.png",
                                                          dpi=50)}
    header, rows = line_rows(sols[0], (-0.08, 0.005), (0.08, 0.005), 11, 1e-3, "mm")
    path = write_report(res, images, folder / "report.html", tables={"line across": (header,
                                                                                      rows)})
    page = Page()
    page.feed(path.read_text(encoding="utf-8"))
    return res, images, path, page


def test_regions_table_holds_the_region_results(report):
    res, _, _, page = report
    for k, sol in enumerate(res["solutions"]):
        rows = page.table("Regions", k)
        header = [c[0] for c in rows[0]]
        assert header[:4] == ["region", "current (RMS)", "phase", "loss"]
        by_name = {row[0][0]: row for row in rows[1:]}
        # the air around the bars has nothing in it: no row
        assert set(by_name) == set(sol["regions"]) - {"domain"}
        largest = max(r["current_rms_a"] for r in sol["regions"].values())
        for name, r in sol["regions"].items():
            if name == "domain":
                continue
            row = by_name[name]
            for col, key, noise in ((1, "current_rms_a", 1e-9 * largest), (3, "loss_w", 0),
                                    (4, "magnetic_energy_j", 0)):
                text, value = row[col]
                assert float(value) == r[key]  # the exact value travels with the cell
                assert shown_value(text) == pytest.approx(r[key], rel=6e-4, abs=noise)
            assert float(row[5][1]) == r["force_n"][0]


def test_sources_loops_points_and_totals(report):
    res, _, _, page = report
    sol = res["solutions"][0]
    rows = page.table("Sources (terminal values)")
    (row,) = rows[1:]
    s = sol["sources"]["bus"]
    assert row[0][0] == "bus"
    assert float(row[5][1]) == pytest.approx(abs(complex(*s["impedance_ohm"])), rel=1e-12)
    assert float(row[6][1]) == s["resistance_ohm"]
    assert float(row[7][1]) == s["inductance_h"]
    assert float(row[8][1]) == s["power_w"]
    assert float(row[9][1]) == s["reactive_power_var"]
    assert row[10][0].startswith("0.") or row[10][0].startswith("1.")
    loops = page.table("Loops")
    assert loops[1][0][0] == "pickup & sense"
    assert float(loops[1][1][1]) == pytest.approx(abs(complex(1e-6, -2e-7)), rel=1e-12)
    assert float(loops[1][4][1]) == pytest.approx(abs(complex(2e-6, -4e-7)), rel=1e-12)
    assert float(loops[1][5][1]) == pytest.approx(abs(complex(-7.5e-4, -2.5e-3)), rel=1e-12)
    assert "-d(flux linkage)/dt" in "".join(page.text)
    points = page.table("Points")
    assert points[1][0][0] == "above"
    b = [complex(*c) for c in sol["points"]["above"]["flux_density_t"]]
    assert float(points[1][1][1]) == pytest.approx((abs(b[0]) ** 2 + abs(b[1]) ** 2) ** 0.5)
    totals = page.table("Totals", 1)
    assert float(totals[1][0][1]) == res["solutions"][1]["totals"]["loss_w"]
    with pytest.raises(IndexError):
        page.table("Loops", 1)  # the second frequency has no loops: no table


def test_case_parameters_mesh_and_solver(report):
    res, _, _, page = report
    assert page.table("Parameters (SI)")[1:] == [
        [("freq", None), ("400", "400.0")], [("gap", None), ("0.02", "0.02")],
        [("label", None), ("<b>bold</b>", None)]]
    mesh = {row[0][0]: row[1][0] for row in page.table("Mesh and solver")[1:]}
    assert mesh["elements"] == str(res["mesh"]["elements"])
    assert mesh["unknowns"] == str(res["mesh"]["dofs"])
    assert mesh["element order"].startswith("P2")
    assert mesh["linear solver"] == "scipy-superlu"
    timing = {row[0][0]: float(row[1][1]) for row in page.table("Timing")[1:]}
    assert timing == res["timing_s"]
    assert len(page.table("line across")) == 12


def test_text_is_escaped(report):
    _, _, path, page = report
    html = path.read_text(encoding="utf-8")
    assert TITLE in "".join(page.text)
    assert "<over>" not in html and "&lt;over&gt;" in html
    assert "b" not in page.tags  # the <b> of a parameter value stays text


def test_pictures_are_embedded_and_decode(report):
    _, images, _, page = report
    assert len(page.srcs) == len(images)
    for src, path in zip(page.srcs, images.values(), strict=True):
        assert src.startswith("data:image/png;base64,")
        data = base64.b64decode(src.split(",", 1)[1], validate=True)
        assert data[:8] == PNG_SIGNATURE
        assert data == path.read_bytes()
    text = "".join(page.text)
    for caption in images:
        assert caption in text


def test_stands_alone(report):
    _, _, path, page = report
    html = path.read_text(encoding="utf-8")
    assert not any("http" in v for v in page.srcs + page.hrefs)
    assert all(v.startswith("data:image/") for v in page.srcs) and not page.hrefs
    assert "script" not in page.tags and "link" not in page.tags and "iframe" not in page.tags
    assert "@import" not in html and "url(" not in html


def test_caution_is_prominent(report):
    _, _, path, page = report
    text = " ".join("".join(page.text).split())
    for c in CAUTIONS:
        assert c in text
    lower = text.lower()
    for words in ("confirm them by measurement", "high voltage and high current", "hot",
                  "exposure limits", "local codes", "licensed practice"):
        assert words in lower
    html = path.read_text(encoding="utf-8")
    assert html.index('class="caution"') < html.index("<caption>Regions</caption>")
    # one caution, not two: the results' one-paragraph caution repeats the list
    assert html.count("<h2>Caution</h2>") == 1 and "Estimates only." not in text


def test_format_si():
    assert format_si(1234.5, "W") in ("1.234 kW", "1.235 kW")  # round half to even or up
    assert format_si(0.0, "A") == "0 A"
    assert format_si(2.5e-7, "H") == "250 nH"
    assert format_si(None, "V") == "-"
    assert shown_value(format_si(-3.2e-4, "W")) == pytest.approx(-3.2e-4)


@pytest.mark.skipif(not shutil.which(CHROMIUM), reason="no chromium at /usr/bin/chromium")
def test_renders_in_a_headless_browser(report, tmp_path):
    _, _, path, _ = report
    shot = tmp_path / "shot.png"
    subprocess.run([CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
                    f"--screenshot={shot}", "--window-size=1200,1600", path.as_uri()],
                   check=True, timeout=60, capture_output=True)
    image = matplotlib.image.imread(shot)
    assert image.shape[0] >= 800 and image[..., :3].var() > 1e-4
