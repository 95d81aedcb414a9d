"""Meshing under a time limit: gmsh runs in a child process that is stopped if it takes
too long, so no geometry can hang whorl.

gmsh's meshing is one long call into compiled code that Python cannot
interrupt. On systems with ``fork`` the mesh is built in a forked child (``os.fork``: it
inherits the loaded modules, so starting it costs milliseconds, and works in
the sweep's worker processes too) and sent back through a pipe; past the
limit the child is killed and the run stops with a
:class:`~whorl.meshes.errors.MeshError` (exit 1) saying so. Where ``fork`` is
not available the mesh is built in this process, without a limit.
"""

from __future__ import annotations

import os
import signal
import time
from multiprocessing.connection import Pipe

from whorl.meshes.build import build_mesh
from whorl.meshes.errors import MeshError

#: Default seconds meshing may take (``--mesh-time-limit``).
DEFAULT_MESH_TIME_LIMIT = 600.0


def _die_with_parent() -> None:
    """On Linux, have the kernel stop this child when its parent dies (a killed run)."""
    try:
        import ctypes

        ctypes.CDLL("libc.so.6", use_errno=True).prctl(1, int(signal.SIGKILL))  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass


def _child(conn, geometry) -> None:
    """The forked child: build the mesh, send it (or the error) back, and leave at once."""
    code = 0
    try:
        _die_with_parent()
        tagged = build_mesh(geometry, progress=lambda message: conn.send(("say", message)))
        conn.send(("ok", tagged))
    except MeshError as exc:
        conn.send(("mesh-error", str(exc)))
    except BaseException as exc:  # reported to the parent, which raises it as a MeshError
        try:
            conn.send(("error", f"{type(exc).__name__}: {exc}"))
        except BaseException:
            code = 1
    finally:
        conn.close()
        os._exit(code)  # never run the parent's clean-up (atexit, test runners) in the child


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
    if not time_limit or time_limit <= 0 or not hasattr(os, "fork"):
        return build_mesh(geometry, progress=progress)
    parent, child = Pipe(duplex=False)
    pid = os.fork()
    if pid == 0:  # pragma: no cover - the child (coverage does not follow it)
        parent.close()
        _child(child, geometry)
    child.close()
    deadline = time.monotonic() + time_limit
    ended = False
    try:
        while True:
            left = deadline - time.monotonic()
            if left <= 0:
                raise MeshError(f"meshing took longer than {time_limit:g} s and was stopped "
                                "(--mesh-time-limit); check the geometry and the sizes")
            if not parent.poll(min(left, 1.0)):
                continue
            try:
                kind, value = parent.recv()
            except (EOFError, OSError):
                _, status = os.waitpid(pid, 0)
                ended = True
                raise MeshError(f"the meshing process ended without a mesh ("
                                f"{_how(status)}; out of memory?)") from None
            if kind == "say":
                if progress is not None:
                    progress(value)
            elif kind == "ok":
                return value
            else:
                raise MeshError(value if kind == "mesh-error" else f"meshing failed: {value}")
    finally:
        parent.close()
        if not ended:
            try:
                os.kill(pid, signal.SIGKILL)
            except ProcessLookupError:
                pass
            os.waitpid(pid, 0)


def _how(status: int) -> str:
    if os.WIFSIGNALED(status):
        return f"killed by signal {os.WTERMSIG(status)}"
    return f"exit code {os.WEXITSTATUS(status) if os.WIFEXITED(status) else status}"
