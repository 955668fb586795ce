"""Slow, independent brute-force references for the profile and the probe scan.

Written for the tests only; none of poreprobe's geometry code is used (only numpy and
scipy), so poreprobe's results can be checked against them on real structures.

Profile (``plane_radius``): per plane, a dense in-plane raster of the clearance
``min_i (|x - a_i| - r_i)`` (cKDTree, exact), a discrete climb from the axis point, a
local refinement of that climb, the flood fill over the region criterion (the 4-connected
part of ``{clearance >= f * r0}`` holding the start), and a local refinement of the best
raster points of that part by sequential quadratic programming (maximise t subject to
``|x - a_i| - r_i >= t`` for the nearby atoms).

Scan (``flood_capture``): a 3-D raster flood fill of the probe-centre region
``{clearance >= p}`` from the entry end, its deepest level, and the area of the swept
region's cross-section there on a fine raster.
"""

from __future__ import annotations

import numpy as np
from scipy import ndimage, optimize
from scipy.spatial import cKDTree


def frame_basis(direction):
    """Two unit vectors perpendicular to ``direction`` (our own choice of basis)."""
    d = np.asarray(direction, dtype=float)
    d = d / np.linalg.norm(d)
    helper = np.array([1.0, 0, 0]) if abs(d[0]) < 0.9 else np.array([0, 1.0, 0])
    e1 = np.cross(d, helper)
    e1 /= np.linalg.norm(e1)
    return e1, np.cross(d, e1), d


class Clearance:
    """Exact clearance from atom spheres (k nearest by centre, checked, else all atoms)."""

    def __init__(self, coords, radii):
        self.coords = np.asarray(coords, dtype=float)
        self.radii = np.asarray(radii, dtype=float)
        self.tree = cKDTree(self.coords)
        self.rmax = float(self.radii.max())
        self.rmin = float(self.radii.min())

    def __call__(self, pts):
        pts = np.asarray(pts, dtype=float).reshape(-1, 3)
        k = min(24, len(self.coords))
        d, j = self.tree.query(pts, k=k)
        d, j = d.reshape(len(pts), k), j.reshape(len(pts), k)
        val = (d - self.radii[j]).min(axis=1)
        unsure = np.flatnonzero(d[:, -1] - self.rmax < val)
        for i in unsure:  # rare: settle against every atom
            val[i] = (np.linalg.norm(self.coords - pts[i], axis=1) - self.radii).min()
        return val


def _refine(clear, point3, fixed_axis_value=None, plane=None, radius_guess=3.0):
    """Local maximum of the clearance near ``point3`` (in a plane if ``plane`` is given).

    SLSQP on (x, t): maximise t subject to |x - a_i| - r_i >= t for the atoms near the
    start; ``plane`` = (origin, e1, e2) restricts x to origin + a e1 + b e2.
    """
    reach = max(radius_guess, 0.0) + clear.rmax + 3.0
    near = clear.tree.query_ball_point(point3, reach)
    if not near:
        return point3, float(clear(point3)[0])
    a, r = clear.coords[near], clear.radii[near]
    origin, e1, e2 = plane

    def pos(z):
        return origin + z[0] * e1 + z[1] * e2

    def cons(z):
        return np.linalg.norm(pos(z) - a, axis=1) - r - z[2]

    z0 = np.array([(point3 - origin) @ e1, (point3 - origin) @ e2, float(clear(point3)[0])])
    res = optimize.minimize(
        lambda z: -z[2],
        z0,
        method="SLSQP",
        bounds=[(z0[0] - 1.5, z0[0] + 1.5), (z0[1] - 1.5, z0[1] + 1.5), (None, None)],
        constraints=[{"type": "ineq", "fun": cons}],
        options={"ftol": 1e-12, "maxiter": 500},
    )
    best = pos(res.x)
    value = float(clear(best)[0])
    start_value = float(clear(point3)[0])
    if value < start_value:
        return point3, start_value
    return best, value


