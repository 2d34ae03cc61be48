"""The exceptions chanmesh raises for user mistakes.

Library code raises these; only the command line turns them into a one-line message and a
non-zero exit code. Anything else escaping is a bug in chanmesh and keeps its traceback.
"""

from __future__ import annotations

from typing import Any


class ChanmeshError(Exception):
    """Base class of every error caused by input rather than by a bug."""


class DesignError(ChanmeshError, ValueError):
    """A design value that is missing, of the wrong type, or outside its allowed range.

    The message always names the design-file key, the value found and what is allowed, e.g.
    ``path.radius = 80 um: must be greater than half the section width (100 um) ...``.
    """

    def __init__(self, key: str, value: Any, allowed: str) -> None:
        self.key = key
        self.value = value
        self.allowed = allowed
        shown = "(missing)" if value is _MISSING else f"= {_show(value)}"
        super().__init__(f"{key} {shown}: {allowed}")

    def __reduce__(self) -> tuple:  # pickles (e.g. from the tet meshing process) with its fields
        return (self.__class__, (self.key, self.value, self.allowed))


class StudyError(DesignError):
    """A convergence-study table (results CSV, family.json) that cannot be used as given.

    Same message shape as ``DesignError``: where (file, row, column), the value found, and what
    is allowed, e.g. ``RESULTS.csv row 3, column 'dp' = 'abc': must be a number``.
    """


class MeshFileError(ChanmeshError):
    """A mesh or result file that cannot be read or does not fit what was asked of it."""


class OutputError(ChanmeshError):
    """An output location that cannot be written (permissions, disk full, bad name)."""


class MeshingError(ChanmeshError):
    """The mesher could not finish this design (a time limit, or gmsh stopping); one line."""


class _Missing:
    def __repr__(self) -> str:
        return "(missing)"

    def __reduce__(self) -> str:
        return "_MISSING"  # unpickles as the module's one instance


_MISSING = _Missing()
MISSING: Any = _MISSING
"""Sentinel for ``DesignError(key, MISSING, ...)`` when a required key is absent."""


class Shown(str):
    """A value already formatted for the message (e.g. ``'50 um'``): printed without quotes."""


def _show(value: Any) -> str:
    if isinstance(value, str) and not isinstance(value, Shown):
        return repr(value)
    return str(value)
