"""Bounds of a mesh family's options, in a module of their own so that the command line can
show them in its help without importing the build machinery (see ``family.py``)."""

MAX_LEVELS = 6
"""Most levels a family may have."""

RATIO_RANGE = (1.1, 4.0)
"""Allowed refinement ratio between neighbouring levels (inclusive)."""
