"""Option value types and the parser class shared by every subcommand.

argparse reports a bad option with a usage block over several lines; chanmesh promises one
line and exit code 2 for every bad option, so ``OneLineParser.error`` prints just that. The
number types refuse ``nan`` and ``inf`` (``float()`` accepts both) where argparse reads them.
"""

from __future__ import annotations

import argparse
import math
from typing import NoReturn


class OneLineParser(argparse.ArgumentParser):
    """An ``ArgumentParser`` whose errors are one line (``chanmesh build: error: ...``), exit 2."""

    def error(self, message: str) -> NoReturn:
        message = " ".join(message.split())
        if "expected one argument" in message:
            message += "; a value that starts with '-' goes after '=' (e.g. --port-diameter=-1mm)"
        self.exit(2, f"{self.prog}: error: {message}\n")


def finite_float(text: str) -> float:
    """A finite number (``nan``, ``inf`` and overflowing values such as ``1e400`` refused)."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a number") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    return value


def whole_number(text: str) -> int:
    """A whole number written in decimal digits (at most 18 of them)."""
    t = text.strip()
    if not (t.lstrip("+-").isdigit() and len(t) <= 19):
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number")
    return int(t)
