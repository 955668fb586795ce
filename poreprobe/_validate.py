"""Shared input checks used by every public function.

Each check raises :class:`~poreprobe.errors.InputError` whose message names the
argument, the value received and what is allowed.
"""

from __future__ import annotations

import math
from collections.abc import Iterable

import numpy as np

from poreprobe.errors import InputError


def as_coords_A(coords, name: str = "coords_A") -> np.ndarray:
    """Return ``coords`` as a C-contiguous float64 array of shape (n, 3).

    Raises
    ------
    InputError
        If the array is not (n, 3), is empty or holds NaN/inf.
    """
    try:
        arr = np.ascontiguousarray(coords, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numeric, got {type(coords).__name__}") from exc
    if arr.ndim == 1 and arr.shape[0] == 3:
        arr = arr.reshape(1, 3)
    if arr.ndim != 2 or arr.shape[1] != 3:
        raise InputError(f"{name} must have shape (n, 3), got {arr.shape}")
    if arr.shape[0] == 0:
        raise InputError(f"{name} is empty")
    if not np.isfinite(arr).all():
        raise InputError(f"{name} holds NaN or infinite values")
    return arr


def as_vector3(vec, name: str) -> np.ndarray:
    """Return a finite float64 3-vector."""
    try:
        arr = np.asarray(vec, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be three numbers, got {vec!r}") from exc
    if arr.shape != (3,):
        raise InputError(f"{name} must be three numbers, got {arr.size}")
    if not np.isfinite(arr).all():
        raise InputError(f"{name} must be finite, got {arr.tolist()}")
    return arr


def as_unit_vector(vec, name: str = "direction") -> np.ndarray:
    """Return ``vec`` normalised to unit length; reject zero length."""
    arr = as_vector3(vec, name)
    norm = float(np.linalg.norm(arr))
    if norm < 1e-9:
        raise InputError(f"{name} must have non-zero length, got {arr.tolist()}")
    return arr / norm


def check_finite(value, name: str) -> float:
    """Return ``value`` as a finite float."""
    try:
        val = float(value)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be a number, got {value!r}") from exc
    if not math.isfinite(val):
        raise InputError(f"{name} must be finite, got {value!r}")
    return val


def check_positive(value, name: str, *, allow_zero: bool = False) -> float:
    """Return ``value`` as a float that is > 0 (or >= 0 with ``allow_zero``)."""
    val = check_finite(value, name)
    if allow_zero and val < 0:
        raise InputError(f"{name} must be >= 0, got {value!r}")
    if not allow_zero and val <= 0:
        raise InputError(f"{name} must be > 0, got {value!r}")
    return val


def check_range(value, name: str, low: float, high: float) -> float:
    """Return ``value`` as a float within [low, high]."""
    val = check_finite(value, name)
    if not low <= val <= high:
        raise InputError(f"{name} must be between {low} and {high}, got {value!r}")
    return val


def check_int(value, name: str, *, minimum: int | None = None) -> int:
    """Return ``value`` as an int, optionally >= ``minimum``."""
    if isinstance(value, bool) or not isinstance(value, int | np.integer):
        try:
            fval = float(value)
        except (TypeError, ValueError) as exc:
            raise InputError(f"{name} must be a whole number, got {value!r}") from exc
        if not fval.is_integer():
            raise InputError(f"{name} must be a whole number, got {value!r}")
        value = int(fval)
    value = int(value)
    if minimum is not None and value < minimum:
        raise InputError(f"{name} must be >= {minimum}, got {value}")
    return value


def check_choice(value, name: str, choices: Iterable[str]) -> str:
    """Return ``value`` if it is one of ``choices`` (case-insensitive)."""
    options = list(choices)
    if not isinstance(value, str) or value.lower() not in [c.lower() for c in options]:
        raise InputError(f"{name} must be one of {', '.join(options)}; got {value!r}")
    return options[[c.lower() for c in options].index(value.lower())]
