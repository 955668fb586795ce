"""Swept cross-sections of each probe of a scan, and its off-grid pass / stop decisions.

Internals of :func:`poreprobe.geometry.probes.probe_scan` (see that module for the
definitions): the grid sections of the swept region, the fine raster at the stop level,
the refined tip and bottleneck, and the continuous decisions of
:mod:`poreprobe.geometry.scanrefine`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import ndimage
from scipy.spatial import cKDTree

from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.reach import ReachField
from poreprobe.geometry.scanrefine import (
    Bottleneck,
    PlaneMaxima,
    continuous_bottleneck,
    stop_level,
)

_BIG = np.float32(1e30)
_PLANAR = np.zeros((3, 3, 3), dtype=bool)
_PLANAR[:, :, 1] = ndimage.generate_binary_structure(2, 1)
_CROSS2 = ndimage.generate_binary_structure(2, 1)


class ScanContext:
    """Grid, atoms and fixed 2-D masks shared by every probe of one scan."""

    def __init__(self, field_: ReachField, frame_A, radii_A, refine_factor: int):
        self.field = field_
        self.h = field_.spacing_A
        self.frame = frame_A
        self.radii = radii_A
        self.tree = cKDTree(frame_A)
        self.spheres = AtomSpheres(frame_A, radii_A)
        self._half: dict[int, np.ndarray] = {}
        self.max_r = float(radii_A.max())
        self.refine = refine_factor
        self.u = field_.u_A
        self.disk = field_.inside[:, :, 0]
        self.rim = self.disk & ~ndimage.binary_erosion(self.disk, _CROSS2, border_value=0)
        self.rho2 = self.u[:, None] ** 2 + self.u[None, :] ** 2
        self.clear32 = np.where(field_.inside, field_.clearance_A, -1.0).astype(np.float32)
        self.margin = 2 * self.h
        s = field_.s_A
        lo, hi = field_.protein_s_A
        inner = np.flatnonzero((s >= lo) & (s <= hi))
        self.k_protein = (int(inner[0]), int(inner[-1])) if inner.size else (0, len(s) - 1)
        self.plane_max = PlaneMaxima(self.spheres, field_, field_.pore_radius_A)

    def clip(self, p: float) -> float:
        return p + self.margin

    def half_layer(self, k: int) -> np.ndarray:
        """Exact clearance at the body-centred points between layers k and k+1 (cached).

        Shape (n_u - 1, n_v - 1); -inf outside the pore cylinder.
        """
        if k not in self._half:
            f = self.field
            uc = self.u[:-1] + 0.5 * self.h
            uu, vv = np.meshgrid(uc, uc, indexing="ij")
            ok = uu**2 + vv**2 <= f.pore_radius_A**2
            out = np.full(uu.shape, -np.inf)
            pts = np.column_stack([uu[ok], vv[ok], np.full(int(ok.sum()), f.s_A[k] + 0.5 * self.h)])
            out[ok] = self.spheres.clearance_A(pts, max_clearance_A=f.clearance_cap_A)
            self._half[k] = out
        return self._half[k]


@dataclass
class _OneProbe:
    passes: bool
    enters: bool
    stop_s: float
    open_radius: float
    open_radius_inscribed: float
    capture: float
    capture_inscribed: float
    profile: np.ndarray
    profile_inscribed: np.ndarray
    note: str = ""


@dataclass
class _Sections:
    area: np.ndarray  # (L,) Å²
    inscribed: np.ndarray  # (L,) Å
    enclosed: np.ndarray  # (L,) bool
    covered: np.ndarray  # (L,) bool: any swept pixel at all


def path_bottleneck(ctx: ScanContext, probes: np.ndarray, grid_pass: np.ndarray) -> Bottleneck:
    """Continuous bottleneck ``B = min_s m(s)`` along the probes' path (see scanrefine)."""
    f = ctx.field
    passing = probes[grid_pass]
    failing = probes[~grid_pass]
    p_pass = float(passing.max()) if passing.size else math.nan
    p_fail = float(failing.min()) if failing.size else math.inf
    ref = f.region(p_pass if passing.size else float(probes[0]))
    layers = ref.any(axis=(0, 1))
    k = np.arange(ctx.k_protein[0], ctx.k_protein[1] + 1)
    k = k[layers[k]]
    if k.size == 0:
        return Bottleneck(math.nan, math.nan, np.full(3, np.nan), False)
    if not passing.size:
        # nothing passes on the grid: the bottleneck lies just beyond the smallest probe's tip
        deepest = int(k[-1]) if f.entry == "low" else int(k[0])
        k = np.arange(deepest - 4, deepest + 5)
        k = k[(k >= ctx.k_protein[0]) & (k <= ctx.k_protein[1])]
    return continuous_bottleneck(ctx.plane_max, ref, f.s_A[k], p_pass, p_fail, (0.0, 0.0))


