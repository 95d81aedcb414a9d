"""`whorl verify`: the shipped verification cases beside their published references,
printed and written as HTML; run here on a subset (the suite runs every case more widely
in tests/verification/)."""

from pathlib import Path

from whorl.cases import verify as verify_module
from whorl.cases.cli import main
from whorl.cases.verify import FOLDER, Check, available


def test_every_shipped_case_has_checks():
    assert available() == sorted(p.stem for p in Path(FOLDER).glob("*.toml"))
    assert "solenoid-field" in available()


def test_subset_passes_and_writes_the_page(tmp_path, capsys):
    code = main(["verify", "--case", "solenoid-field", "--case", "two-wire-line",
                 "--out", str(tmp_path), "-q"])
    out = capsys.readouterr().out
    assert code == 0
    assert "3 of 3 checks pass" in out
    assert out.count(" pass") >= 3 and "FAIL" not in out
    page = (tmp_path / "verification.html").read_text()
    for words in ("mu0 N I / h", "Grover", "Ampere&#x27;s force law", "tolerance", "pass"):
        assert words in page


def test_a_failing_check_fails_the_command(tmp_path, capsys, monkeypatch):
    def wrong(case, results):
        return [Check(case.name, "axial flux density in the bore", "T", 1.0, 2.0, 0.01,
                      "a deliberately wrong reference")]

    monkeypatch.setitem(verify_module.CHECKS, "solenoid-field", wrong)
    assert main(["verify", "--case", "solenoid-field", "--out", str(tmp_path), "-q"]) == 1
    out = capsys.readouterr().out
    assert "FAIL" in out and "0 of 1 checks pass" in out
    assert 'class="fail"' in (tmp_path / "verification.html").read_text()


def test_unknown_case_is_bad_input(tmp_path, capsys):
    assert main(["verify", "--case", "nope", "--out", str(tmp_path)]) == 2
    assert "--case" in capsys.readouterr().err
