"""The pore's own region of a plane, and the largest sphere in it.

A local maximum of the clearance in a plane (:mod:`poreprobe.geometry.planemax`) need not
be the largest sphere of the lumen: a real pore's cross-section often holds several
maxima joined by wide necks. Neither is every larger sphere in the plane part of the
pore: side pockets behind a wall are joined to the lumen only through narrow necks.

Neck criterion
--------------
From the current centre ``c0`` with radius (clearance) ``r0``, a point belongs to the
pore's region of the plane when a sphere of radius at least ``f * r0`` can slide to it
from ``c0`` without leaving the plane: the region is the connected part of
``{x in plane: clearance(x) >= f * r0}`` that holds ``c0``. The profile radius is the
largest clearance in that region. The default ``f = 0.75`` (our choice): a neck that
keeps three quarters of the lumen's radius is part of the lumen (an ion that fits the
lumen still fits through it with 25 % to spare on its radius), while side pockets behind
walls, whose necks are a small fraction of the lumen radius, stay out. Any ``f`` between
about 0.3 and 0.95 separates the two cases of the tests.

Because every point of the region has clearance at least ``f * r0`` and the maximum
``r1 >= r0``, the region of the maximum under its own threshold ``f * r1`` is part of the
first region: the result is a fixed point and taking the maximum once is enough.

Search (deterministic, vectorised over planes)
---------------------------------------------
1. A square in-plane raster of ``(2n + 1)^2`` points around ``c0``, spacing
   ``h = clip(r0 / 8, 0.1, 1.0)`` Å, ``n = 20``. The clearance is computed at the even
   points first; an odd point is queried only if the 1-Lipschitz bound from its even
   neighbours allows it to reach the threshold.
2. The 4-connected component of ``{clearance >= f * r0}`` holding ``c0``
   (``scipy.ndimage.label``). Where it reaches the raster's edge the raster is doubled
   (up to the open-plane cut-off).
3. The trust-region climber starts from the best raster local maxima of that component
   (at most four) and from the start; climbs that end outside the component are
   discarded. The largest exact clearance wins.

The neck criterion is thus applied at the raster's resolution (a neck narrower than the
threshold by less than about ``h / 2`` may be taken as passing).
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage

from poreprobe._validate import check_positive
from poreprobe.errors import InputError
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.planemax import maximise_in_planes

#: Default neck fraction f: a region point is reachable by a sphere of at least f * r.
NECK_FRACTION = 0.75
_HALF = 20  # raster half-size in points (even)
_SEEDS = 4
_CROSS = ndimage.generate_binary_structure(2, 1)
_PLANAR = np.zeros((3, 3, 3), dtype=bool)
_PLANAR[1] = _CROSS


def check_neck_fraction(value) -> float:
    """Validate a neck fraction: a number in (0, 1]."""
    f = check_positive(value, "neck_fraction")
    if f > 1.0:
        raise InputError(f"neck_fraction must be in (0, 1], got {value!r}")
    return f


def raster_spacing_A(radius_A: np.ndarray) -> np.ndarray:
    """In-plane raster spacing (Å) used for a start radius: ``clip(r / 8, 0.1, 1.0)``."""
    return np.clip(np.asarray(radius_A, dtype=np.float64) / 8.0, 0.1, 1.0)


def _raster_clearance(spheres, s, centres, h, n, threshold, cap):
    """Clearance on (T, 2n+1, 2n+1) rasters; -inf where the bound rules out the threshold."""
    t = len(s)
    m = 2 * n + 1
    off = np.arange(-n, n + 1, dtype=np.float64)
    out = np.full((t, m, m), -np.inf)

    def query(mask):
        pi, ii, jj = np.nonzero(mask)
        if pi.size == 0:
            return
        pts = np.column_stack(
            [
                centres[pi, 0] + h[pi] * off[ii],
                centres[pi, 1] + h[pi] * off[jj],
                s[pi],
            ]
        )
        out[pi, ii, jj] = spheres.clearance_A(pts, max_clearance_A=cap)

    even = np.zeros((t, m, m), dtype=bool)
    even[:, ::2, ::2] = True
    query(even)
    coarse = out[:, ::2, ::2]  # (T, n+1, n+1)
    # 1-Lipschitz upper bound at odd points from their even neighbours
    bound = np.full((t, m, m), np.inf)
    hh = h[:, None, None]
    bound[:, 1::2, ::2] = np.minimum(coarse[:, :-1], coarse[:, 1:]) + hh
    bound[:, ::2, 1::2] = np.minimum(coarse[:, :, :-1], coarse[:, :, 1:]) + hh
    quad = np.minimum(
        np.minimum(coarse[:, :-1, :-1], coarse[:, 1:, :-1]),
        np.minimum(coarse[:, :-1, 1:], coarse[:, 1:, 1:]),
    )
    bound[:, 1::2, 1::2] = quad + hh * np.sqrt(2.0)
    query(~even & (bound >= threshold[:, None, None]))
    return out


def region_maximum(
    spheres: AtomSpheres,
    s_A: np.ndarray,
    centres_A: np.ndarray,
    values_A: np.ndarray,
    cap_A: float,
    *,
    neck_fraction: float = NECK_FRACTION,
):
    """Largest clearance in each plane's pore region (see the module docstring).

    Parameters
    ----------
    spheres : AtomSpheres
        Atoms in the axis frame (u, v, s).
    s_A : ndarray of shape (P,)
        Plane heights (Å).
    centres_A : ndarray of shape (P, 2)
        Start centres (u, v), local maxima of the clearance (Å).
    values_A : ndarray of shape (P,)
        Clearance at the start centres (Å). Planes with a value <= 0 (occluded) or above
        ``cap_A`` (open) are returned unchanged.
    cap_A : float
        Open-plane cut-off (Å).
    neck_fraction : float
        The fraction f of the neck criterion, in (0, 1].

    Returns
    -------
    centres_A : ndarray of shape (P, 2)
    values_A : ndarray of shape (P,)
        Exact clearance at the returned centres (above ``cap_A`` where the region opens
        into the bulk).
    """
    f = check_neck_fraction(neck_fraction)
    s = np.asarray(s_A, dtype=np.float64)
    centres = np.array(centres_A, dtype=np.float64)
    values = np.array(values_A, dtype=np.float64)
    if centres.shape != (len(s), 2) or values.shape != (len(s),):
        raise InputError("centres_A must be (P, 2) and values_A (P,) for P planes")
    todo = np.flatnonzero((values > 0) & (values <= cap_A))
    half = _HALF
    while todo.size:
        cen, val, ss = centres[todo], values[todo], s[todo]
        h = raster_spacing_A(val)
        thr = f * val
        grid = _raster_clearance(spheres, ss, cen, h, half, thr, cap_A + 1.0)
        mask = grid >= thr[:, None, None]
        mask[:, half, half] = True  # the start itself (clearance r0 >= f r0)
        labels, _ = ndimage.label(mask, structure=_PLANAR)
        own = labels[:, half, half]
        comp = labels == own[:, None, None]
        edge = (
            comp[:, 0, :].any(axis=1)
            | comp[:, -1, :].any(axis=1)
            | comp[:, :, 0].any(axis=1)
            | comp[:, :, -1].any(axis=1)
        )
        masked = np.where(comp, grid, -np.inf)
        reached_open = masked.max(axis=(1, 2)) > cap_A
        seeds_uv, seeds_row, seed_val = _seeds(masked, cen, h, half)
        c_new, v_new = _climb_seeds(
            spheres, ss, cen, val, h, half, labels, own, seeds_uv, seeds_row, seed_val, cap_A
        )
        v_new = np.where(reached_open, np.maximum(v_new, masked.max(axis=(1, 2))), v_new)
        better = v_new > val
        centres[todo[better]] = c_new[better]
        values[todo[better]] = v_new[better]
        # a region that reaches the raster's edge may hold more: grow the raster
        grow = edge & ~reached_open & (half * h < cap_A + 2.0)
        todo = todo[grow]
        half *= 2
        if half > 16 * _HALF:
            break
    return centres, values


def _seeds(masked, cen, h, half):
    """Up to ``_SEEDS`` best raster local maxima of each plane's component."""
    peak = ndimage.maximum_filter(masked, footprint=_PLANAR, mode="constant", cval=-np.inf)
    is_peak = (masked == peak) & np.isfinite(masked)
    score = np.where(is_peak, masked, -np.inf).reshape(len(masked), -1)
    k = min(_SEEDS, score.shape[1])
    top = np.argpartition(-score, k - 1, axis=1)[:, :k]
    vals = np.take_along_axis(score, top, axis=1)
    m = 2 * half + 1
    ii, jj = np.divmod(top, m)
    uv = np.stack(
        [
            cen[:, 0:1] + h[:, None] * (ii - half),
            cen[:, 1:2] + h[:, None] * (jj - half),
        ],
        axis=2,
    )
    ok = np.isfinite(vals)
    rows = np.nonzero(ok)
    return uv[rows], rows[0], vals[rows]