def scan_one(ctx: ScanContext, p: float, passes: bool | None = None, bneck=None) -> _OneProbe:
    """One probe: grid sections, then the off-grid pass / stop decision and capture radius.

    ``passes`` is the off-grid decision (``p <= B``); ``bneck`` the continuous bottleneck.
    """
    f = ctx.field
    n_s = f.shape[2]
    region = f.region(p)
    layers = region.any(axis=(0, 1))
    profile = np.full(n_s, np.nan)
    profile_in = np.full(n_s, np.nan)
    if not layers.any():
        return _OneProbe(
            False,
            False,
            math.nan,
            0.0,
            0.0,
            0.0,
            0.0,
            profile,
            profile_in,
            "cannot sit in the entry bulk",
        )
    grid_passes = bool(layers[f.exit_layer])
    passes = grid_passes if passes is None else passes
    sign = f.depth_sign
    if grid_passes and not passes:
        # the grid lets it through, the atoms do not: cut the region at the off-grid stop
        s_star, uv, _ = _stop_before_bottleneck(ctx, p, bneck)
        region = region & (sign * (f.s_A - s_star) <= 0.5 * ctx.h)[None, None, :]
        layers = region.any(axis=(0, 1))
        tip = np.array([uv[0], uv[1], s_star])
    ks = np.flatnonzero(layers)
    # levels beyond the protein hold no atom, so their sections are open bulk: measure only
    # levels within the protein, with centres from up to one ball radius beyond it
    k0, k1 = max(int(ks[0]), ctx.k_protein[0]), min(int(ks[-1]), ctx.k_protein[1])
    if k1 < k0:
        k0 = k1 = int(ks[-1]) if f.entry == "low" else int(ks[0])
    sec = _grid_sections(ctx, region, p, k0, k1)
    radius = np.sqrt(sec.area / np.pi)
    inscribed = np.minimum(sec.inscribed, radius)
    profile[k0 : k1 + 1] = np.where(sec.enclosed, radius, np.nan)
    profile_in[k0 : k1 + 1] = np.where(sec.enclosed, inscribed, np.nan)
    if passes and grid_passes:
        if not sec.enclosed.any():
            return _OneProbe(
                True,
                True,
                math.nan,
                math.nan,
                math.nan,
                math.nan,
                math.nan,
                profile,
                profile_in,
                "passes, but no enclosed section on its path (enlarge pore_radius_A)",
            )
        s_b, r_b, ri_b = _refine_bottleneck(
            ctx, region, p, k0 + int(np.nanargmin(np.where(sec.enclosed, radius, np.inf)))
        )
        # a probe centre sits in every level it passes, so its disk bounds both radii below
        r_b, ri_b = max(r_b, p), min(max(ri_b, p), max(r_b, p))
        return _OneProbe(True, True, s_b, r_b, ri_b, r_b - p, ri_b - p, profile, profile_in)
    if passes:
        # the grid stops it, the atoms let it through: its level is the continuous bottleneck
        tip = np.asarray(bneck.centre_uvs_A, dtype=np.float64)
        balls = _path_balls(ctx, p, tip, both_sides=True)
        fine = _fine_section(ctx, region, p, float(tip[2]), tip=tip, balls=balls)
        if fine is None or not fine[2]:
            return _OneProbe(True, True, float(tip[2]), *([math.nan] * 4), profile, profile_in)
        r_b = max(math.sqrt(fine[0] / math.pi), p)
        ri_b = min(max(fine[1], p), r_b)
        return _OneProbe(
            True, True, float(tip[2]), r_b, ri_b, r_b - p, ri_b - p, profile, profile_in
        )
    if not grid_passes:
        deepest = k1 if f.entry == "low" else k0
        tip = _refine_tip(ctx, region, p, deepest)
        tip = _deepen_tip(ctx, p, tip)
    stop_s = float(tip[2])
    fine = _fine_section(
        ctx, region, p, stop_s, tip=tip, balls=_path_balls(ctx, p, tip), dense_tip=True
    )
    if fine is None or not fine[2]:
        # the section where the probe stops is open bulk: it never got into the pore
        return _OneProbe(False, False, stop_s, 0.0, 0.0, 0.0, 0.0, profile, profile_in)
    # the probe's own equatorial disk lies in the section, so neither radius is below p
    r_open = max(math.sqrt(fine[0] / math.pi), p)
    ri_open = min(max(fine[1], p), r_open)
    return _OneProbe(
        False, True, stop_s, r_open, ri_open, r_open - p, ri_open - p, profile, profile_in
    )


