"""Parametric sweeps: points in worker processes or on a Dask cluster, a resumable
SQLite store, shared meshes, summary.csv, plots and an HTML report.

Modules: :mod:`.points` (expanding ``[sweep]``, grouping points that share a
mesh), :mod:`.store` (the SQLite store, the case fingerprint), :mod:`.task`
(the work of one task, in a worker), :mod:`.local` and :mod:`.cluster` (the
runners), :mod:`.engine` (dispatch and recording), :mod:`.driver` (a whole
sweep run), :mod:`.meshcache`, :mod:`.lock`, :mod:`.summary`, :mod:`.morning`
(plots and report), :mod:`.status`.
"""

from whorl.cases.sweep.driver import SweepConflict, SweepOutcome, run_sweep, sweep_folder
from whorl.cases.sweep.points import DEFAULT_MAX_POINTS, expand, group_points
from whorl.cases.sweep.status import sweep_status
from whorl.cases.sweep.store import SweepStore, case_fingerprint
from whorl.cases.sweep.summary import main_numbers, write_summary

__all__ = ["DEFAULT_MAX_POINTS", "SweepConflict", "SweepOutcome", "SweepStore",
           "case_fingerprint", "expand", "group_points", "main_numbers", "run_sweep",
           "sweep_folder", "sweep_status", "write_summary"]
