"""Read a convergence study: the results CSV (one row per level) and, optionally, the
``family.json`` of a mesh family for the representative cell size h.

RESULTS.csv columns: ``level`` (1 = finest), then ``cells`` or ``h``, then one column per
quantity of interest. From a cell count the representative size is
``h = (V / N)^(1/3)`` in 3D or ``(A / N)^(1/2)`` in 2D (Celik et al. 2008, eqs. 1-2); without
V or A it is the relative size ``(1/N)^(1/d)``, which gives the same ratios.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

from chanmesh.errors import StudyError
from chanmesh.post.gci import StudyTable

RESERVED = ("level", "cells", "h")

MAX_QUANTITIES = 100
"""Quantity columns one study may hold: each gets a plot, so thousands would run for minutes."""


def _number(where: str, text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise StudyError(where, text, "must be a number") from None
    if not math.isfinite(value):
        raise StudyError(where, text, "must be a finite number")
    return value


def _level(where: str, text: str) -> int:
    value = _number(where, text)
    if value != int(value) or value < 1:
        raise StudyError(where, text, "must be a whole number >= 1 (1 = finest grid)")
    return int(value)


def size_from_cells(cells: float, dim: int, extent: float | None) -> float:
    """Representative cell size ``(extent / cells)^(1/dim)``; ``extent`` is the domain volume
    (m^3, dim 3) or area (m^2, dim 2); ``None`` gives the relative size ``(1/cells)^(1/dim)``."""
    return ((1.0 if extent is None else extent) / cells) ** (1.0 / dim)


def read_results(path: Path) -> tuple[list[int], dict[str, list[str]], list[str]]:
    """Rows of the CSV as ``(levels, columns by lower-case reserved name or quantity name,
    quantity names in file order)``; every problem names the file, row and column."""
    name = path.name
    try:
        with open(path, newline="", encoding="utf-8-sig") as fh:
            rows = [row for row in csv.reader(fh) if any(cell.strip() for cell in row)]
    except OSError as exc:
        raise StudyError(str(path), "(unreadable)", f"cannot read the results file: {exc.strerror}") from None
    except UnicodeDecodeError:
        raise StudyError(str(path), "(binary)", "must be a UTF-8 text CSV file") from None
    if not rows:
        raise StudyError(name, "(empty)", "needs a header row and one row per level")
    header = [cell.strip() for cell in rows[0]]
    if len(header) > MAX_QUANTITIES + len(RESERVED):
        raise StudyError(f"{name} header", f"{len(header)} columns",
                         f"at most {MAX_QUANTITIES} quantity columns (one picture each); split the table")
    keys = [h.lower() if h.lower() in RESERVED else h for h in header]
    for i, key in enumerate(keys):
        if not key:
            raise StudyError(f"{name} header, column {i + 1}", "(empty)", "every column needs a name")
        if keys.count(key) > 1:
            raise StudyError(f"{name} header", key, "column names must be unique")
    if "level" not in keys:
        raise StudyError(f"{name} header", header, "needs a 'level' column (1 = finest grid)")
    quantities = [k for k in keys if k not in RESERVED]
    if not quantities:
        raise StudyError(f"{name} header", header, "needs at least one quantity column besides level, cells, h")
    columns: dict[str, list[str]] = {k: [] for k in keys}
    for number, row in enumerate(rows[1:], start=2):
        if len(row) != len(keys):
            raise StudyError(f"{name} row {number}", f"{len(row)} fields", f"must have {len(keys)} like the header")
        for key, cell in zip(keys, row):
            columns[key].append(cell.strip())
    levels = [_level(f"{name} row {i + 2}, column 'level'", t) for i, t in enumerate(columns["level"])]
    for i, lv in enumerate(levels):
        if levels.index(lv) != i:
            raise StudyError(f"{name} row {i + 2}, column 'level'", lv, "each level may appear only once")
    return levels, columns, quantities


def read_family(directory: Path) -> dict[int, tuple[float, float | None]]:
    """``{level: (h, cells)}`` from ``directory/family.json`` (h in metres)."""
    path = directory / "family.json"
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise StudyError("--family", str(directory), f"needs a readable family.json there ({exc.strerror})") from None
    except ValueError as exc:
        raise StudyError(str(path), "(not JSON)", f"must be valid JSON: {exc}") from None
    entries = data.get("levels") if isinstance(data, dict) else None
    if not isinstance(entries, list) or not entries:
        raise StudyError(f"{path.name} 'levels'", "(missing)", "must be a non-empty list of level records")
    out: dict[int, tuple[float, float | None]] = {}
    for i, entry in enumerate(entries):
        where = f"{path.name} levels[{i}]"
        if not isinstance(entry, dict) or "level" not in entry or "h" not in entry:
            raise StudyError(where, entry, "must be an object with 'level' and 'h' (metres)")
        level, h, cells = entry["level"], entry["h"], entry.get("cells")
        if not isinstance(level, int) or isinstance(level, bool) or level < 1:
            raise StudyError(f"{where}.level", level, "must be a whole number >= 1")
        if not isinstance(h, (int, float)) or isinstance(h, bool) or not (math.isfinite(h) and h > 0):
            raise StudyError(f"{where}.h", h, "must be a positive number of metres")
        if level in out:
            raise StudyError(f"{where}.level", level, "each level may appear only once")
        out[level] = (float(h), float(cells) if isinstance(cells, (int, float)) else None)
    return out


def load_study(
    path: Path, dim: int = 3, extent: float | None = None, family: Path | None = None
) -> StudyTable:
    """The study in ``path`` as a ``StudyTable`` sorted finest first, with h from (in order of
    preference) ``family``, the ``h`` column, or the ``cells`` column."""
    if dim not in (2, 3):
        raise StudyError("--dim", dim, "must be 2 (planar study) or 3")
    if extent is not None and not (math.isfinite(extent) and extent > 0):
        raise StudyError("--volume/--area", extent, "must be a positive number (m^3 or m^2)")
    levels, columns, quantities = read_results(path)
    name = path.name
    n = len(levels)
    if n < 2:
        raise StudyError(name, f"{n} level row(s)", "a convergence study needs at least two levels (three for an order)")
    cells = None
    if "cells" in columns:
        cells = [_number(f"{name} row {i + 2}, column 'cells'", t) for i, t in enumerate(columns["cells"])]
        for i, c in enumerate(cells):
            if c <= 0:
                raise StudyError(f"{name} row {i + 2}, column 'cells'", c, "must be a positive cell count")
    if family is not None:
        sizes = read_family(family)
        h = []
        for i, lv in enumerate(levels):
            if lv not in sizes:
                raise StudyError(f"{name} row {i + 2}, column 'level'", lv,
                                 f"is not in {family / 'family.json'} (levels {sorted(sizes)})")
            h.append(sizes[lv][0])
            fam_cells = sizes[lv][1]
            if cells is not None and fam_cells is not None and fam_cells != cells[i]:
                raise StudyError(f"{name} row {i + 2}, column 'cells'", cells[i],
                                 f"must match family.json level {lv} ({fam_cells:g} cells)")
        note, unit = f"h from {family / 'family.json'} (m)", "m"
    elif "h" in columns:
        h = [_number(f"{name} row {i + 2}, column 'h'", t) for i, t in enumerate(columns["h"])]
        for i, v in enumerate(h):
            if v <= 0:
                raise StudyError(f"{name} row {i + 2}, column 'h'", v, "must be a positive cell size")
        note, unit = "h from the CSV", "as given"
    elif cells is not None:
        h = [size_from_cells(c, dim, extent) for c in cells]
        what = "relative size (1/N)" if extent is None else ("(V/N)" if dim == 3 else "(A/N)")
        note, unit = f"h = {what}^(1/{dim}) from cell counts", ("relative" if extent is None else "m")
    else:
        raise StudyError(f"{name} header", list(columns), "needs a 'cells' or 'h' column, or --family DIR")
    values = {q: [_number(f"{name} row {i + 2}, column {q!r}", t) for i, t in enumerate(columns[q])] for q in quantities}
    order = sorted(range(n), key=lambda i: levels[i])
    for a, b in zip(order, order[1:]):
        if not h[b] > h[a]:
            raise StudyError(f"{name} row {b + 2}, level {levels[b]}", f"h = {h[b]:.6g}",
                             f"must be larger than h = {h[a]:.6g} of level {levels[a]}: h must grow with level "
                             "(1 = finest)")
    return StudyTable(
        levels=tuple(levels[i] for i in order), h=tuple(h[i] for i in order),
        quantities={q: tuple(values[q][i] for i in order) for q in quantities}, h_note=note, h_unit=unit)