def _path_balls(ctx: ScanContext, p: float, tip, both_sides: bool = False):
    """Probe centres on the continuous path near ``tip``: plane maxima behind it.

    From the tip's level back towards the entry (and, with ``both_sides``, on towards the
    exit) every 0.2 Å within reach of the tip's plane, the local in-plane maximum of the
    clearance climbed from the tip's (u, v); those with clearance >= p are centres a probe
    can hold, and their balls (radius = clearance) are part of its swept region.
    """
    from poreprobe.geometry.planemax import maximise_in_planes

    f = ctx.field
    reach = ctx.clip(p)
    steps = np.arange(0.2, reach + 1e-9, 0.2)
    offs = -f.depth_sign * steps
    if both_sides:
        offs = np.concatenate([offs, -offs])
    s = float(tip[2]) + offs
    start = np.broadcast_to(np.asarray(tip[:2], dtype=float), (len(s), 2))
    c, v = maximise_in_planes(ctx.spheres, s, start, reach, delta_A=0.25)
    ok = (v >= p) & (v <= reach + 1.0)
    return [(c[i, 0], c[i, 1], s[i], v[i]) for i in np.flatnonzero(ok)]


def _deepen_tip(ctx: ScanContext, p: float, tip: np.ndarray) -> np.ndarray:
    """Follow ``m(s) >= p`` beyond the refined tip (up to two spacings), by bisection."""
    f = ctx.field
    s_to = float(tip[2]) + f.depth_sign * 2 * ctx.h
    s_star, uv, found = stop_level(ctx.plane_max, p, float(tip[2]), s_to, tip[:2], region=False)
    if not found or f.depth_sign * (s_star - tip[2]) <= 0:
        return tip
    centre = np.array([uv[0], uv[1], s_star])
    if ctx.spheres.clearance_A(centre[None])[0] < p - 1e-6:
        return tip
    return centre


def _stop_before_bottleneck(ctx: ScanContext, p: float, bneck):
    """Off-grid stop level of a probe wider than the bottleneck, walking up to it."""
    f = ctx.field
    s_b = float(bneck.s_A)
    uv_b = np.asarray(bneck.centre_uvs_A[:2])
    for back in (0.5, 1.0, 2.0, 4.0, 8.0):
        s_from = s_b - f.depth_sign * back
        c, v = ctx.plane_max(s_from, uv_b)
        if v[0] >= p:
            s_star, uv, _ = stop_level(ctx.plane_max, p, s_from, s_b, c[0])
            return s_star, uv, True
    return s_b - f.depth_sign * 8.0, uv_b, False


