"""A slow, independent brute-force reference for the pore radius in one plane.

Written for the tests, sharing no code with poreprobe's profile: a dense square raster
of the plane (spacing 0.1 Å) around the axis, clearance ``min_i (|x - a_i| - r_i)`` from
scipy's KD-tree over every atom within reach, the pore's own region found by a flood
fill of the raster and the best raster point refined by Nelder-Mead in the plane.

The pore's region in a plane: starting from the raster point of largest clearance within
``seed_A`` of the axis, the 4-connected raster points whose clearance is at least half
the seed's (a sphere of half the radius can slide between them within the plane).
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage, optimize
from scipy.spatial import cKDTree


def _basis(direction):
    d = np.asarray(direction, float) / np.linalg.norm(direction)
    ref = np.eye(3)[int(np.argmin(np.abs(d)))]
    e1 = np.cross(d, ref)
    e1 /= np.linalg.norm(e1)
    return d, e1, np.cross(d, e1)


class PlaneClearance:
    """Exact clearance of points: the k nearest atom centres, widened until provably exact."""

    def __init__(self, coords_A, radii_A):
        self.coords = np.asarray(coords_A, float)
        self.radii = np.asarray(radii_A, float)
        self.tree = cKDTree(self.coords)
        self.rmax = float(self.radii.max())

    def __call__(self, pts):
        pts = np.atleast_2d(np.asarray(pts, float))
        k = min(32, len(self.coords))
        while True:
            dist, idx = self.tree.query(pts, k=k)
            dist, idx = dist.reshape(len(pts), -1), idx.reshape(len(pts), -1)
            best = (dist - self.radii[idx]).min(axis=1)
            # an atom farther than the k-th centre has clearance >= d_k - r_max
            if k == len(self.coords) or np.all(dist[:, -1] - self.rmax >= best):
                return best
            k = min(4 * k, len(self.coords))


def brute_plane_radius_A(
    coords_A, radii_A, point_A, direction, s_A, *, half_width_A=8.0, spacing_A=0.1, seed_A=1.0
):
    """Largest empty sphere centred in the plane at ``s_A`` within the pore's region (Å)."""
    d, e1, e2 = _basis(direction)
    centre = np.asarray(point_A, float) + s_A * d
    ticks = np.arange(-half_width_A, half_width_A + 1e-9, spacing_A)
    u, v = np.meshgrid(ticks, ticks, indexing="ij")
    pts = centre + u[..., None] * e1 + v[..., None] * e2
    clear = PlaneClearance(coords_A, radii_A)
    field = clear(pts.reshape(-1, 3)).reshape(u.shape)
    near = np.hypot(u, v) <= seed_A
    seed = np.unravel_index(np.argmax(np.where(near, field, -np.inf)), field.shape)
    labels, _ = ndimage.label(field >= 0.5 * field[seed])
    region = labels == labels[seed]
    best = np.unravel_index(np.argmax(np.where(region, field, -np.inf)), field.shape)
    start = np.array([u[best], v[best]])

    def neg(x):
        return -clear(centre + x[0] * e1 + x[1] * e2)[0]

    res = optimize.minimize(
        neg, start, method="Nelder-Mead", options={"xatol": 1e-5, "fatol": 1e-7}
    )
    return float(max(-res.fun, field[best]))
