"""The tetrahedral mesher run in a child process, so that Ctrl-C and a time limit stop it.

gmsh's ``generate`` is one long C++ call: Python sees a SIGINT only when it returns, which for
some designs was never (issue 15 item 4: a thin, steeply graded section kept gmsh's tet
optimisation busy for minutes). So ``mesh_tet_isolated`` runs ``tet.mesh_tet`` in a child
forked from a preloaded server (multiprocessing "forkserver": no gmsh or OpenMP state is
inherited, and after the first build a child starts in milliseconds) and waits on a pipe. A
long channel is meshed in parts (``gmshlayer.partition``), one child each, all at once, and
joined here (``tet_merge``):

* stage names ("geometry", "meshing") come back as they happen and go to ``progress``;
* each part comes back pickled; an exception comes back and is raised here, type and message
  intact (the child's traceback is attached as a note);
* Ctrl-C (``KeyboardInterrupt`` here) or the time limit kill the children at once (SIGKILL; the
  child also dies with its parent, Linux ``PR_SET_PDEATHSIG``), so a build stops within the
  polling interval, ``POLL_S``;
* the time limit is ``time_limit_s(estimate)`` = ``BASE_S`` + estimate / ``FLOOR_RATE``
  (FLOOR_RATE tetrahedra a second is 4-30x below the slowest whole-path rates measured here,
  bench/RESULTS.md), and ends the build with one ``MeshingError`` line.

Inside a daemonic process (a dask worker of ``chanmesh sweep``), which may not have children,
and in a program read from standard input, whose children could not start, the mesher runs
in-process (the parts in turn); the sweep's own cancellation applies there.
"""

from __future__ import annotations

import multiprocessing as mp
import os
import signal
import sys
import time
import traceback
from collections.abc import Sequence
from multiprocessing.connection import wait
from typing import Any, Callable

from chanmesh.design.model import Design
from chanmesh.errors import MeshingError
from chanmesh.meshing.model import ChannelMesh
from chanmesh.meshing.tet import estimate_tet_cells  # noqa: F401  (the registry's estimate)
from chanmesh.meshing.tet_merge import TetPart

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


def _child(design: Design, scale: float, splits: list[float], part: int, parts: int, conn: Any) -> None:
    _die_with_parent()
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C is the parent's to handle
    from chanmesh.meshing.tet import mesh_tet_part

    say = (lambda stage: conn.send(("stage", stage))) if part == 0 else None
    try:
        conn.send(("part", mesh_tet_part(design, scale, splits, part, parts, progress=say)))
    except BaseException as exc:  # noqa: BLE001 - every failure goes back to the parent
        conn.send(("error", _portable(exc), traceback.format_exc()))
    finally:
        conn.close()


def can_use_child() -> bool:
    """False inside a daemonic process (multiprocessing forbids it children), and in a
    program read from standard input (``python - < script``): multiprocessing's children
    rerun the parent's main file by its path, and '<stdin>' is none (the child exits with
    FileNotFoundError)."""
    if mp.current_process().daemon:
        return False
    main = sys.modules.get("__main__")
    spec = getattr(main, "__spec__", None)
    path = getattr(main, "__file__", None)
    return getattr(spec, "name", None) is not None or path is None or os.path.exists(path)


def mesh_tet_isolated(design: Design, scale: float = 1.0, progress: Progress | None = None) -> ChannelMesh:
    """``tet.mesh_tet`` with its parts in child processes, side by side, stoppable by Ctrl-C
    and by ``time_limit_s``."""
    from chanmesh.meshing.tet import mesh_tet

    if not can_use_child():
        return mesh_tet(design, scale=scale, progress=progress)
    estimate = estimate_tet_cells(design, scale)
    deadline = time.monotonic() + time_limit_s(estimate)

    def run_parts(design: Design, scale: float, splits: Sequence[float], parts: int,
                  progress: Progress | None) -> list[TetPart]:
        return _run_children(design, scale, list(splits), parts, progress, deadline, estimate)

    return mesh_tet(design, scale=scale, progress=progress, run_parts=run_parts)


def _run_children(design: Design, scale: float, splits: list[float], parts: int, progress: Progress | None,
                  deadline: float, estimate: int) -> list[TetPart]:
    """Each part of the mesh in a child of its own, all at once; their ``TetPart``s in order."""
    say = progress or (lambda _stage: None)
    ctx = mp.get_context("forkserver")
    ctx.set_forkserver_preload(_PRELOAD)
    children, pipes = [], []
    try:
        for part in range(parts):
            receive, send = ctx.Pipe(duplex=False)
            child = ctx.Process(target=_child, args=(design, scale, splits, part, parts, send), daemon=True,
                                name=f"chanmesh-tet-{part + 1}")
            pipes.append(receive)
            children.append(child)
            child.start()
            send.close()
        done: dict[int, TetPart] = {}
        while len(done) < parts:
            waiting = [k for k in range(parts) if k not in done]
            ready = set(wait([pipes[k] for k in waiting], timeout=POLL_S))
            for k in waiting:
                message = _message(pipes[k], children[k], pipes[k] in ready)
                if message is None:
                    continue
                if message[0] == "stage":
                    say(message[1])
                elif message[0] == "part":
                    done[k] = message[1]
                elif message[0] == "error":
                    exc = message[1]
                    if not isinstance(exc, MeshingError) and hasattr(exc, "add_note"):
                        exc.add_note("in the meshing process:\n" + message[2])
                    raise exc
                else:  # the child ended without a mesh or an error
                    children[k].join(1.0)
                    raise MeshingError(
                        f"the tetrahedral mesher (gmsh) stopped unexpectedly (exit code {children[k].exitcode}); "
                        "try a coarser mesh or cells = \"hex\""
                    )
            if time.monotonic() > deadline:
                limit = time_limit_s(estimate)
                raise MeshingError(
                    f"the tetrahedral mesher (gmsh) did not finish within {limit:.0f} s (estimate {estimate:,} cells); "
                    "this design is too hard for it: coarsen the grading (larger first_cell or smaller wall_ratio, "
                    "fewer cells_across) or use cells = \"hex\""
                )
        return [done[k] for k in range(parts)]
    finally:
        for child in children:
            if child.is_alive():
                child.kill()
        for child in children:
            child.join(5.0)
        for receive in pipes:
            receive.close()


def _message(receive: Any, child: Any, ready: bool) -> tuple | None:
    """The child's next message if its pipe is ``ready``, ("died",) if it ended without one,
    else None."""
    if not ready:
        if child.is_alive():
            return None
        if not receive.poll(0):  # it may have sent its last message after the wait
            return ("died",)
    try:
        return receive.recv()
    except EOFError:
        return ("died",)