def _power_cover(f: np.ndarray, window: int, h: float) -> np.ndarray:
    """``G(x) = min_y (|x - y|^2 + f(y))`` over a cube window of +-``window`` voxels.

    Separable: one 1-D pass per axis (the squared distance is a sum over axes).
    """
    for ax in (2, 0, 1):
        if f.shape[ax] < 2:
            continue
        g = f.copy()
        src = np.moveaxis(f, ax, 0)
        dst = np.moveaxis(g, ax, 0)
        for j in range(1, min(window, f.shape[ax] - 1) + 1):
            add = np.float32((j * h) ** 2)
            np.minimum(dst[j:], src[:-j] + add, out=dst[j:])
            np.minimum(dst[:-j], src[j:] + add, out=dst[:-j])
        f = g
    return f


def _grid_sections(ctx: ScanContext, region: np.ndarray, p: float, k0: int, k1: int) -> _Sections:
    """Swept cross-sections of probe p on grid layers k0..k1."""
    h = ctx.h
    clip = ctx.clip(p)
    window = int(math.ceil(clip / h))
    n_u, _, n_s = ctx.field.shape
    e0, e1 = max(k0 - window, 0), min(k1 + window + 1, n_s)  # centres up to a ball away
    sub = region[:, :, e0:e1]
    cols = sub.any(axis=2)
    iu, iv = np.nonzero(cols)
    a0, a1 = max(int(iu.min()) - window, 0), min(int(iu.max()) + window + 1, n_u)
    b0, b1 = max(int(iv.min()) - window, 0), min(int(iv.max()) + window + 1, n_u)
    box = sub[a0:a1, b0:b1]
    c = np.minimum(ctx.clear32[a0:a1, b0:b1, e0:e1], np.float32(clip))
    f = np.where(box, -(c * c), _BIG).astype(np.float32)
    g = _power_cover(f, window, h)[:, :, k0 - e0 : k1 - e0 + 1]
    return _measure_sections(
        g,
        ctx.disk[a0:a1, b0:b1],
        ctx.rim[a0:a1, b0:b1],
        ctx.u[a0:a1],
        ctx.u[b0:b1],
        h,
        near_uv=None,
    )


