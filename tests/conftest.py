"""Shared test set-up: the helpers in tests/ (analytic solutions, small meshes) import
as top-level modules."""

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
sys.path.insert(0, str(Path(__file__).resolve().parent / "solver"))
