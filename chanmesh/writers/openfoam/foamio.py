"""OpenFOAM files: the FoamFile header, large lists (points, faces, owner, neighbour) written
straight from numpy, and dictionaries through ``foamlib``.

A binary list is ``N`` on its own line, ``(``, the raw little-endian values, ``)``; the header's
``arch "LSB;label=32;scalar=64"`` tells OpenFOAM how wide they are (the format OpenFOAM v1912
itself writes with ``writeFormat binary``). ``faces`` is a ``faceCompactList``: the offsets
list (n_faces + 1) followed by the flat node list. The ASCII variant writes the same lists as
text; it is several times slower and larger (``bench/openfoam_write.py`` measures both).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

BANNER = "/* written by chanmesh: an OpenFOAM case for a channel design (see manifest.json) */\n"
LABEL = np.dtype("<i4")
SCALAR = np.dtype("<f8")


def header(cls: str, obj: str, location: str, binary: bool = False, note: str = "") -> str:
    """The FoamFile header block of a file of class ``cls`` called ``obj`` in ``location``."""
    lines = ["FoamFile", "{", "    version     2.0;", f"    format      {'binary' if binary else 'ascii'};",
             f"    class       {cls};"]
    if binary:
        lines.append('    arch        "LSB;label=32;scalar=64";')
    if note:
        lines.append(f'    note        "{note}";')
    lines += [f'    location    "{location}";', f"    object      {obj};", "}", ""]
    return BANNER + "\n".join(lines) + "\n"


def _check_labels(values: np.ndarray) -> None:
    if len(values) and int(values.max()) >= 2**31:
        raise ValueError("more than 2^31 labels: OpenFOAM's 32-bit labels cannot hold this mesh")


def _list_bytes(values: np.ndarray, binary: bool, width: int = 1) -> list[bytes]:
    """One OpenFOAM list as byte chunks: ``values`` (n,) labels or (n, 3) scalars."""
    n = len(values)
    if binary:
        dtype = SCALAR if values.dtype.kind == "f" else LABEL
        if dtype is LABEL:
            _check_labels(values)
        return [f"{n}\n(".encode(), np.ascontiguousarray(values, dtype=dtype).tobytes(), b")\n"]
    if values.dtype.kind == "f":
        body = "\n".join("(" + " ".join(repr(float(x)) for x in row) + ")" for row in values.reshape(n, -1))
    else:
        body = "\n".join(values.astype(str).tolist())
    return [f"{n}\n(\n".encode(), body.encode(), b"\n)\n"]


def write_list_file(path: Path, cls: str, obj: str, lists: list[np.ndarray], binary: bool = True, note: str = "") -> Path:
    """A polyMesh list file (``points``, ``owner``, ``neighbour``, or ``faces`` with two lists)."""
    chunks = [header(cls, obj, "constant/polyMesh", binary, note).encode(), b"\n"]
    for values in lists:
        chunks += _list_bytes(values, binary)
    with open(path, "wb") as fh:
        for c in chunks:
            fh.write(c)
    return path


def write_faces_ascii(path: Path, offsets: np.ndarray, nodes: np.ndarray) -> Path:
    """``faces`` as an ASCII ``faceList``: ``n(a b c d)`` per face (what a text reader expects)."""
    sizes = np.diff(offsets)
    parts = np.split(nodes.astype(str), offsets[1:-1]) if len(set(sizes.tolist())) > 1 else nodes.astype(str).reshape(len(sizes), -1)
    body = "\n".join(f"{len(p)}({' '.join(p)})" for p in parts)
    with open(path, "w") as fh:
        fh.write(header("faceList", "faces", "constant/polyMesh"))
        fh.write(f"\n{len(sizes)}\n(\n{body}\n)\n")
    return path


def write_dict(path: Path, cls: str, obj: str, location: str, entries: Any, comment: str = "") -> Path:
    """A dictionary file through foamlib's serializer (``entries`` a mapping, or a list for
    ``boundary``/``faceZones``), one top-level entry per paragraph, ``comment`` as a // line."""
    from foamlib import FoamFile

    text = header(cls, obj, location) + (f"\n// {comment}\n" if comment else "")
    if isinstance(entries, dict):
        for key, value in entries.items():
            text += "\n" + _pretty(FoamFile.dumps({key: value}, ensure_header=False).decode()) + "\n"
    else:  # a list of named dictionaries (boundary, faceZones): N ( name { ... } ... )
        body = [_pretty(FoamFile.dumps({name: value}, ensure_header=False).decode()) for name, value in entries]
        inner = "\n".join("    " + line for b in body for line in b.splitlines())
        text += f"\n{len(entries)}\n(\n{inner}\n)\n"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text)
    return path


def _pretty(text: str) -> str:
    """Indent foamlib's one-line output: a newline after every ``{``, ``;`` and ``}`` outside
    brackets and quotes, four spaces per dictionary level."""
    out, depth, paren, quote = [], 0, 0, False
    line = ""
    for ch in text:
        if ch == '"':
            quote = not quote
        if quote:
            line += ch
            continue
        if ch in "([":
            paren += 1
        elif ch in ")]":
            paren -= 1
        if paren:
            line += ch
            continue
        if ch == "{":
            out.append("    " * depth + line.strip())
            out.append("    " * depth + "{")
            depth += 1
            line = ""
        elif ch == "}":
            if line.strip():
                out.append("    " * depth + line.strip())
            depth -= 1
            out.append("    " * depth + "}")
            line = ""
        elif ch == ";":
            out.append("    " * depth + (line + ";").strip())
            line = ""
        else:
            line += ch
    if line.strip():
        out.append(line.strip())
    return "\n".join(s for s in out if s)
