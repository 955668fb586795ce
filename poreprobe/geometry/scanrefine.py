"""Off-grid decisions of the probe scan: bottleneck, pass / stop, stop level, from the atoms.

The grid of :mod:`poreprobe.geometry.reach` finds candidates; the answers here come from
the atoms in continuous space, with the profile's exact in-plane maximum:

``m(s)``
    The largest clearance in the pore's own region of the plane at ``s`` (exact climber
    plus the neck criterion of :mod:`poreprobe.geometry.planeregion`), started from the
    grid's widest voxel of that layer in a reference probe region. A probe of radius p
    can cross the plane at s (in a straight pore) exactly when ``m(s) >= p``.
Bottleneck clearance ``B``
    ``min_s m(s)`` along the path of the probes from the entry end to the far end: the
    smallest ``m`` over the grid layers of the path, then refined by bounded scalar
    minimisation around the smallest samples. A probe **passes** exactly when ``p <= B``.
    For a straight pore this is the profile's narrowest radius; for a bent pore whose
    narrowest passage is not across the axis it is an estimate (checked: it must lie within
    one grid spacing of the grid's own decision, else the grid decision is kept and a
    note says so).
Stop level
    Where ``m(s)`` first falls below ``p`` beyond the grid's deepest point, by bisection
    along s (tolerance 1e-4 Å); the probe's centre there is the plane maximum's centre.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.planemax import maximise_in_planes
from poreprobe.geometry.planeregion import region_maximum

_BISECT_TOL_A = 1e-4
_SAMPLE_A = 0.05


@dataclass(frozen=True)
class Bottleneck:
    """Continuous bottleneck of the probes' path.

    Attributes
    ----------
    clearance_A : float
        ``B``: the largest probe radius that gets through (Å); NaN if not found.
    s_A : float
        Its level along the axis (Å).
    centre_uvs_A : ndarray of shape (3,)
        Centre of the bottleneck sphere in the grid frame (Å).
    accepted : bool
        Whether it was used for the pass decisions (within one spacing of the grid's).
    note : str
    """

    clearance_A: float
    s_A: float
    centre_uvs_A: np.ndarray
    accepted: bool
    note: str = ""


class PlaneMaxima:
    """``m(s)``: the profile-style in-plane maximum at any level, started from a region."""

    def __init__(self, spheres: AtomSpheres, field_, cap_A: float):
        self.spheres = spheres
        self.field = field_
        self.cap = cap_A
        self.u = field_.u_A

    def starts(self, region: np.ndarray, s_A: np.ndarray, fallback_uv) -> np.ndarray:
        """Start (u, v) per level: the widest voxel of ``region`` in the nearest layer."""
        f = self.field
        clear = np.where(region, np.asarray(f.clearance_A), -np.inf)
        n_u, n_v, n_s = clear.shape
        flat = clear.reshape(n_u * n_v, n_s)
        best = flat.argmax(axis=0)
        has = np.isfinite(flat[best, np.arange(n_s)])
        k = np.clip(np.rint((np.asarray(s_A) - f.s_A[0]) / f.spacing_A).astype(int), 0, n_s - 1)
        iu, iv = np.divmod(best[k], n_v)
        uv = np.column_stack([self.u[iu], f.v_A[iv]])
        uv[~has[k]] = fallback_uv
        return uv

    def __call__(self, s_A, start_uv, *, region: bool = True):
        """Centres and values of ``m`` at levels ``s_A``; ``region=False``: the local
        maximum climbed from ``start_uv`` only (for refinements next to a known maximum)."""
        s = np.atleast_1d(np.asarray(s_A, dtype=np.float64))
        start = np.broadcast_to(np.asarray(start_uv, dtype=np.float64), (len(s), 2)).copy()
        c, v = maximise_in_planes(self.spheres, s, start, self.cap, delta_A=0.25)
        if region:
            c, v = region_maximum(self.spheres, s, c, v, self.cap)
        return c, v


def continuous_bottleneck(
    pm: PlaneMaxima,
    region: np.ndarray,
    s_path_A: np.ndarray,
    p_pass: float,
    p_fail: float,
    fallback_uv,
) -> Bottleneck:
    """``B = min_s m(s)`` along the path levels ``s_path_A`` (see the module docstring).

    ``region`` is the reference probe region that gives the start of each plane;
    ``p_pass`` / ``p_fail`` are the largest probe passing and the smallest probe failing
    on the grid (NaN / inf when none), which bound the accepted answer within one spacing.
    """
    from scipy.optimize import minimize_scalar

    h = pm.field.spacing_A
    s_path = np.asarray(s_path_A, dtype=np.float64)
    if s_path.size == 0:
        return Bottleneck(math.nan, math.nan, np.full(3, np.nan), False, "no path levels")
    starts = pm.starts(region, s_path, fallback_uv)
    c, v = pm(s_path, starts)
    v = np.where(v > pm.cap, np.inf, v)
    if not np.isfinite(v).any():
        return Bottleneck(math.nan, math.nan, np.full(3, np.nan), False, "every level open")
    best_s, best_v, best_c = math.nan, math.inf, np.full(2, np.nan)
    for j in np.argsort(v)[:2]:  # refine around the two smallest samples
        if not np.isfinite(v[j]):
            continue
        lo, hi = s_path[j] - h, s_path[j] + h
        fine = np.arange(lo, hi + 1e-9, _SAMPLE_A)
        cf, vf = pm(fine, np.broadcast_to(c[j], (len(fine), 2)))
        k = int(np.argmin(vf))
        a, b = fine[max(k - 1, 0)], fine[min(k + 1, len(fine) - 1)]
        res = minimize_scalar(
            lambda x, uv=cf[k]: float(pm(x, uv, region=False)[1][0]),
            bounds=(a, b),
            method="bounded",
            options={"xatol": 1e-4},
        )
        cands = [(float(vf[k]), float(fine[k]), cf[k])]
        cx, vx = pm(res.x, cf[k])
        cands.append((float(vx[0]), float(res.x), cx[0]))
        val, s_b, c_b = min(cands, key=lambda t: t[0])
        if val < best_v:
            best_s, best_v, best_c = s_b, val, c_b
    centre = np.array([best_c[0], best_c[1], best_s])
    lower = (p_pass - h) if np.isfinite(p_pass) else -np.inf
    upper = (p_fail + h) if np.isfinite(p_fail) else np.inf
    if lower <= best_v <= upper:
        return Bottleneck(best_v, best_s, centre, True)
    return Bottleneck(
        best_v,
        best_s,
        centre,
        False,
        f"off-grid bottleneck {best_v:.3f} Å is more than one spacing from the grid's "
        "decision; the grid decision is kept",
    )


def stop_level(
    pm: PlaneMaxima, p: float, s_from: float, s_to: float, start_uv, *, region: bool = True
):
    """Where ``m(s)`` first drops below ``p`` going from ``s_from`` towards ``s_to``.

    ``m(s_from) >= p`` is expected. Returns (s_star, centre_uv, found); ``found`` is False
    when ``m`` stays at or above ``p`` all the way (then ``s_to`` is returned) or is below
    ``p`` already at ``s_from``.
    """
    c0, v0 = pm(s_from, start_uv, region=region)
    if v0[0] < p:
        return s_from, c0[0], False
    n = max(int(math.ceil(abs(s_to - s_from) / _SAMPLE_A)), 1)
    levels = s_from + (s_to - s_from) * np.arange(0, n + 1) / n
    c, v = pm(levels, c0[0], region=region)
    below = np.flatnonzero(v < p)
    if below.size == 0:
        return float(s_to), c[-1], False
    j = int(below[0])
    lo, hi, c_lo = float(levels[j - 1]), float(levels[j]), c[j - 1]
    # bracket refinement: 10 levels per round, each round one vectorised call
    while abs(hi - lo) > _BISECT_TOL_A:
        mids = lo + (hi - lo) * np.arange(1, 10) / 10
        cm, vm = pm(mids, c_lo, region=False)
        ok = vm >= p
        last = int(np.flatnonzero(~ok)[0]) if (~ok).any() else len(mids)
        if last > 0:
            lo, c_lo = float(mids[last - 1]), cm[last - 1]
        if last < len(mids):
            hi = float(mids[last])
    return lo, c_lo, True
