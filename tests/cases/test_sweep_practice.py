"""Sweeps as practitioners use them: each source's terminal numbers in summary.csv,
swept parameters in the case's own units beside SI, plots in those units, a sweep given
on the command line (--vary) and "finished" in --status."""

from __future__ import annotations

import csv
import math

import pytest
from test_sweep_points import TINY, tiny_case

from whorl.cases.cli import main
from whorl.cases.errors import CaseError
from whorl.cases.sweep.driver import load_sweep


@pytest.fixture(scope="module")
def varied(tmp_path_factory):
    """The tiny case, its [sweep] table replaced by two --vary options (2 x 2 grid)."""
    root = tmp_path_factory.mktemp("vary")
    path = tiny_case(root, 'freq = ["200 Hz"]')
    code = main(["sweep", str(path), "--workers", "1", "-q",
                 "--vary", "gap=2mm,4mm", "--vary", "freq=0.2kHz,0.5kHz"])
    return path, root / "results" / "tiny-sweep" / "sweep", code


def test_vary_gives_the_grid_and_the_summary_has_source_numbers(varied, capsys):
    path, folder, code = varied
    assert code == 0
    with open(folder / "summary.csv", newline="") as f:
        rows = list(csv.DictReader(f))
    assert len(rows) == 4
    header = list(rows[0])
    # the case's units beside SI, right after each swept parameter
    assert header[header.index("gap") + 1] == "gap_mm"
    assert header[header.index("freq") + 1] == "freq_Hz"
    assert sorted({float(r["gap_mm"]) for r in rows}) == pytest.approx([2.0, 4.0])
    assert sorted({float(r["gap"]) for r in rows}) == pytest.approx([0.002, 0.004])
    for r in rows:
        i = float(r["source.coil.current_rms_a"])
        v = float(r["source.coil.voltage_rms_v"])
        assert i == pytest.approx(100.0)
        # |V| = |Z| |I| and P = Re(Z) |I|^2: the terminal numbers agree with each other
        z = math.hypot(float(r["source.coil.impedance_re_ohm"]),
                       float(r["source.coil.impedance_im_ohm"]))
        assert v == pytest.approx(z * i, rel=1e-9)
        assert float(r["source.coil.power_w"]) == pytest.approx(
            float(r["source.coil.resistance_ohm"]) * i**2, rel=1e-9)
        assert 0 < float(r["source.coil.power_factor"]) < 1
        assert float(r["source.coil.tuning_capacitance_parallel_f"]) > 0
    # a plot of the source's current exists; the axes are in mm
    assert (folder / "plots" / "source.coil.current_rms_a.png").exists()
    # --status says finished
    assert main(["sweep", str(path), "--status", "--vary", "gap=2mm,4mm",
                 "--vary", "freq=0.2kHz,0.5kHz"]) == 0
    assert "finished: 4 done" in capsys.readouterr().out
    # without --vary the folder's sweep is the recorded one: status and a resume find
    # the same four points finished (not the case's own one-point table)
    assert main(["sweep", str(path), "--status"]) == 0
    assert "finished: 4 done" in capsys.readouterr().out
    assert main(["sweep", str(path), "--workers", "1"]) == 0
    with open(folder / "summary.csv", newline="") as f:
        assert len(list(csv.DictReader(f))) == 4
    # --restart without --vary starts the case's own [sweep] table (one point)
    assert main(["sweep", str(path), "--workers", "1", "--restart", "-q"]) == 0
    with open(folder / "summary.csv", newline="") as f:
        assert len(list(csv.DictReader(f))) == 1


def test_vary_checks_names_and_values(tmp_path):
    path = tiny_case(tmp_path, 'freq = ["200 Hz"]')
    with pytest.raises(CaseError) as err:
        load_sweep(path, vary={"thickness": ["2 mm"]})
    assert err.value.key == "--vary thickness"
    with pytest.raises(CaseError) as err:
        load_sweep(path, vary={"gap": ["2 mm", "3 kHz"]})
    assert err.value.key == "--vary gap"
    # --vary works on a case without a [sweep] table
    bare = tmp_path / "bare.toml"
    bare.write_text(TINY)
    case, specs = load_sweep(bare, vary={"gap": ["2 mm", "3 mm"]})
    assert specs == [{"gap": "2 mm"}, {"gap": "3 mm"}]


def test_bad_vary_option_is_exit_2(tmp_path, capsys):
    path = tiny_case(tmp_path, 'freq = ["200 Hz"]')
    assert main(["sweep", str(path), "--vary", "gap"]) == 2
    assert "--vary" in capsys.readouterr().err
