"""Nothing a user has is destroyed: whorl replaces only folders it wrote itself, never a
sweep's folder, takes no path from a name, and keeps the case text it solved (issue 10,
items 1-4 and 13, and the output-place errors). Each input here failed before the fix."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest
from test_sweep_points import TINY, tiny_case

from whorl.cases.cli import main
from whorl.cases.errors import CaseError
from whorl.cases.loader import load_case, parse_case
from whorl.cases.output import MARKER, remove_stale_staging
from whorl.cases.run import run_case


def _plain(folder, text=TINY, name="tiny.toml"):
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def _fake_sweep(folder):
    """A finished sweep's folder as whorl leaves it (store, a point, summary)."""
    sweep = folder / "results" / "tiny-sweep" / "sweep"
    (sweep / "points" / "0001").mkdir(parents=True)
    for name in ("sweep.sqlite", "summary.csv", "points/0001/results.json"):
        (sweep / name).write_text("precious", encoding="utf-8")
    return sweep


def _contents(folder):
    return sorted((str(p.relative_to(folder)), p.read_bytes()) for p in folder.rglob("*")
                  if p.is_file())


@pytest.mark.parametrize("command", ["run", "mesh"])
def test_run_and_mesh_never_touch_a_sweeps_folder(tmp_path, capsys, command):
    path = tiny_case(tmp_path, 'gap = ["2 mm", "3 mm"]')
    sweep = _fake_sweep(tmp_path)
    before = _contents(sweep)
    assert main([command, str(path), "-q"]) == 2
    err = capsys.readouterr().err
    assert "output.folder" in err and "sweep" in err
    assert _contents(sweep) == before


def test_a_users_own_folder_is_never_replaced(tmp_path, capsys):
    own = tmp_path / "projects" / "report"
    own.mkdir(parents=True)
    (own / "thesis.txt").write_text("years of work", encoding="utf-8")
    work = tmp_path / "work"
    work.mkdir()
    text = TINY.replace('name = "tiny-sweep"', 'name = "report"').replace(
        'folder = "results"', 'folder = "../projects"')
    assert main(["run", str(_plain(work, text)), "-q"]) == 2
    err = capsys.readouterr().err
    assert "output.folder" in err and "case.name" in err and "not written by whorl" in err
    assert (own / "thesis.txt").read_text(encoding="utf-8") == "years of work"
    assert sorted(os.listdir(tmp_path / "projects")) == ["report"]  # nothing renamed aside


def test_a_folder_whorl_wrote_is_replaced(tmp_path, capsys):
    path = _plain(tmp_path)
    assert main(["run", str(path), "-q"]) == 0
    folder = tmp_path / "results" / "tiny-sweep"
    assert (folder / MARKER).is_file()
    (folder / "results.json").write_text("old", encoding="utf-8")
    assert main(["mesh", str(path), "-q"]) == 0  # mesh replaces the run's folder: whorl's own
    assert sorted(os.listdir(folder)) == [MARKER, "mesh-regions.png", "mesh.msh", "mesh.png"]
    capsys.readouterr()


@pytest.mark.parametrize("table, key", [("loop", "loop[2].name"), ("line", "line[1].name"),
                                        ("point", "point[1].name")])
@pytest.mark.parametrize("name", ["../../escape", "a/b", "..", "ok\n", "x" * 101, ""])
def test_names_that_become_file_names_are_checked(tmp_path, table, key, name):
    body = {"loop": 'at = [21, 0]', "line": 'from = [0, 0]\nto = [10, 0]',
            "point": 'at = [10, 0]'}[table]
    escaped = name.replace("\n", "\\n")
    text = TINY + f'\n[[{table}]]\nname = "{escaped}"\n{body}\n'
    with pytest.raises(CaseError) as info:
        parse_case(text)
    assert info.value.key == key


