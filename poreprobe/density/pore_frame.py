"""The map on the pore frame: the pore lumen, the centre line and the map's own pore radius.

Pore lumen
----------
A point belongs to the lumen when its plane (the profile plane nearest in s) is enclosed
(finite profile radius) and its distance from that plane's sphere centre, measured across
the axis, is below the profile radius plus a margin.

Map radius profile (:func:`map_radius_profile`)
-----------------------------------------------
In each profile plane the map is sampled (trilinear) on a square grid of spacing ``h``
centred on the model's sphere centre (the axis point where the model's plane is open).
Points above the contour are density. The exact Euclidean distance transform of the
density-free points (``scipy.ndimage.distance_transform_edt``, one plane at a time: the
spacing across planes is set so large that no distance crosses a plane) gives, at each
free point, the radius of the largest density-free disk centred there, to within the grid
spacing; ``h / 2`` is subtracted, since the contour crosses halfway between a free and a
dense grid point on average. From the centre, each plane climbs to the local maximum of
that radius (steepest ascent over the 8 neighbours, all planes at once), the analogue of
the model profile's largest sphere around the axis. A plane whose disk reaches the edge of
the sampled square is open (NaN). A centre inside density gives radius 0: at this contour
the map is closed there.
"""

from __future__ import annotations

import numpy as np

from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.density_map import DensityMap


def plane_centres_A(profile: RadiusProfile) -> np.ndarray:
    """Each plane's sphere centre, or the axis point at that s where the plane is open."""
    axis = profile.axis
    on_axis = axis.point_A + profile.s_A[:, None] * axis.direction
    centre = np.asarray(profile.center_A, dtype=np.float64)
    return np.where(np.isfinite(centre), centre, on_axis)


def lumen_mask(points_A, profile: RadiusProfile, margin_A: float) -> np.ndarray:
    """Which points lie in the pore lumen (profile radius plus ``margin_A``, enclosed planes)."""
    pts = np.asarray(points_A, dtype=np.float64).reshape(-1, 3)
    axis = profile.axis
    s = axis.s_A(pts)
    step = profile.step_A
    k = np.rint((s - profile.s_A[0]) / step).astype(np.int64)
    inside_s = (k >= 0) & (k < len(profile.s_A))
    k = np.clip(k, 0, len(profile.s_A) - 1)
    radius = profile.radius_A[k]
    rel = pts - plane_centres_A(profile)[k]
    rel -= (rel @ axis.direction)[:, None] * axis.direction
    dist = np.linalg.norm(rel, axis=1)
    with np.errstate(invalid="ignore"):
        return inside_s & np.isfinite(radius) & (dist < radius + margin_A)


def centre_line_values(dmap: DensityMap, profile: RadiusProfile) -> np.ndarray:
    """Map value at every plane's centre (NaN outside the map)."""
    return dmap.sample(plane_centres_A(profile))


def _climb(edt: np.ndarray, start: np.ndarray) -> np.ndarray:
    """Steepest ascent on each plane's distance map from ``start`` (plane, 2) indices."""
    n_planes, nu, nv = edt.shape
    pos = start.copy()
    rows = np.arange(n_planes)
    moves = np.array([(du, dv) for du in (-1, 0, 1) for dv in (-1, 0, 1) if du or dv])
    for _ in range(nu + nv):
        cand = pos[:, None, :] + moves[None, :, :]
        cand[..., 0] = np.clip(cand[..., 0], 0, nu - 1)
        cand[..., 1] = np.clip(cand[..., 1], 0, nv - 1)
        vals = edt[rows[:, None], cand[..., 0], cand[..., 1]]
        best = np.argmax(vals, axis=1)
        better = vals[rows, best] > edt[rows, pos[:, 0], pos[:, 1]]
        if not better.any():
            break
        pos[better] = cand[rows[better], best[better]]
    return pos


def map_radius_profile(
    dmap: DensityMap,
    profile: RadiusProfile,
    contour: float,
    *,
    half_width_A: float,
    spacing_A: float = 0.25,
) -> tuple[np.ndarray, np.ndarray]:
    """Radius of the largest density-free disk per plane, and its centre (module docstring).

    Parameters
    ----------
    dmap : DensityMap
    profile : RadiusProfile
    contour : float
        Density threshold (map units).
    half_width_A : float
        Half the side of the square sampled in each plane (Å): planes whose disk reaches it
        are open.
    spacing_A : float
        Grid spacing in the plane (Å).

    Returns
    -------
    radius_A : ndarray (n_planes,)
        NaN where open or where the map does not cover the plane's square.
    centre_A : ndarray (n_planes, 3)
    """
    from scipy.ndimage import distance_transform_edt

    axis = profile.axis
    e1, e2 = axis.basis()
    n_half = int(np.ceil(half_width_A / spacing_A))
    t = np.arange(-n_half, n_half + 1) * spacing_A
    uu, vv = np.meshgrid(t, t, indexing="ij")
    offsets = uu[..., None] * e1 + vv[..., None] * e2  # (n, n, 3)
    centres = plane_centres_A(profile)
    pts = centres[:, None, None, :] + offsets[None]
    values = dmap.sample(pts.reshape(-1, 3)).reshape(pts.shape[:3])
    covered = np.isfinite(values).all(axis=(1, 2))
    free = ~(values > contour)  # NaN (outside the map) counts as free; such planes are dropped
    free[:, 0, :] = free[:, -1, :] = False  # the square's edge: a disk reaching it is open
    free[:, :, 0] = free[:, :, -1] = False
    edt = distance_transform_edt(free, sampling=(profile.step_A, spacing_A, spacing_A))
    start = np.full((len(centres), 2), n_half)
    pos = _climb(edt, start)
    best = edt[np.arange(len(centres)), pos[:, 0], pos[:, 1]]
    radius = np.maximum(best - spacing_A / 2.0, 0.0)
    radius[best == 0] = 0.0
    edge = np.minimum(pos, 2 * n_half - pos).min(axis=1) * spacing_A
    open_plane = best >= edge - 1e-9
    radius[open_plane & (best > 0)] = np.nan
    radius[~covered] = np.nan
    centre = centres + t[pos[:, 0]][:, None] * e1 + t[pos[:, 1]][:, None] * e2
    centre[~np.isfinite(radius)] = np.nan
    return radius, centre
