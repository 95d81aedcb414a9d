"""Meshing under a time limit: gmsh runs in a child process that is stopped if it takes
too long, so no geometry can hang whorl.

gmsh's meshing is one long call into compiled code that Python cannot
interrupt. On systems with ``fork`` the mesh is built in a forked child (it
inherits the loaded modules, so starting it costs milliseconds) and sent back
through a pipe; past the limit the child is killed and the run stops with a
:class:`~whorl.meshes.errors.MeshError` (exit 1) saying so. Where ``fork`` is
not available the mesh is built in this process, without a limit.
"""

from __future__ import annotations

import multiprocessing
import time

from whorl.meshes.build import build_mesh
from whorl.meshes.errors import MeshError

#: Default seconds meshing may take (``--mesh-time-limit``).
DEFAULT_MESH_TIME_LIMIT = 600.0


def _child(conn, geometry) -> None:
    try:
        tagged = build_mesh(geometry, progress=lambda message: conn.send(("say", message)))
        conn.send(("ok", tagged))
    except MeshError as exc:
        conn.send(("mesh-error", str(exc)))
    except BaseException as exc:  # reported to the parent, which raises it as a MeshError
        conn.send(("error", f"{type(exc).__name__}: {exc}"))
    finally:
        conn.close()


def mesh_with_limit(geometry, progress=None, time_limit: float | None = DEFAULT_MESH_TIME_LIMIT):
    """:func:`~whorl.meshes.build.build_mesh` stopped after ``time_limit`` seconds.

    Parameters
    ----------
    geometry : Geometry
    progress : callable, optional
        ``progress(message)`` for the mesher's stages.
    time_limit : float or None
        Seconds; None or <= 0 meshes in this process without a limit.

    Raises
    ------
    MeshError
        gmsh failed, or took longer than ``time_limit``.
    """
    if not time_limit or time_limit <= 0 or "fork" not in multiprocessing.get_all_start_methods():
        return build_mesh(geometry, progress=progress)
    ctx = multiprocessing.get_context("fork")
    parent, child = ctx.Pipe(duplex=False)
    process = ctx.Process(target=_child, args=(child, geometry), daemon=True,
                          name="whorl-mesher")
    process.start()
    child.close()
    deadline = time.monotonic() + time_limit
    try:
        while True:
            left = deadline - time.monotonic()
            if left <= 0:
                raise MeshError(f"meshing took longer than {time_limit:g} s and was stopped "
                                "(--mesh-time-limit); check the geometry and the sizes")
            if not parent.poll(min(left, 1.0)):
                if not process.is_alive() and not parent.poll(0):
                    raise MeshError(f"the meshing process ended without a mesh (exit code "
                                    f"{process.exitcode}; out of memory?)")
                continue
            try:
                kind, value = parent.recv()
            except EOFError:
                process.join(5)
                raise MeshError(f"the meshing process ended without a mesh (exit code "
                                f"{process.exitcode}; out of memory?)") from None
            if kind == "say":
                if progress is not None:
                    progress(value)
            elif kind == "ok":
                return value
            else:
                raise MeshError(value if kind == "mesh-error" else f"meshing failed: {value}")
    finally:
        parent.close()
        if process.is_alive():
            process.kill()
        process.join(5)
