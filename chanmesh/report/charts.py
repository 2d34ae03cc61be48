"""Small matplotlib charts for the report: histograms of the mesh-quality figures.

The quality figures come from the manifest's optional ``quality`` section. Each metric whose
entry holds a histogram (``{"histogram": {"edges": [...], "counts": [...]}}``, or ``edges`` /
``bins`` and ``counts`` at the top level) is drawn; a metric with only summary numbers is
listed in a table instead (see ``html.py``).
"""

from __future__ import annotations

import io
from typing import Any

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from chanmesh.report.palette import INK, INLET, PAPER  # noqa: E402


def histogram_of(entry: Any) -> tuple[np.ndarray, np.ndarray] | None:
    """(edges, counts) of one quality metric's entry, or None when it holds no histogram."""
    if not isinstance(entry, dict):
        return None
    h = entry.get("histogram", entry)
    if not isinstance(h, dict):
        return None
    edges = h.get("edges", h.get("bins"))
    counts = h.get("counts")
    if edges is None or counts is None:
        return None
    try:
        e, c = np.asarray(edges, dtype=float), np.asarray(counts, dtype=float)
    except (TypeError, ValueError):
        return None
    if e.ndim != 1 or c.ndim != 1 or len(e) != len(c) + 1 or len(c) == 0:
        return None
    return e, c


def histogram_png(name: str, edges: np.ndarray, counts: np.ndarray, width: int = 520, height: int = 300) -> bytes:
    """A bar chart of one histogram, PNG bytes."""
    fig = plt.figure(figsize=(width / 100, height / 100), dpi=100, facecolor=PAPER)
    try:
        ax = fig.add_axes((0.14, 0.18, 0.82, 0.70))
        ax.bar(edges[:-1], counts, width=np.diff(edges), align="edge", color=INLET, edgecolor=PAPER, linewidth=0.4)
        ax.set_title(name.replace("_", " "), color=INK, fontsize=11, loc="left")
        ax.set_ylabel("cells", color=INK)
        ax.tick_params(colors=INK, labelsize=9)
        for side in ("top", "right"):
            ax.spines[side].set_visible(False)
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=100, facecolor=PAPER)
    finally:
        plt.close(fig)
    return buf.getvalue()
