"""The one spelling of each term in what chanmesh shows people (issue 15 item 20).

Terminal lines, report.html, picture labels and the human-readable labels of the CSV/JSON
files take their words from here; keys (``scaled_jacobian_min``, ``wall_cell_m``, cell types as
meshio names them) and design-file keys (``cells = "hex"``, ``first_cell``) are formats and stay.

| term | display spelling | not |
|---|---|---|
| cell types, counted | tetrahedra, hexahedra, wedges, triangles, quadrilaterals | tets, hex, quad |
| meshers | the tetrahedral mesher / the hexahedral mesher | |
| quality figures | scaled Jacobian, aspect ratio, non-orthogonality | Scaled Jacobian, non orthogonality |
| the first cell at a wall | wall-adjacent cell | wall cell, first cell |
| the section's vertical coordinate | z (the frame's third vector, also the global z) | v |
"""

from __future__ import annotations

import re
from collections.abc import Mapping

CELL_WORDS: dict[str, tuple[str, str]] = {
    "tetra": ("tetrahedron", "tetrahedra"),
    "hexahedron": ("hexahedron", "hexahedra"),
    "wedge": ("wedge", "wedges"),
    "pyramid": ("pyramid", "pyramids"),
    "triangle": ("triangle", "triangles"),
    "quad": ("quadrilateral", "quadrilaterals"),
}
"""Cell type (meshio's name, as in ``ChannelMesh`` blocks and manifest ``cells`` keys) -> (one, many)."""

MESHER_CELLS: dict[str, str] = {"tet": "tetrahedra", "hex": "hexahedra"}
"""Design-file ``mesh.cells`` value -> the cells it makes, in words."""

WALL_CELL = "wall-adjacent cell"
"""The first cell at a wall (the design key ``first_cell`` sets its height)."""

SECTION_U = "u"
SECTION_Z = "z"
"""The section's coordinates: u across (along n = t x z), z up (the frame's third vector; the
centreline lies in z = 0, so it is also the global z)."""

METRIC_WORDS: dict[str, str] = {
    "scaled_jacobian": "scaled Jacobian",
    "aspect_ratio": "aspect ratio",
    "non_orthogonality": "non-orthogonality",
    "wall_cell": WALL_CELL,
    "core_cell": "core cell",
}
"""Quality and sizing key stems (manifest, ``chanmesh quality --json``) -> display words."""

_SUFFIX_WORDS = {"min": "min", "mean": "mean", "max": "max", "high": "over the height", "m": "", "source": "source"}

FORBIDDEN: tuple[tuple[str, str], ...] = (
    (r"(?<![\d,.])(?!1 )\d[\d,]* (?:hexahedron|tetrahedron|tetra|quad|triangle|wedge|hex|tet|tets|hexes)\b", "a count: use the plural"),
    (r"\btets\b|\bhexes\b", "write tetrahedra / hexahedra"),
    (r"(?<!cells )(?<![\"'`.])\b(?:hex|tet)\b(?![\"'`])", "write hexahedra / tetrahedra (cells = \"hex\" only as the design key)"),
    (r"\bquads?\b", "write quadrilateral(s)"),
    (r"Scaled Jacobian|scaled jacobian|scaled_jacobian", "write scaled Jacobian"),
    (r"[Nn]on[ _]orthogonality|[Nn]onorthogonality|Non-orthogonality", "write non-orthogonality"),
    (r"\bwall cells?\b|\bfirst cells?\b|\bwall_cell", "write wall-adjacent cell (first_cell, the design key, stays)"),
    (r"\(u, v\)|\bv \(µm\)|\bv_m\b", "the section's vertical coordinate is z"),
)
"""(regular expression, fix) of the variants no display text may hold; the tests scan for them."""


def cell_word(cell_type: str, count: int = 2) -> str:
    """``"hexahedron", 5`` -> ``"hexahedra"``; an unknown type is returned as it is."""
    one, many = CELL_WORDS.get(cell_type, (cell_type, cell_type))
    return one if count == 1 else many


def count_phrase(cell_counts: Mapping[str, int]) -> str:
    """``{"hexahedron": 856562, "quad": 130930}`` -> ``"856,562 hexahedra, 130,930 quadrilaterals"``."""
    return ", ".join(f"{n:,} {cell_word(t, n)}" for t, n in cell_counts.items())


def metric_label(key: str) -> str:
    """A quality or sizing key in words: ``scaled_jacobian_min`` -> ``"scaled Jacobian min"``,
    ``wall_cell_m`` -> ``"wall-adjacent cell"``; other keys in words (``cells_high`` -> ``"cells high"``)."""
    for stem in sorted(METRIC_WORDS, key=len, reverse=True):
        if key == stem or key.startswith(stem + "_"):
            rest = [_SUFFIX_WORDS.get(p, p) for p in key[len(stem) + 1:].split("_") if p]
            return " ".join([METRIC_WORDS[stem], *(r for r in rest if r)])
    return key.replace("_", " ")


def forbidden_in(text: str) -> list[str]:
    """Every forbidden variant found in ``text``, each with its fix (empty when clean)."""
    return [f"{m.group(0)!r}: {fix}" for pattern, fix in FORBIDDEN for m in re.finditer(pattern, text)]