def _measure_sections(
    g: np.ndarray, disk: np.ndarray, rim: np.ndarray, u_A, v_A, h: float, near_uv=None
) -> _Sections:
    """Area, inscribed radius and openness of the chosen part of each layer of ``g <= 0``.

    ``g`` has shape (n_u, n_v, L); the chosen part of a layer is the connected
    (4-neighbour) component holding the swept pixel nearest ``near_uv``
    (default: the axis). Areas get a sub-pixel edge correction: a pixel
    counts the fraction ``clip(1/2 - d/h, 0, 1)`` with ``d = g / |grad g|``,
    the signed distance to the edge.
    """
    n_u, n_v, n_l = g.shape
    covered = (g <= 0) & disk[:, :, None]
    has = covered.any(axis=(0, 1))
    area = np.zeros(n_l)
    inscribed = np.zeros(n_l)
    enclosed = np.zeros(n_l, dtype=bool)
    if not has.any():
        return _Sections(area, inscribed, enclosed, has)
    if n_l > 1:
        labels, n_lab = ndimage.label(covered, structure=_PLANAR)
    else:
        labels, n_lab = _label_single(covered)
    su, sv = (0.0, 0.0) if near_uv is None else near_uv
    dist2 = (u_A[:, None] - su) ** 2 + (v_A[None, :] - sv) ** 2
    score = np.where(covered, dist2[:, :, None], np.inf).reshape(n_u * n_v, n_l)
    pick = np.argmin(score, axis=0)
    chosen = labels.reshape(n_u * n_v, n_l)[pick, np.arange(n_l)]
    chosen[~has] = 0
    open_lab = np.zeros(n_lab + 1, dtype=bool)
    open_lab[np.unique(labels[rim])] = True
    open_lab[0] = False
    enclosed = has & ~open_lab[chosen]
    comp = (labels == chosen[None, None, :]) & (chosen[None, None, :] > 0)
    # sub-pixel area: fractional coverage of the component's pixels and its rim of neighbours
    dtype = np.float32 if g.dtype == np.float32 else np.float64
    gf = np.minimum(g, 1e6).astype(dtype, copy=False)
    gu, gv = np.gradient(gf, h, axis=(0, 1)) if min(n_u, n_v) > 1 else (gf * 0, gf * 0)
    grad = np.maximum(np.hypot(gu, gv), 1e-9)
    frac = np.clip(0.5 - gf / grad / h, 0.0, 1.0)
    ring_struct = _PLANAR if n_l > 1 else _CROSS2
    near = ndimage.binary_dilation(comp if n_l > 1 else comp[:, :, 0], ring_struct)
    if n_l == 1:
        near = near[:, :, None]
    near &= disk[:, :, None] & ((labels == 0) | comp)
    area = (frac * near).sum(axis=(0, 1), dtype=np.float64) * h * h
    # inscribed: largest disk in the component (pixel distance transform) and never less
    # than the largest single empty-sphere cut sqrt(-g) that the component holds
    cut = np.sqrt(np.clip(np.where(comp, -gf, 0.0), 0.0, None)).max(axis=(0, 1))
    padded = np.pad(comp, ((1, 1), (1, 1), (0, 0)))
    for k in np.flatnonzero(enclosed):
        ii, jj = np.nonzero(comp[:, :, k])
        crop = padded[ii.min() : ii.max() + 3, jj.min() : jj.max() + 3, k]
        edt = ndimage.distance_transform_edt(crop, sampling=h)
        inscribed[k] = max(float(edt.max()) - 0.5 * h, float(cut[k]))
    return _Sections(area, inscribed, enclosed, has)


def _label_single(covered: np.ndarray):
    lab, n = ndimage.label(covered[:, :, 0], structure=_CROSS2)
    return lab[:, :, None], n


