"""Every probe-radius interval that matches a measured capture radius, ranked.

Real capture curves are not monotonic, so a measured band ``r_c ± sd`` is often met on
several intervals of probe radius. Each is reported with what the scan says about its
probes (stop level, whether they pass), and the intervals are ranked by a fixed rule:

1. **widest first** (a wider interval is a match that survives a larger uncertainty in
   the probe radius; a single touching point has width 0 and ranks last);
2. ties (widths equal within 1e-9 Å): the interval whose centre's capture radius
   ``c(centre)`` lies closer to ``r_c``;
3. remaining ties: the smaller probe radius first.

No single point is "the best": the top-ranked interval is the preferred match, and its
representative probe radius is the crossing ``c(p) = r_c`` inside it (the smallest, if
several) or, without one, its centre.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

_TIE_A = 1e-9


@dataclass(frozen=True)
class MatchInterval:
    """One matching interval of probe radius.

    Attributes
    ----------
    rank : int
        1 = preferred (see the module docstring for the rule).
    low_A, high_A : float
        The interval's ends (Å of probe radius).
    width_A, centre_A : float
    centre_capture_radius_A : float
        ``c(centre)`` on the piecewise-linear curve (Å).
    crossing_A : float
        Smallest p in the interval with ``c(p) = r_c``; NaN if none.
    at_scan_end : (bool, bool)
        Whether the low / high end is the end of the scanned range.
    stop_s_A : (float, float)
        Stop levels at the two ends (Å; linear between scanned probes; for probes that
        pass, the bottleneck level); NaN when the scan gave none.
    passes : str
        ``"all"``, ``"none"`` or ``"some"``: whether the probes of the interval pass.
    """

    rank: int
    low_A: float
    high_A: float
    width_A: float
    centre_A: float
    centre_capture_radius_A: float
    crossing_A: float
    at_scan_end: tuple[bool, bool]
    stop_s_A: tuple[float, float]
    passes: str

    def to_dict(self) -> dict:
        def num(x):
            return None if not math.isfinite(x) else float(x)

        return {
            "rank": self.rank,
            "probe_radius_low_A": self.low_A,
            "probe_radius_high_A": self.high_A,
            "width_A": self.width_A,
            "centre_A": self.centre_A,
            "centre_capture_radius_A": self.centre_capture_radius_A,
            "crossing_A": num(self.crossing_A),
            "at_scan_end": list(self.at_scan_end),
            "stop_s_A": [num(x) for x in self.stop_s_A],
            "passes": self.passes,
        }

    def text(self) -> str:
        """One line for reports."""
        where = (
            f"crosses r_c at {self.crossing_A:.2f} Å"
            if math.isfinite(self.crossing_A)
            else "no crossing of r_c inside"
        )
        stops = [f"{s:.1f}" for s in self.stop_s_A if math.isfinite(s)]
        stop = f"stop/bottleneck level s = {' .. '.join(stops)} Å" if stops else "no stop level"
        end = " (reaches the end of the scan)" if any(self.at_scan_end) else ""
        return (
            f"#{self.rank}: p = {self.low_A:.2f}-{self.high_A:.2f} Å (width "
            f"{self.width_A:.2f} Å){end}; {where}; {stop}; passes: {self.passes}"
        )


def _passes_over(lo, hi, p, passes, bottleneck_A):
    if bottleneck_A is not None and math.isfinite(bottleneck_A):
        if hi <= bottleneck_A + _TIE_A:
            return "all"
        return "none" if lo > bottleneck_A + _TIE_A else "some"
    if passes is None:
        return "unknown"
    # without a bottleneck value: the scanned probes inside, and the nearer scanned probe
    # at each end
    inside = (p >= lo - _TIE_A) & (p <= hi + _TIE_A)
    idx = set(np.flatnonzero(inside).tolist())
    idx |= {int(np.argmin(np.abs(p - lo))), int(np.argmin(np.abs(p - hi)))}
    vals = {bool(passes[i]) for i in idx}
    return "all" if vals == {True} else "none" if vals == {False} else "some"


def rank_intervals(
    intervals,
    at_end,
    p: np.ndarray,
    c: np.ndarray,
    measured_A: float,
    crossings,
    *,
    stop_s_A=None,
    passes=None,
    bottleneck_A=None,
) -> tuple[MatchInterval, ...]:
    """Build and rank the matching intervals (rule in the module docstring)."""
    items = []
    for (lo, hi), end in zip(intervals, at_end, strict=True):
        centre = 0.5 * (lo + hi)
        c_mid = float(np.interp(centre, p, c))
        inside = [x for x in crossings if lo - _TIE_A <= x <= hi + _TIE_A]
        if stop_s_A is not None:
            s = np.asarray(stop_s_A, dtype=float)
            ok = np.isfinite(s)
            stop = (
                tuple(float(np.interp(x, p[ok], s[ok])) for x in (lo, hi))
                if ok.sum() >= 1
                else (math.nan, math.nan)
            )
        else:
            stop = (math.nan, math.nan)
        items.append(
            dict(
                low_A=float(lo),
                high_A=float(hi),
                width_A=float(hi - lo),
                centre_A=centre,
                centre_capture_radius_A=c_mid,
                crossing_A=float(inside[0]) if inside else math.nan,
                at_scan_end=tuple(end),
                stop_s_A=stop,
                passes=_passes_over(lo, hi, p, passes, bottleneck_A),
            )
        )
    items.sort(
        key=lambda d: (
            -round(d["width_A"] / _TIE_A) * _TIE_A,
            round(abs(d["centre_capture_radius_A"] - measured_A) / _TIE_A) * _TIE_A,
            d["low_A"],
        )
    )
    return tuple(MatchInterval(rank=k + 1, **d) for k, d in enumerate(items))
