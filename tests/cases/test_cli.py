"""The command line: mesh and run write what they say, and the README's commands are the
ones CI runs."""

import re
from pathlib import Path

from whorl.cases.cli import main
from whorl.meshes.msh import read_msh

ROOT = Path(__file__).resolve().parents[2]


def test_mesh_writes_a_binary_msh_with_named_groups(tmp_path, capsys):
    case = ROOT / "cases" / "examples" / "busbar-cover-plate.toml"
    assert main(["mesh", str(case), "--out", str(tmp_path), "-q"]) == 0
    out = capsys.readouterr().out
    folder = tmp_path / "busbar-cover-plate"
    assert (folder / "mesh.msh").read_bytes().startswith(b"$MeshFormat\n4.1 1")
    mesh = read_msh(folder / "mesh.msh")
    for name in ("bar.1", "bar.2", "bar.3", "cover", "domain", "outer"):
        assert name in mesh.field_data
    assert "quality" in out and (folder / "mesh.png").stat().st_size > 0


def test_help_of_every_subcommand(capsys):
    for command in ("run", "check", "mesh", "sweep", "materials"):
        assert main([command, "--help"]) == 0
        assert "usage" in capsys.readouterr().out


def test_readme_commands_are_what_ci_runs():
    readme = (ROOT / "README.md").read_text()
    commands = re.findall(r"```sh\n(.*?)\n```", readme, re.S)
    assert len(commands) >= 2
    run_demo, run_tests = commands[0], commands[1]
    demo = re.search(r"whorl run (\S+)", run_demo).group(1)
    assert (ROOT / demo).is_file()
    assert run_tests in (ROOT / ".ci" / "run").read_text()


def test_a_closed_pipe_ends_quietly():
    """`whorl materials | head -1`: the reader leaves early; no traceback, status 1."""
    import subprocess
    import sys

    proc = subprocess.Popen([sys.executable, "-m", "whorl.cases.cli", "materials"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    proc.stdout.close()  # the reader is gone before anything is written
    err = proc.stderr.read().decode()
    proc.stderr.close()
    assert proc.wait(timeout=60) == 1
    assert "Traceback" not in err and "BrokenPipeError" not in err, err