def plane_radius(
    clear: Clearance,
    point,
    direction,
    s,
    *,
    neck_fractions=(0.75,),
    half_width=10.0,
    spacing=0.1,
    n_refine=6,
):
    """Largest clearance of the pore region of the plane at ``s`` (brute force).

    Returns a list of (radius, centre), one per neck fraction; radius is the signed
    clearance (negative if occluded).
    """
    e1, e2, d = frame_basis(direction)
    origin = np.asarray(point, dtype=float) + s * d
    g = np.arange(-half_width, half_width + spacing / 2, spacing)
    uu, vv = np.meshgrid(g, g, indexing="ij")
    pts = origin + uu[..., None] * e1 + vv[..., None] * e2
    c = clear(pts.reshape(-1, 3)).reshape(uu.shape)
    # discrete steepest ascent (8 neighbours) from the raster point on the axis
    i = j = len(g) // 2
    while True:
        i0, i1, j0, j1 = max(i - 1, 0), min(i + 2, len(g)), max(j - 1, 0), min(j + 2, len(g))
        win = c[i0:i1, j0:j1]
        a, b = np.unravel_index(np.argmax(win), win.shape)
        if win[a, b] <= c[i, j]:
            break
        i, j = i0 + a, j0 + b
    start, r0 = _refine(clear, pts[i, j], plane=(origin, e1, e2), radius_guess=c[i, j])
    if r0 <= 0:
        return [(r0, start)] * len(neck_fractions)
    # flood from the raster point nearest the refined start (the refinement may have moved)
    half = len(g) // 2
    i = int(np.clip(np.rint((start - origin) @ e1 / spacing) + half, 0, len(g) - 1))
    j = int(np.clip(np.rint((start - origin) @ e2 / spacing) + half, 0, len(g) - 1))
    return [
        _region_best(clear, c, pts, g, (i, j), (origin, e1, e2), r0, start, f, spacing, n_refine)
        for f in neck_fractions
    ]


