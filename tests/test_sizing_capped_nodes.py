"""The capped wall progression used along the flow at chamber end walls."""

from __future__ import annotations

import numpy as np
import pytest

from chanmesh.sizing import capped_nodes


# first cell and the number of steps from each wall that grow by exactly the ratio, worked by
# hand from the sum of a geometric series (S = h1 (g^m - 1) / (g - 1)):
# * 3.0, 0.002, 1.15, 0.2: m = ceil(ln(100) / ln(1.15)) = 33 ramp cells summing to 1.329 per side,
#   leaving 0.342 for the uniform middle: first cell h1 = 0.002 exactly, 32 steps of 1.15;
# * 1.0, 0.01, 1.2, 0.1: two 13-cell ramps would need 0.97 + a middle larger than their last
#   cell, so the ramps meet: the fewest cells of a symmetric progression whose first cell at
#   ratio 1.2 is <= h1: 26 cells give 1 / (2 (1.2^13 - 1) / 0.2) = 0.01031 > h1, 27 give
#   1 / (2 (1.2^13 - 1) / 0.2 + 1.2^13) = 0.0092857 <= h1; then the ratio g <= 1.2 that starts
#   those 27 cells at exactly h1: 13 steps of g, 1 = h1 (2 (g^13 - 1) / (g - 1) + g^13);
# * 0.1, 0.01, 1.3, 0.5: likewise 7 cells (6 give 0.0103 > h1), first cell exactly h1, 3 steps.
CASES = [(3.0, 0.002, 1.15, 0.2, 0.002, 32, 68), (1.0, 0.01, 1.2, 0.1, 0.01, 13, 27), (0.1, 0.01, 1.3, 0.5, 0.01, 3, 7)]


@pytest.mark.parametrize("length,h1,ratio,h_max,first,steps,count", CASES)
def test_capped_progression(length, h1, ratio, h_max, first, steps, count):
    nodes = capped_nodes(length, h1, ratio, h_max)
    cells = np.diff(nodes)
    assert nodes[0] == 0.0 and nodes[-1] == length
    assert len(cells) == count and np.all(cells > 0)
    assert cells == pytest.approx(cells[::-1], rel=1e-9, abs=0)  # symmetric about the middle
    assert cells[0] == pytest.approx(first, rel=1e-4, abs=0) and cells[0] <= h1 * (1 + 1e-12)
    steps_from_wall = cells[1:] / cells[:-1]
    g = steps_from_wall[0]
    # a geometric progression by definition: each cell g times its wall-side neighbour, with
    # g = ratio where a uniform middle follows, g <= ratio where the ramps meet ...
    assert steps_from_wall[:steps] == pytest.approx(np.full(steps, g), rel=1e-9, abs=0)
    if count == 2 * steps + 1:  # ramps meet: the sum of the series is the length
        assert g <= ratio and length == pytest.approx(h1 * (2 * (g**steps - 1) / (g - 1) + g**steps), rel=1e-9, abs=0)
    else:
        assert g == pytest.approx(ratio, rel=1e-9, abs=0)
    # ... and nowhere a faster growth, nor any cell above the cap
    assert np.all(steps_from_wall <= ratio * (1 + 1e-9)) and np.all(1 / steps_from_wall <= ratio * (1 + 1e-9))
    assert cells.max() <= h_max


def test_uniform_when_not_graded():
    assert np.allclose(np.diff(capped_nodes(1.0, 0.2, 1.0, 0.1)), 0.1)
