"""``[model] solver``: a linear solver backend by name, reported in results.json."""

import json

import pytest

from whorl.cases.cli import main
from whorl.cases.errors import CaseError
from whorl.cases.loader import parse_case
from whorl.solver import linalg

CASE = """\
format = 1

[case]
name = "solver-key"

[model]
geometry = "planar"
{solver}

[[region]]
name = "bar"
material = "copper"
shape = "rectangle"
corner = [-2, -2]
size = [4, 4]

[[source]]
name = "coil"
kind = "stranded"
regions = ["bar"]
current = "1 A"

[domain]
shape = "rectangle"
corner = [-20, -20]
size = [40, 40]

[mesh]
max_size = 4

[study]
kind = "harmonic"
frequency = "50 Hz"
"""


def test_default_is_auto():
    assert parse_case(CASE.format(solver="")).solver == "auto"


def test_named_backend_is_kept():
    case = parse_case(CASE.format(solver='solver = "scipy-superlu"'))
    assert case.solver == "scipy-superlu"


def test_unknown_backend_names_the_key_and_the_known_ones():
    with pytest.raises(CaseError) as err:
        parse_case(CASE.format(solver='solver = "fastest"'))
    assert err.value.key == "model.solver"
    for name in ("auto", *linalg.BACKENDS):
        assert name in err.value.message


def test_run_reports_the_backend_and_the_option_overrides(tmp_path):
    path = tmp_path / "case.toml"
    path.write_text(CASE.format(solver='solver = "auto"'), encoding="utf-8")
    assert main(["run", str(path), "--out", str(tmp_path), "-q",
                 "--solver", "scipy-superlu"]) == 0
    results = json.loads((tmp_path / "solver-key" / "results.json").read_text())
    assert results["solver"]["backend"] == "scipy-superlu"
    assert main(["run", str(path), "--out", str(tmp_path / "bad"), "-q",
                 "--solver", "nonesuch"]) == 2