def _climb_seeds(spheres, ss, cen, val, h, half, labels, own, seeds_uv, seeds_row, seed_val, cap):
    """Climb from the seeds; keep each plane's best climb that ends in its component."""
    best_c, best_v = cen.copy(), val.copy()
    if seeds_row.size == 0:
        return best_c, best_v
    c, v = maximise_in_planes(spheres, ss[seeds_row], seeds_uv, cap, delta_A=0.5)
    m = 2 * half + 1
    idx = np.rint((c - cen[seeds_row]) / h[seeds_row, None]).astype(np.int64) + half
    inside = np.all((idx >= 0) & (idx < m), axis=1)
    safe = np.clip(idx, 0, m - 1)
    lab = labels[seeds_row, safe[:, 0], safe[:, 1]]
    ok = inside & (lab == own[seeds_row])
    # a climb that left the component falls back to its raster seed (exact clearance there)
    c = np.where(ok[:, None], c, seeds_uv)
    v = np.where(ok, v, seed_val)
    order = np.lexsort((-v, seeds_row))
    first = np.ones(order.size, dtype=bool)
    first[1:] = seeds_row[order][1:] != seeds_row[order][:-1]
    pick = order[first]
    rows = seeds_row[pick]
    take = v[pick] > best_v[rows]
    best_c[rows[take]] = c[pick][take]
    best_v[rows[take]] = v[pick][take]
    return best_c, best_v
