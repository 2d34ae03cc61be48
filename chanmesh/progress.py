"""Progress lines on standard error: one per stage, with the elapsed time."""

from __future__ import annotations

import sys
import time
from typing import TextIO


class StageClock:
    """Call with a stage name to print ``[  1.2 s] name``; ``quiet`` silences it."""

    def __init__(self, quiet: bool = False, prefix: str = "", stream: TextIO | None = None) -> None:
        self.quiet = quiet
        self.prefix = prefix
        self.stream = stream or sys.stderr
        self.start = time.perf_counter()
        self.marks: dict[str, float] = {}

    def elapsed(self) -> float:
        return time.perf_counter() - self.start

    def __call__(self, stage: str) -> None:
        t = self.elapsed()
        self.marks[stage] = t
        if not self.quiet:
            print(f"[{t:7.1f} s] {self.prefix}{stage}", file=self.stream, flush=True)