def _fine_section(
    ctx: ScanContext,
    region: np.ndarray,
    p: float,
    s_star: float,
    *,
    tip=None,
    near_uv=None,
    balls=None,
    dense_tip: bool = False,
):
    """Swept cross-section of probe p in the plane at ``s_star`` on a fine raster.

    Sphere centres: the grid voxels of the probe's region, the body-centred
    points between them (exact clearance, for twice the centre density), and
    the refined tip. Returns (area_A2, inscribed_A, enclosed), or None when
    nothing is swept.
    """
    f = ctx.field
    h = ctx.h
    clip = ctx.clip(p)
    s = f.s_A
    lattices = []
    ks = np.flatnonzero((np.abs(s - s_star) <= clip) & region.any(axis=(0, 1)))
    g = np.full(f.shape[:2], np.inf)
    for k in ks:
        c = np.minimum(np.asarray(f.clearance_A[:, :, k]), clip)
        np.minimum(g, np.where(region[:, :, k], (s_star - s[k]) ** 2 - c * c, np.inf), out=g)
    lattices.append((ctx.u, ctx.u, g))
    g2 = np.full((f.shape[0] - 1, f.shape[1] - 1), np.inf)
    for k in range(
        max(int(ks.min()) - 1, 0) if ks.size else 0,
        min(int(ks.max()) + 1, f.shape[2] - 1) if ks.size else 0,
    ):
        s_half = s[k] + 0.5 * h
        if abs(s_half - s_star) > clip:
            continue
        near = region[:, :, k] | region[:, :, k + 1]
        near = near[:-1, :-1] | near[1:, :-1] | near[:-1, 1:] | near[1:, 1:]
        if not near.any():
            continue
        c2 = ctx.half_layer(k)
        member = near & (c2 >= p)
        c2 = np.minimum(c2, clip)
        np.minimum(g2, np.where(member, (s_star - s_half) ** 2 - c2 * c2, np.inf), out=g2)
    lattices.append((ctx.u[:-1] + 0.5 * h, ctx.u[:-1] + 0.5 * h, g2))
    if tip is not None:
        near_uv = (float(tip[0]), float(tip[1]))
        if dense_tip:
            lattices.append(_dense_tip_lattice(ctx, region, p, s_star, tip))
    cols = [np.nonzero(np.isfinite(gl)) for _, _, gl in lattices]
    if not any(c[0].size for c in cols) and tip is None:
        return None
    reach_A = clip + 2 * h
    lo, hi = -f.pore_radius_A - h, f.pore_radius_A + h
    found = [
        (cu[c[0]], cv[c[1]]) for (cu, cv, _), c in zip(lattices, cols, strict=True) if c[0].size
    ]
    if found:
        u_lo = max(min(x[0].min() for x in found) - reach_A, lo)
        u_hi = min(max(x[0].max() for x in found) + reach_A, hi)
        v_lo = max(min(x[1].min() for x in found) - reach_A, lo)
        v_hi = min(max(x[1].max() for x in found) + reach_A, hi)
    else:
        u_lo, u_hi, v_lo, v_hi = lo, hi, lo, hi
    hf = h / ctx.refine
    uf = np.arange(np.floor(u_lo / hf), np.ceil(u_hi / hf) + 1) * hf
    vf = np.arange(np.floor(v_lo / hf), np.ceil(v_hi / hf) + 1) * hf
    gfine = np.full((len(uf), len(vf)), np.inf)
    for cu, cv, gl in lattices:
        np.minimum(gfine, _to_raster(cu, cv, gl, uf, vf), out=gfine)
    extra = [] if balls is None else list(balls)
    if tip is not None:
        r_tip = float(ctx.spheres.clearance_A(np.asarray(tip, dtype=float)[None])[0])
        extra.append((tip[0], tip[1], tip[2], max(r_tip, p)))
    for bu, bv, bs, br in extra:
        # off-grid probe centres (on the continuous path): balls of their own clearance
        br = min(br, clip)
        ball = (uf[:, None] - bu) ** 2 + (vf[None, :] - bv) ** 2 + (s_star - bs) ** 2 - br * br
        np.minimum(gfine, ball, out=gfine)
    disk = (uf[:, None] ** 2 + vf[None, :] ** 2) <= f.pore_radius_A**2 + 1e-9
    rim = disk & ~ndimage.binary_erosion(disk, _CROSS2, border_value=0)
    gfine = np.where(np.isfinite(gfine), gfine, 1e6)
    sec = _measure_sections(gfine[:, :, None], disk, rim, uf, vf, hf, near_uv=near_uv)
    if not sec.covered[0]:
        return None
    return float(sec.area[0]), float(sec.inscribed[0]), bool(sec.enclosed[0])