def _region_best(clear, c, pts, g, ij, plane, r0, start, neck_fraction, spacing, n_refine):
    origin, e1, e2 = plane
    i, j = ij
    lab, _ = ndimage.label(c >= neck_fraction * r0)
    own = lab[i, j]
    if own == 0:
        return r0, start
    comp = np.where(lab == own, c, -np.inf)
    peaks = (comp == ndimage.maximum_filter(comp, size=3, mode="constant", cval=-np.inf)) & (
        np.isfinite(comp)
    )
    cand = np.argwhere(peaks)
    cand = cand[np.argsort(-comp[peaks])][:n_refine]
    best, best_c = r0, start
    for a, b in cand:
        x, v = _refine(clear, pts[a, b], plane=(origin, e1, e2), radius_guess=c[a, b])
        ia = int(np.clip(np.rint((x - origin) @ e1 / spacing) + len(g) // 2, 0, len(g) - 1))
        ib = int(np.clip(np.rint((x - origin) @ e2 / spacing) + len(g) // 2, 0, len(g) - 1))
        if lab[ia, ib] != own:  # the refinement left the region: keep the raster point
            x, v = pts[a, b], float(c[a, b])
        if v > best:
            best, best_c = v, x
    return best, best_c


def flood_capture(
    clear: Clearance, point, direction, p, *, box_radius, s_range, spacing=0.1, section_spacing=0.04
):
    """Capture radius of a probe of radius p entering at low s (brute force, 3-D raster).

    The probe-centre region is the 6-connected part of ``{clearance >= p}`` on a 3-D raster
    (``spacing``) joined to the lowest raster layer (the entry bulk); its deepest point is
    refined against the atoms (SLSQP: maximise s subject to clearance >= p); the swept
    section there is the union of the discs cut from the balls ``B(y, min(c(y), p + 0.5))``
    of the region's raster points and of the refined tip, on a 2-D raster
    (``section_spacing``), taking the part holding the tip. Returns
    (capture_radius, stop_s, passes); the section must be enclosed (not reach the box).
    """
    e1, e2, d = frame_basis(direction)
    point = np.asarray(point, dtype=float)
    g = np.arange(-box_radius, box_radius + spacing / 2, spacing)
    s_lo, s_hi = s_range
    ss = np.arange(s_lo, s_hi + spacing / 2, spacing)
    uu, vv = np.meshgrid(g, g, indexing="ij")
    disk = uu**2 + vv**2 <= box_radius**2
    c = np.full((len(g), len(g), len(ss)), -np.inf)
    for k, s in enumerate(ss):
        pts = point + uu[disk][:, None] * e1 + vv[disk][:, None] * e2 + s * d
        layer = np.full(uu.shape, -np.inf)
        layer[disk] = clear(pts)
        c[:, :, k] = layer
    free = c >= p
    lab, _ = ndimage.label(free)
    entry = np.unique(lab[:, :, 0])
    entry = entry[entry > 0]
    region = np.isin(lab, entry)
    if not region.any():
        return 0.0, np.nan, False
    passes = bool(region[:, :, -1].any())
    ks = np.flatnonzero(region.any(axis=(0, 1)))
    k_tip = int(ks[-1])
    iu, iv = np.nonzero(region[:, :, k_tip])
    best = int(np.argmax(c[iu, iv, k_tip]))
    x0 = point + g[iu[best]] * e1 + g[iv[best]] * e2 + ss[k_tip] * d
    near = clear.tree.query_ball_point(x0, p + clear.rmax + 2.0)
    a, r = clear.coords[near], clear.radii[near] + p
    res = optimize.minimize(
        lambda x: -(x - point) @ d,
        x0,
        method="SLSQP",
        constraints=[{"type": "ineq", "fun": lambda x: np.linalg.norm(x - a, axis=1) - r}],
        bounds=[(v - 3 * spacing, v + 3 * spacing) for v in x0],
        options={"ftol": 1e-12, "maxiter": 500},
    )
    tip = res.x if float(clear(res.x)[0]) >= p - 1e-6 else x0
    s_star = float((tip - point) @ d)
    # swept section at s_star
    cap = p + 0.5
    sel = region & (np.abs(ss[None, None, :] - s_star) < cap)
    ci, cj, ck = np.nonzero(sel)
    cu, cv, cs = g[ci], g[cj], ss[ck]
    cr = np.minimum(c[ci, cj, ck], cap)
    tu, tv = (tip - point) @ e1, (tip - point) @ e2
    cu, cv, cs = np.append(cu, tu), np.append(cv, tv), np.append(cs, s_star)
    cr = np.append(cr, min(float(clear(tip)[0]), cap))
    disc2 = cr**2 - (s_star - cs) ** 2
    keep = disc2 > 0
    cu, cv, rad = cu[keep], cv[keep], np.sqrt(disc2[keep])
    f = np.arange(-box_radius, box_radius + section_spacing / 2, section_spacing)
    fu, fv = np.meshgrid(f, f, indexing="ij")
    covered = np.zeros(fu.shape, dtype=bool)
    n_f = len(f)
    for bu, bv, br in zip(cu, cv, rad, strict=True):  # mark each disc in its window
        i0 = max(int(np.floor((bu - br + box_radius) / section_spacing)), 0)
        i1 = min(int(np.ceil((bu + br + box_radius) / section_spacing)) + 1, n_f)
        j0 = max(int(np.floor((bv - br + box_radius) / section_spacing)), 0)
        j1 = min(int(np.ceil((bv + br + box_radius) / section_spacing)) + 1, n_f)
        win = (fu[i0:i1, j0:j1] - bu) ** 2 + (fv[i0:i1, j0:j1] - bv) ** 2 <= br * br
        covered[i0:i1, j0:j1] |= win
    sec_lab, _ = ndimage.label(covered)
    it = int(np.clip(np.rint(tu / section_spacing) + len(f) // 2, 0, len(f) - 1))
    jt = int(np.clip(np.rint(tv / section_spacing) + len(f) // 2, 0, len(f) - 1))
    own = sec_lab[it, jt]
    part = sec_lab == own
    if part[0].any() or part[-1].any() or part[:, 0].any() or part[:, -1].any():
        return 0.0, s_star, passes  # open bulk: the probe never got in
    area = part.sum() * section_spacing**2
    return float(np.sqrt(area / np.pi) - p), s_star, passes
