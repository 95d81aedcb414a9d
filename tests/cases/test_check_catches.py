"""`whorl check` catches what `whorl run` would refuse, and names the culprit: a voltage
on a stranded winding without resistance at 0 Hz (V = R I has no solution with R = 0),
a wrong unit given through --set, a source's region drawn over another conductor."""

import json
from pathlib import Path

from whorl.cases.cli import main

CASE = Path(__file__).resolve().parents[2] / "cases" / "verification" / "cylinder-in-coil.toml"


def variant(tmp_path, *edits):
    text = CASE.read_text()
    for old, new in edits:
        assert old in text
        text = text.replace(old, new)
    path = tmp_path / "variant.toml"
    path.write_text(text)
    return path


DC_VOLTAGE = (('current = "5 A"', 'voltage = "5 V"'), ('frequency = "freq"', "frequency = 0"),
              ('material = "copper"', 'material = "air"'))


def test_voltage_on_a_winding_without_resistance_at_dc(tmp_path, capsys):
    path = variant(tmp_path, *DC_VOLTAGE)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "source.coil.voltage" in err and "resistance" in err
    # run refuses it the same way, before meshing, and writes nothing
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "-q"]) == 2
    assert not (tmp_path / "out").exists() or not any((tmp_path / "out").iterdir())
    # with a copper winding (resistance from its material) or a resistance it is fine
    ok = variant(tmp_path, *DC_VOLTAGE[:2])
    assert main(["check", str(ok)]) == 0
    ok = variant(tmp_path, *DC_VOLTAGE, ('turns = 10', 'turns = 10\nresistance = "1 ohm"'))
    assert main(["check", str(ok)]) == 0


def test_wrong_unit_through_set_names_the_option(capsys):
    assert main(["check", str(CASE), "--set", "radius=3 kHz"]) == 2
    err = capsys.readouterr().err
    assert "--set radius" in err and "region[" not in err
    # a bare number takes the file's unit; a right unit passes
    assert main(["check", str(CASE), "--set", "radius=15"]) == 0
    assert main(["check", str(CASE), "--set", "radius=1.5 cm"]) == 0


def test_coil_drawn_into_the_workpiece_warns_naming_both(tmp_path, capsys):
    path = variant(tmp_path, ('corner = ["radius + 4 mm", 0]', 'corner = ["radius - 1 mm", 0]'))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    warning = next(line for line in out.splitlines() if line.startswith("WARNING"))
    assert "'coil'" in warning and "'billet'" in warning
    assert main(["check", str(CASE)]) == 0
    assert "WARNING" not in capsys.readouterr().out
    # run says it too, in results.json
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "-q"]) == 0
    results = json.loads((tmp_path / "out" / "cylinder-in-coil" / "results.json").read_text())
    assert any("'coil'" in w and "'billet'" in w for w in results["warnings"])