def _dense_tip_lattice(ctx: ScanContext, region: np.ndarray, p: float, s_star: float, tip):
    """Probe centres on a raster three times finer than the grid behind a stop level.

    Near the tip the grid holds few centres of the probe, so its swept section there
    comes out small. Points of a raster three times finer than the grid, next to the
    probe's grid region (within one voxel) or within two spacings of the tip, from
    ``s_star`` back towards the entry by ``p + 2 h``, with exact clearance >= p and
    6-connected (on that raster) to the tip or to a point of the grid region, are centres
    the probe can hold. Returns the lattice
    ``(u, v, min_k ((s_star - s_k)^2 - c^2))`` for :func:`_to_raster`.
    """
    f = ctx.field
    h = ctx.h
    hc = h / 3.0
    clip = ctx.clip(p)
    depth = np.arange(0.0, clip + 1e-9, hc)
    sc = s_star - f.depth_sign * depth
    # candidates: next to the grid region (dilated by one voxel) or within 2 h of the tip
    kk = np.flatnonzero((np.abs(f.s_A - s_star) <= clip + h) & region.any(axis=(0, 1)))
    sub = region[:, :, kk] if kk.size else np.zeros(f.shape[:2] + (1,), dtype=bool)
    iu, iv = np.nonzero(sub.any(axis=2))
    u_lo, u_hi = float(tip[0]) - 2 * h, float(tip[0]) + 2 * h
    v_lo, v_hi = float(tip[1]) - 2 * h, float(tip[1]) + 2 * h
    if iu.size:
        u_lo, u_hi = min(u_lo, f.u_A[iu.min()] - h), max(u_hi, f.u_A[iu.max()] + h)
        v_lo, v_hi = min(v_lo, f.v_A[iv.min()] - h), max(v_hi, f.v_A[iv.max()] + h)
    uc = np.arange(np.floor(u_lo / hc), np.ceil(u_hi / hc) + 1) * hc
    vc = np.arange(np.floor(v_lo / hc), np.ceil(v_hi / hc) + 1) * hc

    def index(coords, origin, n):
        k = np.rint((coords - origin) / h).astype(np.int64)
        return np.clip(k, 0, n - 1), (k >= 0) & (k < n)

    gu, ou = index(uc, f.origin_A[0], f.shape[0])
    gv, ov = index(vc, f.origin_A[1], f.shape[1])
    gs, os_ = index(sc, f.origin_A[2], f.shape[2])
    # the region dilated by one voxel, on the layers this box touches only
    k_lo, k_hi = max(int(gs.min()) - 1, 0), min(int(gs.max()) + 2, f.shape[2])
    dil = np.zeros(region.shape, dtype=bool)
    dil[:, :, k_lo:k_hi] = ndimage.binary_dilation(
        region[:, :, k_lo:k_hi], np.ones((3, 3, 3), dtype=bool)
    )
    inside = ou[:, None, None] & ov[None, :, None] & os_[None, None, :]
    # 1-Lipschitz bound from the nearest voxel (at most sqrt(3)/2 h away)
    near_c = np.asarray(f.clearance_A)[np.ix_(gu, gv, gs)]
    with np.errstate(invalid="ignore"):
        may = ~(near_c + 0.87 * h < p)
        # surely wider than the clip (lower bound c(X) - |x - X|): inside the region's
        # interior, its ball is the clipped one whatever the exact value, so no query
        sure = near_c - 0.87 * h > clip + 1e-9
    near_region = dil[np.ix_(gu, gv, gs)] & inside
    cand = near_region & may & ~sure
    uu, vv, ss = np.meshgrid(uc, vc, sc, indexing="ij")
    cand |= (uu - tip[0]) ** 2 + (vv - tip[1]) ** 2 + (ss - tip[2]) ** 2 <= (2 * h) ** 2
    c = np.full(uu.shape, -np.inf)
    c[near_region & sure & ~cand] = clip
    if cand.any():
        pts = np.column_stack([uu[cand], vv[cand], ss[cand]])
        c[cand] = ctx.spheres.clearance_A(pts, max_clearance_A=clip + 1.0)
    mask = c >= p
    lab, _ = ndimage.label(mask, structure=ndimage.generate_binary_structure(3, 1))
    seeds = np.zeros(lab.max() + 1, dtype=bool)
    it = np.clip(np.rint((tip[0] - uc[0]) / hc).astype(int), 0, len(uc) - 1)
    jt = np.clip(np.rint((tip[1] - vc[0]) / hc).astype(int), 0, len(vc) - 1)
    seeds[lab[it, jt, 0]] = True
    # raster points whose nearest grid voxel belongs to the probe's region
    on_region = region[np.ix_(gu, gv, gs)] & cand & mask
    seeds[np.unique(lab[on_region])] = True
    seeds[0] = False
    keep = seeds[lab]
    cc = np.minimum(c, clip)
    g = np.where(keep, (s_star - ss) ** 2 - cc * cc, np.inf).min(axis=2)
    return uc, vc, g


