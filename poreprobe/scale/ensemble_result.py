"""Results of a coordinate-error ensemble: bands (median and 5-95 % range) and shares.

A :class:`Band` summarises one number over the members; a
:class:`ProfileEnsemble` holds the per-member values and the bands of the
profile, the narrowest radius and its position, and (when asked for) each
probe's capture radius and stop level, the largest passing probe, the
permeation verdict's shares and the probe-radius intervals of a bench match.
Percentiles are numpy's default (linear interpolation between order
statistics); members where a value is undefined (NaN) are left out of its band
and counted in ``n``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from poreprobe._version import __version__

BAND_LEVELS = (5.0, 50.0, 95.0)


@dataclass(frozen=True)
class Band:
    """Median and 5-95 % range of one quantity over the ensemble members.

    Attributes
    ----------
    median, p5, p95 : float
        NaN when no member defines the quantity.
    n : int
        Members that define it (finite values).
    unit : str
        Unit of the three values (``"Å"`` for every band poreprobe makes now).
    """

    median: float
    p5: float
    p95: float
    n: int
    unit: str = "Å"

    @classmethod
    def of(cls, values, unit: str = "Å") -> Band:
        """The band of the finite entries of ``values``."""
        v = np.asarray(values, dtype=np.float64).reshape(-1)
        v = v[np.isfinite(v)]
        if v.size == 0:
            return cls(math.nan, math.nan, math.nan, 0, unit)
        p5, med, p95 = np.percentile(v, BAND_LEVELS)
        return cls(float(med), float(p5), float(p95), int(v.size), unit)

    @property
    def width(self) -> float:
        """``p95 - p5``."""
        return self.p95 - self.p5

    def text(self, digits: int = 2) -> str:
        """``"1.34 [1.21-1.45] Å"`` (median and 5-95 % range)."""
        if not math.isfinite(self.median):
            return "n/a"
        return (
            f"{self.median:.{digits}f} [{self.p5:.{digits}f}-{self.p95:.{digits}f}] {self.unit}"
        ).rstrip()

    def to_dict(self) -> dict:
        return {
            "median": self.median,
            "p5": self.p5,
            "p95": self.p95,
            "n": self.n,
            "unit": self.unit,
        }


def band_rows(values: np.ndarray) -> np.ndarray:
    """Per-column (p5, median, p95) of a (members, columns) array, NaN-aware: shape (3, columns)."""
    values = np.asarray(values, dtype=np.float64)
    out = np.full((3, values.shape[1]), np.nan)
    ok = np.isfinite(values).any(axis=0)
    if ok.any():
        out[:, ok] = np.nanpercentile(values[:, ok], BAND_LEVELS, axis=0)
    return out


@dataclass(frozen=True)
class ProfileEnsemble:
    """Coordinate-error ensemble of one model: per-member values and their bands.

    Lengths in Å. Model-based estimates: how much each answer moves when every
    atom is displaced within the model's own coordinate error (see
    :mod:`poreprobe.scale.coordinate_error` for the definitions); not an error
    bar on the true structure.

    Attributes
    ----------
    n_members, seed : int
    error_source : str
        ``"bfactor"``, ``"uniform"`` or ``"resolution"``.
    error_rule : str
        The rule that turned the source into per-atom errors, in words.
    sigma_median_A, sigma_max_A : float
        Median and largest per-direction coordinate error over the atoms.
    model_min_radius_A, model_min_s_A : float
        The unperturbed model's narrowest radius and its position.
    s_A : ndarray of shape (n_planes,)
        The common plane grid (the model's).
    model_radius_A : ndarray of shape (n_planes,)
        The unperturbed model's profile.
    member_radius_A : ndarray of shape (n_members, n_planes)
        Each member's profile on the common grid (NaN where open).
    radius_band_A : ndarray of shape (3, n_planes)
        p5, median and p95 of the radius per plane.
    member_min_radius_A, member_min_s_A : ndarray of shape (n_members,)
    min_radius, min_s : Band
    probe_radius_A : ndarray of shape (n_probes,) or None
        Probes scanned per member (None: no scan).
    member_capture_radius_A, member_stop_s_A : ndarray of shape (n_members, n_probes) or None
    member_passes : ndarray of bool, shape (n_members, n_probes) or None
    capture_bands, stop_bands : tuple of Band
        One per probe (empty without a scan).
    member_largest_passing_A : ndarray of shape (n_members,) or None
    largest_passing : Band or None
    ion : str or None
    member_verdict : tuple of str
        Permeation verdict of each member (empty without ``ion``).
    verdict_shares : dict
        Share (0-1) of the members for each verdict.
    model_verdict : str or None
    match_capture_radius_A, match_sd_A : float or None
        The bench capture radius matched per member (None: no match).
    member_best_probe_A : ndarray of shape (n_members,) or None
    member_intervals_A : tuple of tuple of (float, float)
        Each member's probe-radius intervals of the match.
    best_probe, interval_low, interval_high : Band or None
        Bands of the best probe and of the outer ends of the members' intervals.
    radius_set, axis_method, backend : str
    step_A : float
    n_atoms : int
    warnings : tuple of str
    source, version : str
    """

    n_members: int
    seed: int
    error_source: str
    error_rule: str
    sigma_median_A: float
    sigma_max_A: float
    model_min_radius_A: float
    model_min_s_A: float
    s_A: np.ndarray
    model_radius_A: np.ndarray
    member_radius_A: np.ndarray
    radius_band_A: np.ndarray
    member_min_radius_A: np.ndarray
    member_min_s_A: np.ndarray
    min_radius: Band
    min_s: Band
    radius_set: str
    axis_method: str
    step_A: float
    n_atoms: int
    backend: str = "serial"
    probe_radius_A: np.ndarray | None = None
    member_capture_radius_A: np.ndarray | None = None
    member_stop_s_A: np.ndarray | None = None
    member_passes: np.ndarray | None = None
    capture_bands: tuple[Band, ...] = ()
    stop_bands: tuple[Band, ...] = ()
    member_largest_passing_A: np.ndarray | None = None
    largest_passing: Band | None = None
    ion: str | None = None
    member_verdict: tuple[str, ...] = ()
    verdict_shares: dict = field(default_factory=dict)
    model_verdict: str | None = None
    match_capture_radius_A: float | None = None
    match_sd_A: float | None = None
    member_best_probe_A: np.ndarray | None = None
    member_intervals_A: tuple = ()
    best_probe: Band | None = None
    interval_low: Band | None = None
    interval_high: Band | None = None
    warnings: tuple[str, ...] = ()
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)

    CAVEAT = (
        "ensemble bands are model-based estimates: how far each number moves when the "
        "atoms are displaced within the model's own coordinate error; not a confidence "
        "interval for the true structure"
    )

    def summary_dict(self) -> dict:
        """The bands and shares without the per-member arrays."""
        out = {
            "n_members": self.n_members,
            "min_radius_A": self.min_radius.to_dict(),
            "min_s_A": self.min_s.to_dict(),
            "model_min_radius_A": self.model_min_radius_A,
            "model_min_s_A": self.model_min_s_A,
        }
        if self.probe_radius_A is not None:
            out["probes"] = {
                "probe_radius_A": self.probe_radius_A.tolist(),
                "capture_radius_A": [b.to_dict() for b in self.capture_bands],
                "stop_s_A": [b.to_dict() for b in self.stop_bands],
                "pass_share": self.member_passes.mean(axis=0).tolist(),
            }
            out["largest_passing_probe_A"] = (
                self.largest_passing.to_dict() if self.largest_passing else None
            )
        if self.ion is not None:
            out["verdict"] = {
                "ion": self.ion,
                "model": self.model_verdict,
                "shares": dict(self.verdict_shares),
            }
        if self.match_capture_radius_A is not None:
            out["match"] = {
                "capture_radius_A": self.match_capture_radius_A,
                "sd_A": self.match_sd_A,
                "best_probe_radius_A": self.best_probe.to_dict() if self.best_probe else None,
                "interval_low_A": self.interval_low.to_dict() if self.interval_low else None,
                "interval_high_A": self.interval_high.to_dict() if self.interval_high else None,
            }
        return out

    def to_dict(self) -> dict:
        """JSON-ready dictionary: definitions, summary and per-member values."""
        members = {
            "min_radius_A": self.member_min_radius_A,
            "min_s_A": self.member_min_s_A,
            "radius_A": self.member_radius_A,
        }
        if self.probe_radius_A is not None:
            members.update(
                capture_radius_A=self.member_capture_radius_A,
                stop_s_A=self.member_stop_s_A,
                passes=self.member_passes,
                largest_passing_probe_A=self.member_largest_passing_A,
            )
        if self.member_verdict:
            members["verdict"] = list(self.member_verdict)
        if self.member_best_probe_A is not None:
            members["best_probe_radius_A"] = self.member_best_probe_A
            members["probe_radius_intervals_A"] = [
                [list(iv) for iv in ivs] for ivs in self.member_intervals_A
            ]
        return {
            "version": self.version,
            "kind": "coordinate-error ensemble (model-based estimates)",
            "caveat": self.CAVEAT,
            "source": self.source,
            "n_atoms": self.n_atoms,
            "n_members": self.n_members,
            "seed": self.seed,
            "error_source": self.error_source,
            "error_rule": self.error_rule,
            "sigma_definition": "standard deviation of each atom's position along one "
            "direction (Å); displacements are isotropic Gaussian, independent per atom "
            "and member; members use numpy default_rng([seed, member])",
            "sigma_median_A": self.sigma_median_A,
            "sigma_max_A": self.sigma_max_A,
            "axis": f"the model's axis ({self.axis_method}), kept for every member",
            "radius_set": self.radius_set,
            "step_A": self.step_A,
            "band_definition": "median and 5-95 % range over the members (numpy "
            "percentiles, linear); members where a value is undefined are left out",
            "backend": self.backend,
            "summary": self.summary_dict(),
            "s_A": self.s_A,
            "model_radius_A": self.model_radius_A,
            "radius_band_A": {
                "p5": self.radius_band_A[0],
                "median": self.radius_band_A[1],
                "p95": self.radius_band_A[2],
            },
            "members": members,
            "warnings": list(self.warnings),
        }

    def report_lines(self) -> list[str]:
        """Human summary: the bands beside the model's own numbers."""
        lines = [
            f"ensemble: {self.n_members} members, coordinate error from {self.error_source} "
            f"({self.error_rule}); median {self.sigma_median_A:.2f} Å, max "
            f"{self.sigma_max_A:.2f} Å per direction; seed {self.seed}",
            f"narrowest radius: {self.model_min_radius_A:.2f} Å (model); ensemble "
            f"{self.min_radius.text()} (median [5-95 %])",
            f"narrowest at s: {self.model_min_s_A:.1f} Å (model); ensemble {self.min_s.text(1)}",
        ]
        if self.largest_passing is not None:
            lines.append(
                f"largest passing probe: ensemble {self.largest_passing.text()} "
                f"({self.largest_passing.n} of {self.n_members} members pass a scanned probe)"
            )
        if self.ion is not None:
            shares = ", ".join(f"{k} {v:.0%}" for k, v in self.verdict_shares.items() if v > 0)
            lines.append(f"verdict for {self.ion}: {self.model_verdict} (model); members: {shares}")
        if self.best_probe is not None:
            lines.append(
                f"match: best probe radius {self.best_probe.text()}; intervals from "
                f"{self.interval_low.text()} to {self.interval_high.text()}"
            )
        lines.append(f"note: {self.CAVEAT}")
        lines += [f"warning: {w}" for w in self.warnings]
        return lines
