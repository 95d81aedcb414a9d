"""The heating demos through the command line, with the checks an engineer makes first.

The shaft hardening demo runs shortened and at a lower frequency (a coarser mesh) to
keep the suite fast; the bus-bar cover plate runs as shipped.
"""

import csv
import json
from pathlib import Path

from whorl.cases.cli import main
from whorl.postprocess.vtu import read_vtu

EXAMPLES = Path(__file__).resolve().parents[2] / "cases" / "examples"


def run(name, tmp_path, capsys, *sets):
    args = ["run", str(EXAMPLES / f"{name}.toml"), "--out", str(tmp_path), "-q"]
    for s in sets:
        args += ["--set", s]
    assert main(args) == 0
    out = capsys.readouterr().out
    folder = tmp_path / name
    return json.loads((folder / "results.json").read_text()), folder, out


def test_shaft_end_hardening_short(tmp_path, capsys):
    res, folder, out = run("shaft-end-hardening", tmp_path, capsys, "freq=1 kHz",
                           "heat_time=0.8 s", "cycle=1.2 s")
    h = res["heating"]
    t = h["time_s"]
    assert 0.8 in t and t[-1] == 1.2                       # steps land on the switching time
    surface = h["points"]["surface"]["temperature_c"]
    k = t.index(0.8)
    assert surface[k] > 300 and surface[-1] < surface[k]    # heated, then quenched
    power = h["sources"]["inductor"]["power_w"]
    limit = h["sources"]["inductor"]["supply_limit"]
    on = [p for p, time in zip(power, t, strict=True) if 0 < time <= 0.8]
    assert all(p <= 40e3 * (1 + 1e-6) for p in on)           # the power asked, or less...
    if limit is None:
        assert min(on) > 40e3 * (1 - 1e-6)
    else:                                                   # ... when a cap binds
        assert limit["cap"] == "max_voltage" and limit["max_shortfall_w"] > 0
        assert max(h["sources"]["inductor"]["voltage_v"]) <= 60 * (1 + 1e-6)
    assert all(p == 0 for p, time in zip(power, t, strict=True) if time > 0.8)
    assert abs(h["energy"]["balance"]) < 0.01
    assert h["field_solutions"] > 2
    with open(folder / "line_radial.csv") as f:
        rows = list(csv.DictReader(f))
    assert {"temperature_c", "peak_temperature_c"} <= set(rows[0])
    assert float(rows[0]["peak_temperature_c"]) > float(rows[-1]["peak_temperature_c"])
    cells = read_vtu(folder / "fields.vtu").cell_data
    assert "temperature_C" in cells and "peak_temperature_C" in cells
    for name in ("temperature_end.png", "temperature_end_of_heating.png",
                 "temperature_peak.png", "heating_curves.png", "heating_sources.csv"):
        assert (folder / name).stat().st_size > 0
    report = (folder / "report.html").read_text()
    assert "transformation kinetics" in report and "quench" in report
    assert "hardened depth" in out and "Caution" in out


def test_busbar_cover_plate_reaches_steady_temperature(tmp_path, capsys):
    res, folder, out = run("busbar-cover-heating", tmp_path, capsys)
    h = res["heating"]
    t, mean = h["time_s"], h["regions"]["cover"]["mean_temperature_c"]
    hour = min(range(len(t)), key=lambda i: abs(t[i] - (t[-1] - 3600)))
    assert mean[-1] - mean[hour] < 0.5            # steady within the last hour
    assert 10 < mean[-1] - 30 < 40                # a rise of some tens of kelvin
    assert abs(h["energy"]["balance"]) < 0.01
    assert h["regions"]["cover"]["loss_w"][-1] > 0