@pytest.mark.parametrize("old, new, key", [
    ('name = "tiny-sweep"', 'name = "tiny\\n"', "case.name"),
    ('name = "tiny-sweep"', f'name = "{"n" * 101}"', "case.name"),
    ('name = "billet"', 'name = "billet\\n"', "region[1].name"),
    ('name = "coil"\nkind', 'name = "coil\\n"\nkind', "source.coil\n.name"),
    ('folder = "results"', 'folder = "res\\u0000ults"', "output.folder"),
])
def test_names_are_matched_as_whole_strings(old, new, key):
    assert old in TINY
    with pytest.raises(CaseError) as info:
        parse_case(TINY.replace(old, new, 1))
    assert info.value.key == key


def test_results_hold_the_case_text_that_was_solved(tmp_path):
    path = _plain(tmp_path)
    case = load_case(path)
    path.write_text(TINY.replace('current = "100 A"', 'current = "999 A"'), encoding="utf-8")
    outcome = run_case(case, tmp_path / "out")
    assert (outcome.folder / "case.toml").read_text(encoding="utf-8") == TINY


def test_stale_staging_folders_of_dead_runs_are_removed(tmp_path):
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True, check=True)
    pid = int(dead.stdout)  # a process that has ended
    final = tmp_path / "results" / "tiny-sweep"
    stale = tmp_path / "results" / f".tiny-sweep.partial-{pid}-abc"
    live = tmp_path / "results" / f".tiny-sweep.partial-{os.getpid()}-abc"
    other = tmp_path / "results" / f".other.partial-{pid}-abc"
    for folder in (stale, live, other):
        (folder / "fields").mkdir(parents=True)
    assert remove_stale_staging(final) == [stale]
    assert not stale.exists() and live.exists() and other.exists()


def test_output_place_problems_are_exit_2_with_the_systems_reason(tmp_path, capsys):
    path = _plain(tmp_path)
    (tmp_path / "a-file").write_text("mine", encoding="utf-8")
    assert main(["run", str(path), "-q", "--out", str(tmp_path / "a-file")]) == 2
    err = capsys.readouterr().err
    assert "--out" in err and ("exists" in err.lower() or "not a directory" in err.lower())
    assert (tmp_path / "a-file").read_text(encoding="utf-8") == "mine"
    assert main(["run", str(path), "-q", "--out", str(tmp_path / ("x" * 300))]) == 2
    assert "too long" in capsys.readouterr().err.lower()
    assert main(["run", str(path), "-q", "--out", str(tmp_path / "nul\0byte")]) == 2
    assert "null" in capsys.readouterr().err.lower()
    # the case names an existing file as its results folder
    (tmp_path / "results").mkdir()
    (tmp_path / "results" / "tiny-sweep").write_text("mine", encoding="utf-8")
    assert main(["run", str(path), "-q"]) == 2
    assert "not a folder" in capsys.readouterr().err
    assert (tmp_path / "results" / "tiny-sweep").read_text(encoding="utf-8") == "mine"


@pytest.mark.skipif(os.name != "posix" or os.geteuid() == 0,
                    reason="needs a user that file permissions apply to")
def test_a_read_only_place_is_exit_2(tmp_path, capsys):
    path = _plain(tmp_path)
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    try:
        assert main(["run", str(path), "-q", "--out", str(locked / "sub")]) == 2
        assert "permission denied" in capsys.readouterr().err.lower()
    finally:
        locked.chmod(0o700)


def test_a_place_the_system_refuses_is_exit_2_even_for_root(tmp_path, capsys, monkeypatch):
    # file permissions do not apply to root: the refusal is simulated where it happens
    import tempfile

    def refused(*args, **kwargs):
        raise PermissionError(13, "Permission denied")

    path = _plain(tmp_path)
    monkeypatch.setattr(tempfile, "mkdtemp", refused)
    assert main(["run", str(path), "-q"]) == 2
    err = capsys.readouterr().err
    assert "output.folder" in err and "Permission denied" in err
