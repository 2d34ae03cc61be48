"""Plain data for standard JSON: non-finite floats (which JSON cannot hold) become null."""

from __future__ import annotations

import math
from typing import Any


def finite_json(obj: Any) -> Any:
    """A copy of ``obj`` with NaN and infinities replaced by None; tuples become lists."""
    if isinstance(obj, dict):
        return {k: finite_json(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [finite_json(v) for v in obj]
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj
