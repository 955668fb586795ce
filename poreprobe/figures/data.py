"""Reading saved results: the arrays each figure draws, from a result or its JSON."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe.errors import InputError


def as_result_dict(result, what: str = "result") -> dict:
    """The JSON-ready dictionary of a result object, or the dictionary itself."""
    if hasattr(result, "to_dict"):
        import json

        from poreprobe.io.export import to_json

        return json.loads(to_json(result))
    if isinstance(result, Mapping):
        return dict(result)
    raise InputError(
        f"{what} must be a poreprobe result or its JSON dictionary, got {type(result).__name__}"
    )


def lookup(d: Mapping, paths: Sequence[str], what: str, *, required: bool = True):
    """First of several dotted key paths present in ``d``."""
    for path in paths:
        node = d
        for key in path.split("."):
            if not isinstance(node, Mapping) or key not in node:
                break
            node = node[key]
        else:
            return node
    if required:
        raise InputError(
            f"{what}: none of the keys {', '.join(paths)} is present "
            "(is this the right kind of poreprobe JSON?)"
        )
    return None


def floats(values, what: str, ndim: int = 1) -> np.ndarray:
    try:
        arr = np.array(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{what} must be numbers (null for undefined)") from exc
    if arr.ndim != ndim:
        raise InputError(f"{what} must be a {ndim}-D array, got shape {arr.shape}")
    return arr


def same_length(name_a, a, name_b, b):
    if a.shape[-1] != b.shape[-1]:
        raise InputError(f"{name_a} has {a.shape[-1]} values but {name_b} has {b.shape[-1]}")


def profile_arrays(profile) -> dict:
    """s, radius and narrowest-point fields of a profile result or its JSON."""
    d = as_result_dict(profile, "profile")
    s = floats(lookup(d, ["profile.s_A"], "profile"), "profile.s_A")
    r = floats(lookup(d, ["profile.radius_A"], "profile"), "profile.radius_A")
    same_length("profile.s_A", s, "profile.radius_A", r)
    if not np.isfinite(r).any():
        raise InputError("profile.radius_A holds no finite radius (every plane open)")
    return {
        "s_A": s,
        "radius_A": r,
        "min_radius_A": float_or_nan(d.get("min_radius_A")),
        "min_s_A": float_or_nan(d.get("min_s_A")),
        "min_residues": list(d.get("min_residues") or ()),
        "radius_set": d.get("radius_set") or "",
        "source": d.get("source") or "",
        "max_radius_A": float_or_nan(d.get("max_radius_A")),
        "occluded": occluded_flags(d, len(s)),
        "min_occluded": bool(d.get("min_occluded") or False),
    }


def occluded_flags(d, n: int) -> np.ndarray:
    """Per-plane occluded flags of a profile's JSON (all False when absent)."""
    flags = (d.get("profile") or {}).get("occluded")
    if flags is None or len(flags) != n:
        return np.zeros(n, dtype=bool)
    return np.asarray(flags, dtype=bool)


def float_or_nan(value) -> float:
    return float("nan") if value is None else float(value)


def residue_summary(labels: Sequence[str], *, limit: int = 3) -> str:
    """Chain-aware summary of residue labels ``"A:LEU12"``: ``"Leu12 (A-D), Thr75 (A)"``.

    Copies of one residue in several chains are grouped (:mod:`poreprobe.io.labels`);
    labels past ``limit`` are counted (``"+2 more"``).
    """
    from poreprobe.errors import InputError
    from poreprobe.io.labels import summarise_labels

    labels = [str(lab) for lab in labels]
    try:
        return summarise_labels(labels, limit=limit)
    except InputError:  # labels not of the chain:NAMEnumber form: shown as they are
        parts = list(dict.fromkeys(labels))
        if len(parts) > limit:
            parts = parts[:limit] + [f"+{len(parts) - limit} more"]
        return ", ".join(parts)


def runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Start and end (inclusive) indices of runs of True."""
    edges = np.diff(np.concatenate([[0], mask.astype(int), [0]]))
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1, strict=True))


#: Where a trajectory result (the traj command's JSON) keeps each array.
TRAJ_KEYS = {
    "s_A": ["s_A"],
    "radius_A": ["per_frame.radius_A"],
    "mean_A": ["per_plane.mean_radius_A"],
    "sd_A": ["per_plane.sd_radius_A"],
    "time_ps": ["per_frame.time_ps"],
    "frames": ["per_frame.frame"],
}


def trajectory_arrays(trajectory) -> dict:
    """s grid, per-frame radii, mean and SD of a trajectory result or its JSON.

    Reads ``s_A``, ``per_frame.radius_A`` (frames x levels), ``per_plane.mean_radius_A``
    and ``per_plane.sd_radius_A``, ``per_frame.time_ps`` and ``per_frame.frame``. Mean
    and SD are computed from the frames when absent (NaN where fewer than two frames
    are enclosed).
    """
    d = as_result_dict(trajectory, "trajectory")
    found = {
        k: lookup(d, paths, "trajectory", required=k == "s_A") for k, paths in TRAJ_KEYS.items()
    }
    s = floats(found["s_A"], "s_A")
    radius = found["radius_A"]
    radius = None if radius is None else floats(radius, "per_frame.radius_A (frames x levels)", 2)
    if radius is not None:
        same_length("s_A", s, "per_frame.radius_A", radius)
    mean, sd = found["mean_A"], found["sd_A"]
    if mean is None or sd is None:
        if radius is None:
            raise InputError(
                "trajectory JSON holds neither per_frame.radius_A nor "
                "per_plane.mean_radius_A and per_plane.sd_radius_A"
            )
        mean, sd = nan_mean_sd(radius)
    mean, sd = floats(mean, "mean_radius_A"), floats(sd, "sd_radius_A")
    same_length("s_A", s, "mean_radius_A", mean)
    same_length("s_A", s, "sd_radius_A", sd)
    n = radius.shape[0] if radius is not None else d.get("n_frames")
    time, frames = found["time_ps"], found["frames"]
    return {
        "s_A": s,
        "radius_A": radius,
        "mean_A": mean,
        "sd_A": sd,
        "n_frames": n,
        "time_ps": None if time is None else floats(time, "time_ps"),
        "frames": None if frames is None else floats(frames, "frames"),
        "radius_set": d.get("radius_set") or "",
        "source": d.get("source") or "",
    }


def nan_mean_sd(radius: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and sample SD per column over rows, NaN where fewer than two values are finite."""
    ok = np.isfinite(radius)
    n = ok.sum(axis=0)
    total = np.where(ok, radius, 0.0).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(n > 1, total / n, np.nan)
        dev = np.where(ok, radius - mean, 0.0)
        sd = np.where(n > 1, np.sqrt((dev**2).sum(axis=0) / (n - 1)), np.nan)
    return mean, sd


def is_trajectory(d: Mapping) -> bool:
    if "profile" in d or "s_A" not in d:
        return False
    return any(
        lookup(d, TRAJ_KEYS[k], "", required=False) is not None for k in ("radius_A", "mean_A")
    )
