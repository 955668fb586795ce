"""Match a measured capture radius against a structure's capture curve.

The probe-size scan gives, for each probe radius p, the capture radius c(p) the
structure offers to a probe of that size. A current measured at the bench gives a
capture radius r_c ± sd (:mod:`poreprobe.bench.capture`). The match asks which probe
sizes, read as effective ion radii, make the structure agree with the bench:

* the curve is taken as piecewise linear between the scanned probe radii, and
  only over the scanned range (never extrapolated);
* **intervals**: every p where ``r_c - sd <= c(p) <= r_c + sd``, each with its
  stop level and whether its probes pass, **ranked** by a fixed rule (widest first,
  then the centre's capture radius closest to r_c, then the smaller p; see
  :mod:`poreprobe.bench.match_intervals`);
* **representative p**: the crossing c(p) = r_c inside the top-ranked interval
  (else its centre) - never a single spike point picked over a wider match; when the
  curve crosses r_c several times a warning says so; with no interval at all, the
  scanned p whose c(p) is closest to r_c (flagged as not exact);
* **ion radii**: the ion table's crystal (Shannon 1976), Stokes (from D) and
  hydrated (Nightingale 1959) radii are placed on the curve, so the user sees
  which picture of the ion fits the measured band.

This is a comparison of two model estimates, not a measurement of the ion's size.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.bench.ions import Ion, get_ion
from poreprobe.bench.match_intervals import MatchInterval, rank_intervals
from poreprobe.errors import InputError, QualityWarning

_TOL_A = 1e-9
ION_RADIUS_KINDS = ("crystal", "Stokes", "hydrated")


@dataclass(frozen=True)
class IonRadiusComparison:
    """One ion radius placed on the capture curve.

    Attributes
    ----------
    kind : str
        ``"crystal"``, ``"Stokes"`` or ``"hydrated"``.
    radius_A : float
        The ion radius, read as a probe radius (Å).
    in_scan_range : bool
        Whether the radius lies within the scanned probe radii.
    capture_radius_A : float
        c(p) at that radius (NaN outside the scan).
    deviation_sd : float
        ``(c(p) - r_c) / sd`` (NaN outside the scan or when sd = 0).
    within_band : bool
        Whether c(p) lies within ``r_c ± sd``.
    """

    kind: str
    radius_A: float
    in_scan_range: bool
    capture_radius_A: float
    deviation_sd: float
    within_band: bool

    def to_dict(self) -> dict:
        def num(x):
            return None if not math.isfinite(x) else float(x)

        return {
            "kind": self.kind,
            "radius_A": self.radius_A,
            "in_scan_range": self.in_scan_range,
            "capture_radius_A": num(self.capture_radius_A),
            "deviation_sd": num(self.deviation_sd),
            "within_band": self.within_band,
        }


@dataclass(frozen=True)
class CaptureMatch:
    """Probe radii whose capture radius agrees with a measured one.

    Attributes
    ----------
    probe_radius_A, capture_radius_A : ndarray of shape (n_p,)
        The capture curve that was matched (probe radius increasing).
    measured_capture_radius_A, measured_sd_A : float
        The bench value r_c and the half-width of the band.
    intervals_A : tuple of (float, float)
        Probe-radius intervals where the curve lies within the band, increasing.
    intervals_at_scan_end : tuple of (bool, bool)
        Per interval: whether its lower / upper end is the end of the scan (so the
        true interval may extend further).
    best_probe_radius_A : float
        Best p (see the module docstring).
    best_exact : bool
        Whether c(best p) equals r_c (a crossing) rather than the nearest point.
    best_capture_radius_A : float
        c(best p).
    crossings_A : tuple of float
        Every p where c(p) = r_c.
    ranked_intervals : tuple of MatchInterval
        Every matching interval with its stop level and pass decision, ranked (rank 1
        first).
    ion : str or None
        Ion symbol whose radii were compared.
    ion_radii : tuple of IonRadiusComparison
    source : str
        Where the curve came from (structure, scan settings).
    version : str
    """

    probe_radius_A: np.ndarray
    capture_radius_A: np.ndarray
    measured_capture_radius_A: float
    measured_sd_A: float
    intervals_A: tuple[tuple[float, float], ...]
    intervals_at_scan_end: tuple[tuple[bool, bool], ...]
    best_probe_radius_A: float
    best_exact: bool
    best_capture_radius_A: float
    crossings_A: tuple[float, ...]
    ion: str | None
    ion_radii: tuple[IonRadiusComparison, ...]
    ranked_intervals: tuple[MatchInterval, ...] = ()
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("probe_radius_A", "capture_radius_A"):
            getattr(self, name).setflags(write=False)

    @property
    def within_band(self) -> bool:
        """Whether any scanned probe size agrees with the measured band."""
        return bool(self.intervals_A)

    @property
    def fitting_ion_radii(self) -> tuple[str, ...]:
        """Kinds of ion radius whose c(p) lies in the band."""
        return tuple(c.kind for c in self.ion_radii if c.within_band)

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "source": self.source,
            "note": "comparison of two model estimates; the curve is linear between scanned "
            "probe radii and is not extrapolated",
            "measured_capture_radius_A": self.measured_capture_radius_A,
            "measured_sd_A": self.measured_sd_A,
            "probe_radius_A_best": self.best_probe_radius_A,
            "best_exact": self.best_exact,
            "best_capture_radius_A": self.best_capture_radius_A,
            "probe_radius_A_intervals": [list(iv) for iv in self.intervals_A],
            "intervals_at_scan_end": [list(e) for e in self.intervals_at_scan_end],
            "crossings_A": list(self.crossings_A),
            "intervals": [iv.to_dict() for iv in self.ranked_intervals],
            "ranking": "widest interval first; ties: centre's capture radius closest to the "
            "measured one; then the smaller probe radius",
            "within_band": self.within_band,
            "ion": self.ion,
            "ion_radii": [c.to_dict() for c in self.ion_radii],
            "fitting_ion_radii": list(self.fitting_ion_radii),
            "curve": {
                "probe_radius_A": self.probe_radius_A.tolist(),
                "capture_radius_A": self.capture_radius_A.tolist(),
            },
        }


def _as_curve(probe_radius_A, capture_radius_A) -> tuple[np.ndarray, np.ndarray]:
    try:
        p = np.array(probe_radius_A, dtype=float).reshape(-1)
        c = np.array(capture_radius_A, dtype=float).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise InputError("probe_radius_A and capture_radius_A must be numeric arrays") from exc
    if p.shape != c.shape:
        raise InputError(
            f"probe_radius_A and capture_radius_A must have the same length, got "
            f"{p.size} and {c.size}"
        )
    if p.size < 2:
        raise InputError(f"the capture curve needs at least 2 probe radii, got {p.size}")
    for name, arr in (("probe_radius_A", p), ("capture_radius_A", c)):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            raise InputError(f"{name} holds NaN or infinite values (index {int(bad[0])})")
        if (arr < 0).any():
            raise InputError(f"{name} must be >= 0, got {float(arr.min())}")
    if (np.diff(p) <= 0).any():
        raise InputError("probe_radius_A must be strictly increasing")
    return p, c


def _segment_band(p: np.ndarray, c: np.ndarray, lo: float, hi: float) -> list[list[float]]:
    """Per-segment sub-intervals of p where lo <= c(p) <= hi (c linear on each segment)."""
    pieces = []
    for i in range(p.size - 1):
        p0, p1, c0, c1 = p[i], p[i + 1], c[i], c[i + 1]
        if c1 == c0:
            if lo - _TOL_A <= c0 <= hi + _TOL_A:
                pieces.append([p0, p1])
            continue
        t_a, t_b = sorted(((lo - c0) / (c1 - c0), (hi - c0) / (c1 - c0)))
        t_a, t_b = max(t_a, 0.0), min(t_b, 1.0)
        if t_a <= t_b:
            pieces.append([p0 + t_a * (p1 - p0), p0 + t_b * (p1 - p0)])
    merged: list[list[float]] = []
    for a, b in pieces:
        if merged and a <= merged[-1][1] + _TOL_A:
            merged[-1][1] = max(merged[-1][1], b)
        else:
            merged.append([a, b])
    return merged


def _crossings(p: np.ndarray, c: np.ndarray, target: float) -> list[float]:
    """Every p where the piecewise-linear curve equals ``target`` (flat runs: their start)."""
    out: list[float] = []
    for i in range(p.size - 1):
        d0, d1 = c[i] - target, c[i + 1] - target
        if d0 == 0:
            if i > 0 and c[i - 1] == target:
                continue  # inside a flat run already reported at its start
            x = p[i]
        elif d0 * d1 < 0:
            x = p[i] + d0 / (d0 - d1) * (p[i + 1] - p[i])
        elif d1 == 0 and i == p.size - 2:
            x = p[i + 1]
        else:
            continue
        if not out or x > out[-1] + _TOL_A:
            out.append(float(x))
    return out


def match_capture_radius(
    probe_radius_A,
    capture_radius_A,
    measured_A: float,
    sd_A: float,
    *,
    ion: str | Ion | None = None,
    source: str = "",
    stop_s_A=None,
    passes=None,
    bottleneck_A: float | None = None,
) -> CaptureMatch:
    """Probe radii at which a capture curve agrees with a measured capture radius.

    Parameters
    ----------
    probe_radius_A : array_like of shape (n_p,)
        Probe radii of the scan (Å, >= 0, strictly increasing, n_p >= 2).
    capture_radius_A : array_like of shape (n_p,)
        Capture radius c(p) for each probe (Å, >= 0; 0 for a probe that never
        enters).
    measured_A : float
        Measured capture radius r_c (Å, > 0), e.g. from
        :func:`poreprobe.bench.capture.estimate_capture_radius`.
    sd_A : float
        Half-width of the band (Å, >= 0), usually the SD of r_c.
    ion : str or Ion, optional
        Ion whose crystal, Stokes and hydrated radii are placed on the curve.
    source : str
        Description of the curve's origin, recorded in the result.
    stop_s_A, passes : array_like of shape (n_p,), optional
        The scan's stop levels (Å) and pass decisions, reported per interval.
    bottleneck_A : float, optional
        The scan's off-grid bottleneck clearance: probes pass exactly when p <= it.

    Returns
    -------
    CaptureMatch

    Warns
    -----
    QualityWarning
        When the curve crosses r_c more than once (the best p is then the
        smallest crossing), or never comes within the band.
    """
    p, c = _as_curve(probe_radius_A, capture_radius_A)
    r = check_positive(measured_A, "measured_A")
    sd = check_positive(sd_A, "sd_A", allow_zero=True)
    ion_obj = get_ion(ion) if isinstance(ion, str) else ion

    merged = _segment_band(p, c, r - sd, r + sd)
    intervals = tuple((float(a), float(b)) for a, b in merged)
    at_end = tuple((abs(a - p[0]) <= _TOL_A, abs(b - p[-1]) <= _TOL_A) for a, b in intervals)
    crossings = _crossings(p, c, r)
    for name, arr in (("stop_s_A", stop_s_A), ("passes", passes)):
        if arr is not None and np.shape(arr) != p.shape:
            raise InputError(f"{name} must have {p.size} values, got shape {np.shape(arr)}")
    ranked = rank_intervals(
        intervals,
        at_end,
        p,
        c,
        r,
        crossings,
        stop_s_A=stop_s_A,
        passes=passes,
        bottleneck_A=bottleneck_A,
    )
    if len(crossings) > 1 or len(intervals) > 1:
        warnings.warn(
            f"the capture curve equals r_c = {r:.3g} Å at {len(crossings)} probe "
            f"radii ({', '.join(f'{x:.2f}' for x in crossings)} Å) and meets the band on "
            f"{len(intervals)} intervals; all are listed, ranked widest first",
            QualityWarning,
            stacklevel=2,
        )
    if ranked:
        top = ranked[0]
        exact = math.isfinite(top.crossing_A)
        best = top.crossing_A if exact else top.centre_A
        best_c = float(np.interp(best, p, c))
    elif crossings:
        best, exact = crossings[0], True
        best_c = float(np.interp(best, p, c))
    else:
        k = int(np.argmin(np.abs(c - r)))
        best, exact, best_c = float(p[k]), False, float(c[k])
    if not intervals:
        warnings.warn(
            f"no scanned probe radius gives a capture radius within {r:.3g} ± "
            f"{sd:.2g} Å (curve spans {c.min():.3g} to {c.max():.3g} Å); the best "
            "probe radius is only the nearest point",
            QualityWarning,
            stacklevel=2,
        )

    comparisons: list[IonRadiusComparison] = []
    if ion_obj is not None:
        values = (ion_obj.crystal_radius_A, ion_obj.stokes_radius_A, ion_obj.hydrated_radius_A)
        for kind, radius in zip(ION_RADIUS_KINDS, values, strict=True):
            inside = p[0] - _TOL_A <= radius <= p[-1] + _TOL_A
            cap = float(np.interp(radius, p, c)) if inside else math.nan
            dev = (cap - r) / sd if inside and sd > 0 else math.nan
            within = inside and any(a - _TOL_A <= radius <= b + _TOL_A for a, b in intervals)
            comparisons.append(
                IonRadiusComparison(kind, float(radius), bool(inside), cap, dev, bool(within))
            )
    return CaptureMatch(
        probe_radius_A=p,
        capture_radius_A=c,
        measured_capture_radius_A=r,
        measured_sd_A=sd,
        intervals_A=intervals,
        intervals_at_scan_end=at_end,
        best_probe_radius_A=float(best),
        best_exact=exact,
        best_capture_radius_A=best_c,
        crossings_A=tuple(crossings),
        ion=ion_obj.symbol if ion_obj is not None else None,
        ion_radii=tuple(comparisons),
        ranked_intervals=ranked,
        source=source,
    )


def match_scan(
    scan, measured_A: float, sd_A: float, *, ion: str | Ion | None = None
) -> CaptureMatch:
    """:func:`match_capture_radius` on a probe-size scan result.

    ``scan`` is anything with ``probe_radius_A`` and ``capture_radius_A`` arrays
    (a :class:`poreprobe.geometry.probes.ProbeScan`); its ``source`` is recorded. Probes
    whose capture radius is undefined (NaN; the scan's notes say why) are left
    out of the curve with a warning.
    """
    try:
        p = np.asarray(scan.probe_radius_A, dtype=float)
        c = np.asarray(scan.capture_radius_A, dtype=float)
    except AttributeError as exc:
        raise InputError("scan must have probe_radius_A and capture_radius_A arrays") from exc
    undefined = ~np.isfinite(c)
    if undefined.any() and p.shape == c.shape:
        warnings.warn(
            "capture radius undefined for probe radii "
            f"{', '.join(f'{x:g}' for x in p[undefined])} Å; left out of the match",
            QualityWarning,
            stacklevel=2,
        )
        p, c = p[~undefined], c[~undefined]
    stop = getattr(scan, "stop_s_A", None)
    ok_pass = getattr(scan, "passes", None)
    keep = ~undefined if undefined.any() else slice(None)
    return match_capture_radius(
        p,
        c,
        measured_A,
        sd_A,
        ion=ion,
        source=str(getattr(scan, "source", "") or "probe-size scan"),
        stop_s_A=None if stop is None else np.asarray(stop, dtype=float)[keep],
        passes=None if ok_pass is None else np.asarray(ok_pass, dtype=bool)[keep],
        bottleneck_A=getattr(scan, "bottleneck_clearance_A", None),
    )
