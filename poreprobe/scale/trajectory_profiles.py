"""The result of a trajectory run: per-frame radius profiles and their statistics.

:class:`TrajectoryProfiles` holds what :class:`~poreprobe.scale.trajectory.PoreProfileAnalysis`
keeps (per-frame numbers on one common s grid, never coordinates) and the summaries
computed once after the workers are merged; :func:`planes_csv` and :func:`frames_csv`
write them. No MDAnalysis here: a saved result is read and written without it. All
values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from poreprobe._version import __version__
from poreprobe.geometry.axis import PoreAxis
from poreprobe.io.export import to_csv


@dataclass(frozen=True)
class TrajectoryProfiles:
    """Radius profiles over the frames of one trajectory, and their statistics.

    Per-frame arrays have one entry (row) per analysed frame, in frame order;
    per-plane arrays one entry per plane of the common grid ``s_A``. All
    lengths in Å. These are model-based estimates that depend on the radius set.

    Attributes
    ----------
    frames, times_ps : ndarray of shape (n_frames,)
        Trajectory frame numbers and their times (ps).
    s_A : ndarray of shape (n_planes,)
    radius_A : ndarray of shape (n_frames, n_planes)
        NaN where a plane is open bulk.
    min_radius_A, min_s_A : ndarray of shape (n_frames,)
    capture_radius_A : ndarray of shape (n_frames,) or None
        Capture radius per frame for ``capture_probe_radius_A`` (None if not asked for).
    capture_mean_A, capture_sd_A : float
    capture_percentiles_A : ndarray of shape (n_percentiles,)
    capture_probe_radius_A : float or None
    fit_rmsd_A : ndarray of shape (n_frames,)
        RMSD of the alignment atoms after the fit (NaN in per-frame axis mode).
    axis_point_A, axis_direction : ndarray of shape (n_frames, 3)
        The axis in each frame's own coordinates.
    mean_radius_A, sd_radius_A : ndarray of shape (n_planes,)
        Mean and sample SD (ddof = 1) over the frames in which the plane is enclosed.
    percentiles : tuple of float
    percentile_radius_A : ndarray of shape (n_percentiles, n_planes)
    n_enclosed : ndarray of int, shape (n_planes,)
    min_radius_mean_A, min_radius_sd_A : float
    min_radius_percentiles_A : ndarray of shape (n_percentiles,)
    closed_below_A : float
    closed_frames : ndarray of int
        Frames whose minimum radius is below ``closed_below_A``.
    reference_axis : PoreAxis
    axis_mode, align_selection, radius_set, source, trajectory, version : str
    reference_frame, n_atoms : int
    step_A, max_radius_A : float
    """

    frames: np.ndarray
    times_ps: np.ndarray
    s_A: np.ndarray
    radius_A: np.ndarray
    min_radius_A: np.ndarray
    min_s_A: np.ndarray
    capture_radius_A: np.ndarray | None
    capture_mean_A: float
    capture_sd_A: float
    capture_percentiles_A: np.ndarray
    capture_probe_radius_A: float | None
    fit_rmsd_A: np.ndarray
    axis_point_A: np.ndarray
    axis_direction: np.ndarray
    mean_radius_A: np.ndarray
    sd_radius_A: np.ndarray
    percentiles: tuple[float, ...]
    percentile_radius_A: np.ndarray
    n_enclosed: np.ndarray
    min_radius_mean_A: float
    min_radius_sd_A: float
    min_radius_percentiles_A: np.ndarray
    closed_below_A: float
    closed_frames: np.ndarray
    reference_axis: PoreAxis
    axis_mode: str
    reference_frame: int
    align_selection: str | None
    radius_set: str
    step_A: float
    max_radius_A: float
    n_atoms: int
    source: str = ""
    trajectory: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    @property
    def n_frames(self) -> int:
        return len(self.frames)

    def to_dict(self) -> dict:
        """JSON-ready dictionary (NaN becomes None via :func:`poreprobe.io.export.to_json`)."""
        levels = [f"p{_level_label(q)}" for q in self.percentiles]
        return {
            "version": self.version,
            "kind": "trajectory radius profiles (model-based estimates)",
            "source": self.source,
            "trajectory": self.trajectory,
            "n_atoms": self.n_atoms,
            "n_frames": self.n_frames,
            "radius_set": self.radius_set,
            "step_A": self.step_A,
            "max_radius_A": self.max_radius_A,
            "axis_mode": self.axis_mode,
            "reference_frame": self.reference_frame,
            "align_selection": self.align_selection,
            "reference_axis": self.reference_axis.to_dict(),
            "closed_below_A": self.closed_below_A,
            "s_A": self.s_A,
            "per_plane": {
                "mean_radius_A": self.mean_radius_A,
                "sd_radius_A": self.sd_radius_A,
                "n_enclosed": self.n_enclosed,
                "percentiles": list(self.percentiles),
                **{
                    f"{lab}_radius_A": row
                    for lab, row in zip(levels, self.percentile_radius_A, strict=True)
                },
            },
            "min_radius": {
                "mean_A": self.min_radius_mean_A,
                "sd_A": self.min_radius_sd_A,
                **{
                    f"{lab}_A": float(v)
                    for lab, v in zip(levels, self.min_radius_percentiles_A, strict=True)
                },
            },
            "capture": (
                {
                    "probe_radius_A": self.capture_probe_radius_A,
                    "mean_A": self.capture_mean_A,
                    "sd_A": self.capture_sd_A,
                    **{
                        f"{lab}_A": float(v)
                        for lab, v in zip(levels, self.capture_percentiles_A, strict=True)
                    },
                }
                if self.capture_probe_radius_A is not None
                else None
            ),
            "closed_frames": self.closed_frames,
            "per_frame": {
                "frame": self.frames,
                "time_ps": self.times_ps,
                "min_radius_A": self.min_radius_A,
                "min_s_A": self.min_s_A,
                "capture_radius_A": self.capture_radius_A,
                "fit_rmsd_A": self.fit_rmsd_A,
                "axis_point_A": self.axis_point_A,
                "axis_direction": self.axis_direction,
                "radius_A": self.radius_A,
            },
        }


def planes_csv(result: TrajectoryProfiles, path=None) -> str:
    """CSV of the per-plane statistics: s, mean, SD, percentiles, frames enclosed."""
    levels = [f"p{_level_label(q)}_radius_A" for q in result.percentiles]
    header = ("s_A", "mean_radius_A", "sd_radius_A", *levels, "n_enclosed")
    rows = (
        [float(s), float(m), float(sd), *map(float, pct), int(n)]
        for s, m, sd, pct, n in zip(
            result.s_A,
            result.mean_radius_A,
            result.sd_radius_A,
            result.percentile_radius_A.T,
            result.n_enclosed,
            strict=True,
        )
    )
    return to_csv(header, rows, path, _comments(result, "per-plane statistics over frames"))


def frames_csv(result: TrajectoryProfiles, path=None) -> str:
    """CSV with one row per frame: minimum radius, its position, capture radius (if any),
    fit RMSD, closed flag."""
    header = ["frame", "time_ps", "min_radius_A", "min_s_A"]
    if result.capture_radius_A is not None:
        header.append(f"capture_radius_A_p{result.capture_probe_radius_A:g}")
    header += ["fit_rmsd_A", "closed"]
    closed = set(result.closed_frames.tolist())
    rows = []
    for k, frame in enumerate(result.frames):
        row = [
            int(frame),
            float(result.times_ps[k]),
            float(result.min_radius_A[k]),
            float(result.min_s_A[k]),
        ]
        if result.capture_radius_A is not None:
            row.append(float(result.capture_radius_A[k]))
        row += [float(result.fit_rmsd_A[k]), int(int(frame) in closed)]
        rows.append(row)
    return to_csv(header, rows, path, _comments(result, "per-frame values"))


def _comments(result: TrajectoryProfiles, what: str) -> tuple[str, ...]:
    return (
        f"poreprobe {result.version} {what}: {result.source} {result.trajectory}".rstrip(),
        f"radius set: {result.radius_set}; model-based estimates; lengths in Å; "
        f"{result.n_frames} frames; axis {result.axis_mode}",
        f"closed: minimum radius below {result.closed_below_A:g} Å",
    )


def _level_label(q: float) -> str:
    return f"{q:g}".replace(".", "_")


def nan_sd(values: np.ndarray) -> np.ndarray:
    """Sample SD (ddof = 1) per column over the finite entries; NaN with fewer than 2."""
    finite = np.isfinite(values)
    count = finite.sum(axis=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        sd = np.nanstd(values, axis=0, ddof=1) if len(values) else np.full(values.shape[1], np.nan)
    return np.where(count >= 2, sd, np.nan)


def nan_percentiles(values: np.ndarray, levels) -> np.ndarray:
    if len(values) == 0:
        return np.full((len(levels), values.shape[1]), np.nan)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return np.nanpercentile(values, levels, axis=0).reshape(len(levels), values.shape[1])
