"""A default-grid section flow asked twice is solved once (``flow.solve._shared``): a build asks
for the same flow in its design numbers and, on its second thread, in its resolution figure."""

from __future__ import annotations

import threading

import pytest

from chanmesh.flow import solve as solve_module
from chanmesh.flow.grid import default_grid, shape_of
from chanmesh.flow.solve import solve_section_flow
from tests.conftest import small_design

RHO, MU = 997.0, 0.89e-3  # kg/m^3, Pa s: a water-like fluid (any fluid serves for a cache test)


@pytest.fixture
def counted(monkeypatch):  # noqa: ANN001, ANN201
    """Counts the solves that reach Newton, with the shared store emptied."""
    monkeypatch.setattr(solve_module, "_SHARED", type(solve_module._SHARED)())
    monkeypatch.setattr(solve_module, "_SHARED_LOCKS", {})
    calls = []
    real = solve_module._solve

    def counting(*args, **kwargs):  # noqa: ANN002, ANN003, ANN202
        calls.append(args[5].description)
        return real(*args, **kwargs)

    monkeypatch.setattr(solve_module, "_solve", counting)
    return calls


def test_second_ask_reuses_the_solve_and_the_error_estimate_is_unchanged(counted):
    section = small_design("arc").section
    args = (section, 1e-3, RHO, MU, 2e-9)
    quick = solve_section_flow(*args, estimate_error=False)  # as `numbers` asks
    full = solve_section_flow(*args)  # as the resolution figure asks: with the Richardson estimate
    fine = default_grid(shape_of(section)).description
    assert counted.count(fine) == 1 and len(counted) == 2  # the fine grid once, and the estimate's coarse grid
    assert quick.error is None and full.error is not None
    assert (full.secondary_max, full.secondary_mean, full.dpds) == (quick.secondary_max, quick.secondary_mean, quick.dpds)
    # the same figures and estimate as a solve that does not go through the store (an explicit grid)
    alone = solve_section_flow(*args, grid=default_grid(shape_of(section)), estimate_error=True)
    assert (alone.secondary_max, alone.dpds) == (full.secondary_max, full.dpds)
    assert alone.error["relative"] == full.error["relative"]


def test_a_caller_asking_while_the_first_solves_waits_for_it(counted):
    section = small_design("arc").section
    args = (section, 1.2e-3, RHO, MU, 3e-9)
    results = []
    threads = [threading.Thread(target=lambda: results.append(solve_section_flow(*args, estimate_error=False)))
               for _ in range(3)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert len(counted) == 1 and len(results) == 3
    assert len({r.secondary_max for r in results}) == 1


def test_other_problems_and_explicit_grids_are_solved_afresh(counted):
    section = small_design("arc").section
    solve_section_flow(section, 1e-3, RHO, MU, 2e-9, estimate_error=False)
    solve_section_flow(section, 1e-3, RHO, MU, 2.5e-9, estimate_error=False)  # another flow rate
    solve_section_flow(section, 1e-3, RHO, MU, 2e-9, grid=default_grid(shape_of(section)), estimate_error=False)
    assert len(counted) == 3
