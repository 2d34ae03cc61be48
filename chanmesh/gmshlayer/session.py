"""A gmsh session as a context manager that always finalizes.

gmsh keeps global state (one model per process), installs a SIGINT handler unless told not to
(which fails outside the main thread), and prints to the terminal by default. This is the one
place that deals with all three.
"""

from __future__ import annotations

import contextlib
import threading
from collections.abc import Iterator

import gmsh

MODEL_UNIT = 1e-3
"""Metres per gmsh model unit. Solids are built in millimetres: OpenCASCADE tolerances are
absolute (about 1e-7 model units), which in metres would blur micrometre features."""

_lock = threading.Lock()


@contextlib.contextmanager
def gmsh_session(threads: int = 1, verbose: bool = False) -> Iterator[None]:
    """Initialise gmsh for one model, and finalize it however the block ends."""
    with _lock:
        if gmsh.isInitialized():
            gmsh.finalize()
        gmsh.initialize(readConfigFiles=False, interruptible=False)
        try:
            gmsh.option.setNumber("General.Terminal", 1 if verbose else 0)
            gmsh.option.setNumber("General.Verbosity", 5 if verbose else 1)
            gmsh.option.setNumber("General.NumThreads", max(1, threads))
            gmsh.model.add("chanmesh")
            yield
        finally:
            gmsh.finalize()
