"""Frequency-response outputs (postprocess/frequency_response.py) through a whole run:
the table, the figure, the summary and report, and the resonance with a tank capacitor.

Reference for the resonance of an air-cored coil (L and R independent of frequency) with
a capacitor C: in series omega^2 = 1 / (L C) (Thomson's formula); in parallel, the
frequency of unity power factor of the tank, omega^2 = 1 / (L C) - R^2 / L^2 (both common
practice for tank circuits)."""

import csv
import json
import math
from pathlib import Path

import pytest

from whorl.cases.loader import parse_case
from whorl.cases.run import run_case
from whorl.postprocess.frequency_response import plot_frequency_response, resonance
from whorl.postprocess.summary import summary_text

ROOT = Path(__file__).resolve().parents[2]
COIL = (ROOT / "cases" / "verification" / "coil-inductance-open.toml").read_text()


def coil_case(connection, count=20):
    text = COIL.replace('current = "1 A"', 'current = "1 A"\nresistance = "2 ohm"')
    text = text.replace('kind = "static"', f'''kind = "harmonic"
frequency = {{ from = "1 kHz", to = "100 kHz", count = {count}, scale = "log" }}
tank_capacitance = "1 uF"
tank_connection = "{connection}"''')
    text = text.replace("[mesh]\nmax_size = 6", "[mesh]\nmax_size = 8")
    return parse_case(text)


@pytest.mark.parametrize("connection", ["series", "parallel"])
def test_resonance_of_an_air_cored_coil(tmp_path, connection):
    """Within 0.2 % of the tank formulas (the interpolation between 20 log-spaced
    frequencies is exact for series, where C_s ~ f^-2, and near so for parallel)."""
    case = coil_case(connection)
    outcome = run_case(case, tmp_path)
    results = outcome.results
    sol = results["solutions"][0]["sources"]["winding"]
    ind, r, c = sol["inductance_h"], sol["resistance_ohm"], 1e-6
    assert r == pytest.approx(2.0, rel=1e-9)
    w2 = 1 / (ind * c) - (r / ind) ** 2 if connection == "parallel" else 1 / (ind * c)
    expected = math.sqrt(w2) / (2 * math.pi)
    found = results["resonance"]["winding"]["frequency_hz"]
    assert found == pytest.approx(expected, rel=2e-3)
    folder = outcome.folder
    picture = plot_frequency_response(results["solutions"], tmp_path / "response.png",
                                      sweep=results["frequency_sweep"], tank=(c, connection))
    assert picture.stat().st_size > 10_000
    with open(folder / "frequency_response.csv", newline="") as fh:
        rows = list(csv.reader(fh))
    header = rows[0]
    assert {"frequency_hz", "winding_resistance_ohm", "winding_inductance_h",
            "winding_power_factor", "winding_tuning_capacitance_series_f",
            "heating_efficiency", "estimated_error", "full_solve"} <= set(header)
    assert len(rows) == 21
    freqs = [float(row[0]) for row in rows[1:]]
    assert freqs == sorted(freqs)
    stored = json.loads((folder / "results.json").read_text())
    assert stored["frequency_sweep"]["frequencies_hz"] == pytest.approx(freqs)
    text = summary_text(results)
    assert "resonance with the" in text and "reduced frequency sweep" in text
    assert "details at 3 of 20 frequencies" in text
    report = (folder / "report.html").read_text()
    assert "Resonance with the tank capacitor" in report and "Frequency response" in report


def test_resonance_outside_the_range_says_so():
    records = [{"frequency_hz": f, "sources": {"s": {"tuning_capacitance_series_f": 1 / f**2}}}
               for f in (1e3, 2e3, 4e3)]
    res = resonance(records, 1.0, "series")["s"]
    assert res["frequency_hz"] is None and "outside" in res["note"]
    res = resonance(records, 1 / 2e3**2, "series")["s"]
    assert res["frequency_hz"] == pytest.approx(2e3)
