"""The tetrahedral mesher run in a child process, so that Ctrl-C and a time limit stop it.

gmsh's ``generate`` is one long C++ call: Python sees a SIGINT only when it returns, which for
some designs was never (issue 15 item 4: a thin, steeply graded section kept gmsh's tet
optimisation busy for minutes). So ``mesh_tet_isolated`` runs ``tet.mesh_tet`` in a child
forked from a preloaded server (multiprocessing "forkserver": no gmsh or OpenMP state is
inherited, and after the first build a child starts in milliseconds) and waits on a pipe:

* stage names ("geometry", "meshing") come back as they happen and go to ``progress``;
* the mesh comes back pickled; an exception comes back and is raised here, type and message
  intact (the child's traceback is attached as a note);
* Ctrl-C (``KeyboardInterrupt`` here) or the time limit kill the child at once (SIGKILL; the
  child also dies with its parent, Linux ``PR_SET_PDEATHSIG``), so a build stops within the
  polling interval, ``POLL_S``;
* the time limit is ``time_limit_s(estimate)`` = ``BASE_S`` + estimate / ``FLOOR_RATE``
  (FLOOR_RATE tetrahedra a second is 4-30x below the slowest whole-path rates measured here,
  bench/RESULTS.md), and ends the build with one ``MeshingError`` line.

Inside a daemonic process (a dask worker of ``chanmesh sweep``), which may not have children,
the mesher runs in-process as before; the sweep's own cancellation applies there.
"""

from __future__ import annotations

import multiprocessing as mp
import signal
import time
import traceback
from typing import Any, Callable

from chanmesh.design.model import Design
from chanmesh.errors import MeshingError
from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.tet import estimate_tet_cells  # noqa: F401  (the registry's estimate)

Progress = Callable[[str], None]

BASE_S = 120.0
"""Seconds every tetrahedral build may take on top of the per-cell allowance (solid, labels)."""

FLOOR_RATE = 1000.0
"""Tetrahedra a second below which a build is taken to be stuck."""

POLL_S = 0.2
"""How often the parent checks the child, the clock and for Ctrl-C, seconds."""

_PRELOAD = ["chanmesh.meshing.tet"]


def time_limit_s(estimate: int) -> float:
    """Seconds a tetrahedral build of ``estimate`` cells may take before it is stopped."""
    return BASE_S + max(0, int(estimate)) / FLOOR_RATE


def _die_with_parent() -> None:
    """Ask Linux to SIGKILL this process when its parent dies (best effort elsewhere)."""
    try:
        import ctypes

        ctypes.CDLL("libc.so.6", use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG
    except (OSError, AttributeError):
        pass


def _portable(exc: BaseException) -> BaseException:
    """``exc`` if it survives a pickle round trip, else a RuntimeError with its text."""
    import pickle

    try:
        pickle.loads(pickle.dumps(exc))
        return exc
    except Exception:
        return RuntimeError(f"{type(exc).__name__}: {exc}")


def _child(design: Design, scale: float, conn: Any) -> None:
    _die_with_parent()
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    from chanmesh.meshing.tet import mesh_tet

    try:
        mesh = mesh_tet(design, scale=scale, progress=lambda stage: conn.send(("stage", stage)))
        conn.send(("mesh", mesh))
    except BaseException as exc:  # noqa: BLE001 - every failure goes back to the parent
        conn.send(("error", _portable(exc), traceback.format_exc()))
    finally:
        conn.close()


def can_use_child() -> bool:
    """False inside a daemonic process (multiprocessing forbids it children)."""
    return not mp.current_process().daemon


def mesh_tet_isolated(design: Design, scale: float = 1.0, progress: Progress | None = None) -> ChannelMesh:
    """``tet.mesh_tet`` in a child process, stoppable by Ctrl-C and by ``time_limit_s``."""
    from chanmesh.meshing.tet import mesh_tet

    if not can_use_child():
        return mesh_tet(design, scale=scale, progress=progress)
    say = progress or (lambda _stage: None)
    estimate = estimate_tet_cells(design, scale)
    limit = time_limit_s(estimate)
    ctx = mp.get_context("forkserver")
    ctx.set_forkserver_preload(_PRELOAD)
    receive, send = ctx.Pipe(duplex=False)
    child = ctx.Process(target=_child, args=(design, scale, send), daemon=True, name="chanmesh-tet")
    start = time.monotonic()
    child.start()
    send.close()
    try:
        while True:
            if receive.poll(POLL_S):
                try:
                    message = receive.recv()
                except EOFError:
                    message = ("died",)
                if message[0] == "stage":
                    say(message[1])
                    continue
                if message[0] == "mesh":
                    return message[1]
                if message[0] == "error":
                    exc = message[1]
                    if not isinstance(exc, MeshingError) and hasattr(exc, "add_note"):
                        exc.add_note("in the meshing process:\n" + message[2])
                    raise exc
            elif not child.is_alive():
                message = ("died",)
            else:
                message = None
            if message is not None:  # the child ended without a mesh or an error
                child.join(1.0)
                raise MeshingError(
                    f"the tetrahedral mesher (gmsh) stopped unexpectedly (exit code {child.exitcode}); "
                    "try a coarser mesh or cells = \"hex\""
                )
            if time.monotonic() - start > limit:
                raise MeshingError(
                    f"the tetrahedral mesher (gmsh) did not finish within {limit:.0f} s (estimate {estimate:,} cells); "
                    "this design is too hard for it: coarsen the grading (larger first_cell or smaller wall_ratio, "
                    "fewer cells_across) or use cells = \"hex\""
                )
    finally:
        if child.is_alive():
            child.kill()
        child.join(5.0)
        receive.close()
