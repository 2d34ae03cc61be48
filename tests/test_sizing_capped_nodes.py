"""The capped wall progression used along the flow at chamber end walls."""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.sizing import capped_nodes


@pytest.mark.parametrize("length,h1,ratio,h_max", [(1.0, 0.01, 1.2, 0.1), (3.0, 0.002, 1.15, 0.2), (0.1, 0.01, 1.3, 0.5)])
def test_capped_progression(length, h1, ratio, h_max):
    nodes = capped_nodes(length, h1, ratio, h_max)
    cells = np.diff(nodes)
    assert nodes[0] == 0.0 and nodes[-1] == length
    assert np.all(cells > 0)
    # geometric progression by definition: first cell h1, each next one ratio times larger,
    # symmetric about the middle, never above about h_max
    assert cells[0] == pytest.approx(h1, rel=1e-9) or cells[0] < h1
    assert cells[-1] == pytest.approx(cells[0], rel=1e-9)
    assert cells.max() <= 1.5 * h_max
    if cells[0] == pytest.approx(h1, rel=1e-9):
        assert cells[1] / cells[0] == pytest.approx(ratio, rel=1e-9)


def test_uniform_when_not_graded():
    assert np.allclose(np.diff(capped_nodes(1.0, 0.2, 1.0, 0.1)), 0.1)
