"""Stage durations of the StageClock (the manifest's timings_s): plain arithmetic on the marks."""

from __future__ import annotations

import chanmesh.progress as progress


def test_durations_are_the_gaps_between_stage_starts_and_the_total(monkeypatch):
    times = iter([0.0, 1.0, 3.5, 4.0, 6.0])
    monkeypatch.setattr(progress.time, "perf_counter", lambda: next(times))
    clock = progress.StageClock(quiet=True)  # started at 0.0
    clock("meshing")  # 1.0
    clock("writing")  # 3.5
    clock("report")  # 4.0
    assert clock.durations() == {"meshing": 2.5, "writing": 0.5, "report": 2.0, "total": 6.0}  # now 6.0
