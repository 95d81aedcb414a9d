"""The architecture of DESIGN.md, checked on the source: meshes <- solver <- postprocess <-
cases. A lower layer never imports a higher one (at module level or inside a function);
only ``cases/`` starts processes or parses the command line; nothing evaluates text as
code (a case file can never run code)."""

import ast
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
LAYERS = ["meshes", "solver", "postprocess", "cases"]
#: Modules only ``cases/`` may use: processes, command lines.
CASES_ONLY = {"subprocess", "multiprocessing", "concurrent", "argparse", "dask", "distributed"}


def imports(path: Path):
    """Every module name imported by the file (absolute, as written), with its line."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name, node.lineno
        elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
            yield node.module, node.lineno


def sources(layer: str):
    return sorted((ROOT / layer).rglob("*.py"))


@pytest.mark.parametrize("layer", LAYERS[:-1])
def test_lower_layers_never_import_higher_ones(layer):
    higher = LAYERS[LAYERS.index(layer) + 1:]
    bad = [f"{path.relative_to(ROOT)}:{line} imports {name}"
           for path in sources(layer) for name, line in imports(path)
           if name.split(".")[0] == "whorl" and len(name.split(".")) > 1
           and name.split(".")[1] in higher]
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("layer", LAYERS[:-1])
def test_only_cases_start_processes_or_read_command_lines(layer):
    bad = [f"{path.relative_to(ROOT)}:{line} imports {name}"
           for path in sources(layer) for name, line in imports(path)
           if name.split(".")[0] in CASES_ONLY]
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("layer", LAYERS)
def test_no_text_is_evaluated_as_code(layer):
    bad = []
    for path in sources(layer):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
                    and node.func.id in ("eval", "exec", "compile", "__import__")):
                bad.append(f"{path.relative_to(ROOT)}:{node.lineno} calls {node.func.id}")
            if isinstance(node, ast.Import | ast.ImportFrom):
                names = ([a.name for a in node.names] if isinstance(node, ast.Import)
                         else [node.module or ""])
                bad += [f"{path.relative_to(ROOT)}:{node.lineno} imports {n}"
                        for n in names if n.split(".")[0] in ("pickle", "marshal")]
    assert not bad, "\n".join(bad)


def test_the_layers_are_where_the_package_maps_them():
    """The check reads the folders the package is built from (pyproject's package-dir)."""
    text = (ROOT / "pyproject.toml").read_text(encoding="utf-8")
    for layer in LAYERS:
        assert f'"whorl.{layer}" = "{layer}"' in text
        assert sources(layer)
