"""The common s grid of a trajectory's frames, and the levels of its statistics."""

from __future__ import annotations

import numpy as np

from poreprobe._validate import check_range
from poreprobe.errors import InputError
from poreprobe.geometry.profile import plane_positions_A


def check_percentiles(percentiles) -> tuple[float, ...]:
    """Percentile levels as floats in [0, 100], at least one (InputError otherwise)."""
    try:
        values = tuple(float(q) for q in percentiles)
    except TypeError as exc:
        raise InputError(f"percentiles must be a sequence of numbers, got {percentiles!r}") from exc
    if not values:
        raise InputError("percentiles must hold at least one level")
    return tuple(check_range(q, "percentiles", 0.0, 100.0) for q in values)


def grid_range_A(s_atoms_A: np.ndarray, step_A: float, margin_A: float) -> tuple[float, float]:
    """The (low, high) range that makes the profile rebuild the reference grid exactly.

    The reference planes are multiples of the step covering the atoms plus the
    margin; the range passed on lies a quarter step inside the end planes, so the
    profile's floor/ceil of range/step lands on the same multiples every frame.
    """
    planes = plane_positions_A(s_atoms_A, step_A, margin_A)
    return float(planes[0]) + 0.25 * step_A, max(
        float(planes[-1]) - 0.25 * step_A, float(planes[0]) + 0.5 * step_A
    )


def check_s_range(s_range_A) -> tuple[float, float]:
    """An explicit (low, high) s range in Å with high > low (InputError otherwise)."""
    try:
        lo, hi = (float(v) for v in s_range_A)
    except (TypeError, ValueError) as exc:
        raise InputError(f"s_range_A must be (low, high) in Å, got {s_range_A!r}") from exc
    if not (np.isfinite(lo) and np.isfinite(hi) and hi > lo):
        raise InputError(f"s_range_A must be (low, high) with high > low, got {s_range_A!r}")
    return lo, hi
