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

    def durations(self) -> dict[str, float]:
        """Seconds spent in each stage so far (a stage lasts until the next one starts; the
        last one until now), in stage order, then ``total``: the seconds since the clock
        started (it includes any time before the first stage). The manifest's ``timings_s``."""
        names = list(self.marks)
        now = self.elapsed()
        ends = [self.marks[n] for n in names[1:]] + [now]
        out = {n: round(end - self.marks[n], 4) for n, end in zip(names, ends)}
        out["total"] = round(now, 4)
        return out


class ProgressBar:
    """A text bar over ``total`` items on standard error, e.g. ``[####----] 2/4 level-2: meshing``.

    ``stage(text)`` updates the text after the bar (a stage within the current item) and
    ``advance(text)`` counts one item done. On a terminal the line is redrawn in place; on a
    pipe or file every update is its own line, so logs stay readable. No dependency."""

    WIDTH = 24

    def __init__(self, total: int, label: str = "", quiet: bool = False, stream: TextIO | None = None) -> None:
        self.total = max(1, int(total))
        self.done = 0
        self.label = label
        self.quiet = quiet
        self.stream = stream or sys.stderr
        self.start = time.perf_counter()
        self._tty = bool(getattr(self.stream, "isatty", lambda: False)())

    def line(self, text: str) -> str:
        filled = int(round(self.WIDTH * self.done / self.total))
        bar = "#" * filled + "-" * (self.WIDTH - filled)
        t = time.perf_counter() - self.start
        return f"{self.label}[{bar}] {self.done}/{self.total} {t:6.1f} s  {text}"

    def stage(self, text: str) -> None:
        if self.quiet:
            return
        if self._tty:
            print("\r\033[K" + self.line(text), end="", file=self.stream, flush=True)
        else:
            print(self.line(text), file=self.stream, flush=True)

    def advance(self, text: str = "") -> None:
        self.done = min(self.total, self.done + 1)
        self.stage(text)

    def close(self) -> None:
        if not self.quiet and self._tty:
            print(file=self.stream, flush=True)


class BarClock(StageClock):
    """A ``StageClock`` (stage marks for the manifest) that reports stages on a ``ProgressBar``."""

    def __init__(self, bar: ProgressBar, prefix: str = "") -> None:
        super().__init__(quiet=True, prefix=prefix)
        self.bar = bar

    def __call__(self, stage: str) -> None:
        super().__call__(stage)
        self.bar.stage(f"{self.prefix}{stage}")