def _to_raster(u_coords, v_coords, g, uf, vf) -> np.ndarray:
    """``min over lattice columns (|x - y|^2 + g(y))`` at raster points, two separable passes."""
    rows = np.flatnonzero(np.isfinite(g).any(axis=1))
    colv = np.flatnonzero(np.isfinite(g).any(axis=0))
    out = np.full((len(uf), len(vf)), np.inf)
    if rows.size == 0:
        return out
    uc = u_coords[rows[0] : rows[-1] + 1]
    vc = v_coords[colv[0] : colv[-1] + 1]
    gsub = g[rows[0] : rows[-1] + 1, colv[0] : colv[-1] + 1]
    dv2 = (vf[None, :] - vc[:, None]) ** 2  # (n_vc, n_vf)
    a_pass = np.empty((len(uc), len(vf)))
    chunk = max(1, 2_000_000 // max(dv2.size, 1))
    for i0 in range(0, len(uc), chunk):
        a_pass[i0 : i0 + chunk] = (gsub[i0 : i0 + chunk, :, None] + dv2[None, :, :]).min(axis=1)
    du2 = (uf[:, None] - uc[None, :]) ** 2  # (n_uf, n_uc)
    chunk = max(1, 2_000_000 // max(len(uc) * len(vf), 1))
    for i0 in range(0, len(uf), chunk):
        out[i0 : i0 + chunk] = (du2[i0 : i0 + chunk, :, None] + a_pass[None, :, :]).min(axis=1)
    return out


def _refine_bottleneck(ctx: ScanContext, region: np.ndarray, p: float, k_b: int):
    """Narrowest enclosed section near grid layer ``k_b``, on the fine raster."""
    s = ctx.field.s_A
    best = (float(s[k_b]), math.inf, math.nan)
    for off in (-0.5, 0.0, 0.5):
        s_try = float(s[k_b]) + off * ctx.h
        res = _fine_section(ctx, region, p, s_try)
        if res is None or not res[2]:
            continue
        r = math.sqrt(res[0] / math.pi)
        if r < best[1]:
            best = (s_try, r, min(res[1], r))
    if not math.isfinite(best[1]):
        return float(s[k_b]), math.nan, math.nan
    return best


def _refine_tip(ctx: ScanContext, region: np.ndarray, p: float, k_tip: int) -> np.ndarray:
    """Deepest point with clearance >= p near the deepest grid voxel, against the atoms.

    Maximises ``depth_sign * s`` subject to ``|x - a_i| - r_i >= p`` for the
    atoms near the start (SLSQP), within +-2 grid spacings of the start; falls
    back to the grid voxel if the optimiser fails.
    """
    from scipy.optimize import minimize

    f = ctx.field
    layer = region[:, :, k_tip]
    iu, iv = np.nonzero(layer)
    best = int(np.argmax(f.clearance_A[iu, iv, k_tip]))
    x0 = np.array([ctx.u[iu[best]], ctx.u[iv[best]], f.s_A[k_tip]])
    sign = f.depth_sign
    reach = p + ctx.max_r + 4 * ctx.h
    near = np.asarray(ctx.tree.query_ball_point(x0, reach), dtype=np.int64)
    if near.size == 0:
        return x0
    centres, radii = ctx.frame[near], ctx.radii[near] + p

    def gaps(x):
        return np.linalg.norm(x - centres, axis=1) - radii

    def gaps_jac(x):
        d = x - centres
        return d / np.maximum(np.linalg.norm(d, axis=1), 1e-12)[:, None]

    span = 2 * ctx.h
    res = minimize(
        lambda x: -sign * x[2],
        x0,
        jac=lambda x: np.array([0.0, 0.0, -sign]),
        method="SLSQP",
        bounds=[(v - span, v + span) for v in x0],
        constraints=[{"type": "ineq", "fun": gaps, "jac": gaps_jac}],
        options={"ftol": 1e-10, "maxiter": 200},
    )
    x = res.x
    # atoms beyond `reach` of x0 are farther than p from any point of the search box
    if not np.isfinite(x).all() or gaps(x).min() < -1e-6 or sign * (x[2] - x0[2]) < 0:
        return x0
    return x
