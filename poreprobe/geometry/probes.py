"""Probe-size scan: accessible-radius profiles and the capture radius of each probe size.

Definitions (for each probe radius p; see :mod:`poreprobe.geometry.reach` for clearance
and reach)
-----------------------------------------------------------------------------
Probe-centre region
    ``C_p = {reach >= p}``: where the centre of a probe of radius p can be,
    having come from the entry bulk.
Swept region
    The union of the probe spheres over ``C_p``. Because every sphere of
    radius ``c(y) >= p`` centred at ``y`` in ``C_p`` is itself filled by such
    probes, the swept region equals ``union of B(y, c(y)) over y in C_p``; on
    the grid that union of empty spheres (each touching the atoms) is what is
    measured, which keeps its walls within a few hundredths of an Å of the
    atoms instead of half a grid spacing.
Stop level ``s*(p)``
    The deepest axial position (from the entry end) of ``C_p``. It is refined
    off the grid: from the deepest grid voxel, the deepest point with
    ``c(x) >= p`` is found against the atoms themselves (a small constrained
    optimisation with the exact clearance). A probe whose region reaches the
    cap at the far end **passes**; its level is then its bottleneck, the
    narrowest (smallest area-equivalent accessible radius) enclosed level on
    its path, refined on a finer raster around the narrowest grid level.
Accessible radius at level s
    In the plane across the axis at s, take the cross-section of the swept
    region and its connected part nearest the axis (at the stop level: the part
    holding the probe's centre). Area-equivalent radius ``sqrt(area / pi)``;
    inscribed radius: the largest disk inside that part. Where that part
    reaches the edge of the pore region (``pore_radius_A``) the level is open
    bulk and the radius is NaN; levels beyond the stop level are NaN too.
Capture radius
    ``c(p) = R_open(p) - p``, with ``R_open`` the area-equivalent accessible
    radius at the stop level (bottleneck for a probe that passes). This is the
    default; ``capture_radius_inscribed_A`` uses the inscribed radius. A probe
    whose section at its stop level is open bulk never got into the pore: it
    **does not enter**, capture radius 0 and ``enters = False``.

Grid profiles are measured on the grid layers (pixel areas with a sub-pixel
edge correction); the capture radius is measured at the refined level on a
raster ``refine_factor`` times finer than the grid. All values are estimates
from a model: they depend on the radius set and on the structure.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np
from scipy import ndimage
from scipy.spatial import cKDTree

from poreprobe._progress import progress
from poreprobe._validate import check_int, check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.reach import ReachField, check_levels, reach_field, resolve_radii
from poreprobe.io.export import to_csv
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet
from poreprobe.io.structure import Atoms

#: Default probe radii (Å): 0.5 to 6.0 in steps of 0.25 (23 probes).
DEFAULT_PROBE_RADII_A = np.round(np.arange(0.5, 6.0 + 1e-9, 0.25), 10)
_BIG = np.float32(1e30)
_PLANAR = np.zeros((3, 3, 3), dtype=bool)
_PLANAR[:, :, 1] = ndimage.generate_binary_structure(2, 1)
_CROSS2 = ndimage.generate_binary_structure(2, 1)


#: The per-probe columns of a scan (fields of ProbeScan, columns of its CSV).
_PER_PROBE = (
    "probe_radius_A",
    "capture_radius_A",
    "capture_radius_inscribed_A",
    "open_radius_A",
    "open_radius_inscribed_A",
    "stop_s_A",
    "passes",
    "enters",
)


@dataclass(frozen=True)
class ProbeScan:
    """Result of a probe-size scan.

    Attributes
    ----------
    probe_radius_A : ndarray of shape (n_p,)
        Probe radii (Å), increasing.
    capture_radius_A : ndarray of shape (n_p,)
        Area-equivalent capture radius ``R_open - p`` (Å; the default). 0 for a
        probe that does not enter; NaN where undefined (see ``notes``).
    capture_radius_inscribed_A : ndarray of shape (n_p,)
        Same with the inscribed accessible radius (Å).
    open_radius_A, open_radius_inscribed_A : ndarray of shape (n_p,)
        ``R_open``: accessible radius at the stop level (Å).
    stop_s_A : ndarray of shape (n_p,)
        Stop level (Å along the axis); the bottleneck level for probes that pass.
    passes : ndarray of bool, shape (n_p,)
        The probe's centre region reaches the far end.
    enters : ndarray of bool, shape (n_p,)
        The probe gets into an enclosed section of the pore.
    s_A : ndarray of shape (n_s,)
        Common axial grid of the profiles (Å), ascending.
    accessible_radius_A, accessible_radius_inscribed_A : ndarray of shape (n_p, n_s)
        Accessible-radius profiles (Å); NaN at open levels and beyond the stop level.
    axis : PoreAxis
    radius_set : str
    spacing_A : float
        Grid spacing (Å).
    pore_radius_A : float
        Radius of the pore region around the axis (Å).
    entry : {"low", "high"}
        End where probes enter.
    capture_definition : str
        Which variant ``capture_radius_A`` holds.
    notes : tuple of str
        Per-probe caveats.
    source, version : str
    """

    probe_radius_A: np.ndarray
    capture_radius_A: np.ndarray
    capture_radius_inscribed_A: np.ndarray
    open_radius_A: np.ndarray
    open_radius_inscribed_A: np.ndarray
    stop_s_A: np.ndarray
    passes: np.ndarray
    enters: np.ndarray
    s_A: np.ndarray
    accessible_radius_A: np.ndarray
    accessible_radius_inscribed_A: np.ndarray
    axis: PoreAxis
    radius_set: str
    spacing_A: float
    pore_radius_A: float
    entry: str
    capture_definition: str = "area-equivalent"
    notes: tuple[str, ...] = ()
    source: str = ""
    version: str = field(default=__version__)

    _ARRAYS = (*_PER_PROBE, "s_A", "accessible_radius_A", "accessible_radius_inscribed_A")

    def __post_init__(self):
        for name in self._ARRAYS:
            getattr(self, name).setflags(write=False)

    @property
    def largest_passing_probe_A(self) -> float:  # noqa: N802
        """Largest scanned probe radius that passes (Å); NaN if none."""
        ok = self.probe_radius_A[self.passes]
        return float(ok.max()) if ok.size else math.nan

    def to_dict(self) -> dict:
        """JSON-ready dictionary (NaN becomes None on export)."""
        return {
            "version": self.version,
            "source": self.source,
            "estimate": "model-based estimate; depends on the radius set and the structure",
            "axis": self.axis.to_dict(),
            "radius_set": self.radius_set,
            "spacing_A": self.spacing_A,
            "pore_radius_A": self.pore_radius_A,
            "entry": self.entry,
            "capture_definition": self.capture_definition,
            "largest_passing_probe_A": self.largest_passing_probe_A,
            "capture": {
                "probe_radius_A": self.probe_radius_A.tolist(),
                "capture_radius_A": self.capture_radius_A.tolist(),
                "capture_radius_inscribed_A": self.capture_radius_inscribed_A.tolist(),
                "open_radius_A": self.open_radius_A.tolist(),
                "open_radius_inscribed_A": self.open_radius_inscribed_A.tolist(),
                "stop_s_A": self.stop_s_A.tolist(),
                "passes": self.passes.tolist(),
                "enters": self.enters.tolist(),
            },
            "profiles": {
                "s_A": self.s_A.tolist(),
                "probe_radius_A": self.probe_radius_A.tolist(),
                "accessible_radius_A": self.accessible_radius_A.tolist(),
                "accessible_radius_inscribed_A": self.accessible_radius_inscribed_A.tolist(),
            },
            "notes": list(self.notes),
        }


# ----------------------------------------------------------------------------------------
# public API
# ----------------------------------------------------------------------------------------
def probe_scan(
    atoms: Atoms,
    axis: PoreAxis,
    *,
    probe_radii_A=DEFAULT_PROBE_RADII_A,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A=None,
    spacing_A: float = 0.5,
    from_end: str = "low",
    pore_radius_A: float = 15.0,
    refine_factor: int = 4,
    quiet: bool = True,
) -> ProbeScan:
    """Scan probe sizes: stop level, accessible-radius profile and capture radius of each.

    Parameters
    ----------
    atoms : Atoms
        The channel.
    axis : PoreAxis
        Pore axis; with ``find_pore_axis(..., entry=SEL)`` s grows from the
        entry end, so the default ``from_end="low"`` is the entry.
    probe_radii_A : array_like of shape (n_p,)
        Probe radii (Å, > 0, strictly increasing); default 0.5 to 6.0 by 0.25.
    radii : str or RadiusSet
        Radius set (default ``"bondi"``, Bondi 1964); ignored with ``radii_A``.
    radii_A : array_like of shape (n,), optional
        Explicit per-atom radii (Å).
    spacing_A : float
        Grid spacing (Å, > 0).
    from_end : {"low", "high"}
        End of the axis where probes enter.
    pore_radius_A : float
        Radius (Å) of the cylinder around the axis that bounds the pore region;
        sections reaching it count as open bulk.
    refine_factor : int
        The capture radius is measured on a raster this many times finer than
        the grid (>= 1).
    quiet : bool
        No progress bar.

    Returns
    -------
    ProbeScan

    Raises
    ------
    InputError
        Bad probe radii (not > 0, not increasing), spacing, radius or radii.
    PoreNotFoundError
        No atom near the axis, or no enclosed section for any probe.

    Notes
    -----
    Capture radius ``c(p) = R_open(p) - p``; see the module docstring for the
    definitions of reach, stop level and accessible radius.

    Examples
    --------
    >>> import poreprobe
    >>> from poreprobe.geometry.synthetic import cylinder
    >>> atoms, _, _ = cylinder(6.0, 12.0, spacing_A=0.5, atoms_per_ring=48)
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> scan = poreprobe.probe_scan(atoms, axis, probe_radii_A=[2.0, 5.0], pore_radius_A=10)
    >>> scan.passes.tolist(), scan.enters.tolist()
    ([True, False], [True, False])
    >>> round(float(scan.capture_radius_A[0]), 1)   # wall 6 - 1.7 Å minus the 2 Å probe
    2.3
    """
    probes = check_levels(probe_radii_A, "probe_radii_A")
    if probes[0] <= 0:
        raise InputError(f"probe_radii_A must be > 0, got {probes[0]:g}")
    spacing_A = check_positive(spacing_A, "spacing_A")
    refine_factor = check_int(refine_factor, "refine_factor", minimum=1)
    radii_arr, radius_label = resolve_radii(atoms, radii, radii_A)
    field_ = reach_field(
        atoms,
        axis,
        radii_A=radii_arr,
        spacing_A=spacing_A,
        from_end=from_end,
        pore_radius_A=pore_radius_A,
        levels_A=probes,
        method="label",
    )
    frame = field_.to_grid_frame(atoms.coords_A)
    ctx = _Context(field_, frame, radii_arr, refine_factor)
    n_p, n_s = len(probes), field_.shape[2]
    out = {
        name: np.full(n_p, np.nan) for name in ("capture", "capture_in", "open", "open_in", "stop")
    }
    passes = np.zeros(n_p, dtype=bool)
    enters = np.zeros(n_p, dtype=bool)
    prof = np.full((n_p, n_s), np.nan)
    prof_in = np.full((n_p, n_s), np.nan)
    notes: list[str] = []
    for i in progress(range(n_p), total=n_p, desc="probe scan", quiet=quiet):
        res = _scan_one(ctx, float(probes[i]))
        passes[i], enters[i] = res.passes, res.enters
        prof[i], prof_in[i] = res.profile, res.profile_inscribed
        out["stop"][i] = res.stop_s
        out["open"][i], out["open_in"][i] = res.open_radius, res.open_radius_inscribed
        out["capture"][i], out["capture_in"][i] = res.capture, res.capture_inscribed
        if res.note:
            notes.append(f"probe {probes[i]:g} Å: {res.note}")
    if not np.isfinite(prof).any() and not enters.any():
        raise PoreNotFoundError(
            "no probe found an enclosed section within pore_radius_A = "
            f"{pore_radius_A:g} Å of the axis; check the axis or "
            "enlarge pore_radius_A"
        )
    for note in notes:
        warnings.warn(note, QualityWarning, stacklevel=2)
    return ProbeScan(
        probe_radius_A=probes,
        capture_radius_A=out["capture"],
        capture_radius_inscribed_A=out["capture_in"],
        open_radius_A=out["open"],
        open_radius_inscribed_A=out["open_in"],
        stop_s_A=out["stop"],
        passes=passes,
        enters=enters,
        s_A=field_.s_A,
        accessible_radius_A=prof,
        accessible_radius_inscribed_A=prof_in,
        axis=axis,
        radius_set=radius_label,
        spacing_A=spacing_A,
        pore_radius_A=float(pore_radius_A),
        entry=field_.entry,
        notes=tuple(notes),
        source=atoms.source,
    )


def capture_radius_at(scan: ProbeScan, probe_radius_A, *, inscribed: bool = False):
    """Capture radius (Å) at any probe radius within the scanned range, linearly interpolated.

    Parameters
    ----------
    scan : ProbeScan
    probe_radius_A : float or array_like
        Probe radii (Å) between the smallest and largest scanned radius.
    inscribed : bool
        Use the inscribed variant instead of the area-equivalent default.

    Returns
    -------
    float or ndarray
        NaN where a bracketing scanned value is NaN.

    Raises
    ------
    InputError
        A radius outside the scanned range, or not finite.
    """
    if not isinstance(scan, ProbeScan):
        raise InputError(f"scan must be a ProbeScan, got {type(scan).__name__}")
    p = np.asarray(probe_radius_A, dtype=np.float64)
    if not np.isfinite(p).all():
        raise InputError(f"probe_radius_A must be finite, got {probe_radius_A!r}")
    grid = scan.probe_radius_A
    lo, hi = float(grid[0]), float(grid[-1])
    if (p < lo - 1e-9).any() or (p > hi + 1e-9).any():
        raise InputError(
            f"probe_radius_A must be within the scanned range {lo:g}..{hi:g} Å, "
            f"got {probe_radius_A!r}"
        )
    values = scan.capture_radius_inscribed_A if inscribed else scan.capture_radius_A
    if len(grid) == 1:
        result = np.full(p.shape, values[0])
    else:
        j = np.clip(np.searchsorted(grid, p, side="right") - 1, 0, len(grid) - 2)
        t = np.clip((p - grid[j]) / (grid[j + 1] - grid[j]), 0.0, 1.0)
        result = values[j] * (1 - t) + values[j + 1] * t
        exact = np.isclose(p, grid[j]) | np.isclose(p, grid[j + 1])
        pick = np.where(np.isclose(p, grid[j]), values[j], values[j + 1])
        result = np.where(exact, pick, result)
    return float(result) if result.ndim == 0 else result


def scan_csv(scan: ProbeScan, path=None) -> str:
    """CSV of the capture table, one row per probe (Å; passes/enters as 0/1)."""
    rows = (
        (float(p), float(c), float(ci), float(r), float(ri), float(s), int(ps), int(en))
        for p, c, ci, r, ri, s, ps, en in zip(
            scan.probe_radius_A,
            scan.capture_radius_A,
            scan.capture_radius_inscribed_A,
            scan.open_radius_A,
            scan.open_radius_inscribed_A,
            scan.stop_s_A,
            scan.passes,
            scan.enters,
            strict=True,
        )
    )
    comments = (
        f"poreprobe {scan.version} probe-size scan of {scan.source}",
        f"radius set: {scan.radius_set}; model-based estimate; lengths in Å; "
        f"capture radius = R_open - probe radius ({scan.capture_definition} default)",
        f"entry: {scan.entry} end of the axis; grid spacing {scan.spacing_A:g} Å",
    )
    header = _PER_PROBE
    return to_csv(header, rows, path, comments)


def profiles_csv(scan: ProbeScan, path=None) -> str:
    """CSV of the accessible-radius profiles in long form (probe, s, radii in Å)."""
    keep = np.isfinite(scan.accessible_radius_A)
    ip, ks = np.nonzero(keep)
    rows = (
        (
            float(scan.probe_radius_A[i]),
            float(scan.s_A[k]),
            float(scan.accessible_radius_A[i, k]),
            float(scan.accessible_radius_inscribed_A[i, k]),
        )
        for i, k in zip(ip, ks, strict=True)
    )
    comments = (
        f"poreprobe {scan.version} accessible-radius profiles of {scan.source}",
        f"radius set: {scan.radius_set}; model-based estimate; lengths in Å",
    )
    return to_csv(
        ("probe_radius_A", "s_A", "accessible_radius_A", "accessible_radius_inscribed_A"),
        rows,
        path,
        comments,
    )


# ----------------------------------------------------------------------------------------
# internals
# ----------------------------------------------------------------------------------------
class _Context:
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


def _scan_one(ctx: _Context, p: float) -> _OneProbe:
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
    passes = bool(layers[f.exit_layer])
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
    if passes:
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
    deepest = k1 if f.entry == "low" else k0
    tip = _refine_tip(ctx, region, p, deepest)
    stop_s = float(tip[2])
    fine = _fine_section(ctx, region, p, stop_s, tip=tip)
    if fine is None or not fine[2]:
        # the section where the probe stops is open bulk: it never got into the pore
        return _OneProbe(False, False, stop_s, 0.0, 0.0, 0.0, 0.0, profile, profile_in)
    # the probe's own equatorial disk lies in the section, so neither radius is below p
    r_open = max(math.sqrt(fine[0] / math.pi), p)
    ri_open = min(max(fine[1], p), r_open)
    return _OneProbe(
        False, True, stop_s, r_open, ri_open, r_open - p, ri_open - p, profile, profile_in
    )


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


def _grid_sections(ctx: _Context, region: np.ndarray, p: float, k0: int, k1: int) -> _Sections:
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
    ctx: _Context, region: np.ndarray, p: float, s_star: float, *, tip=None, near_uv=None
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
    lattices.append((ctx.u, g))
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
    lattices.append((ctx.u[:-1] + 0.5 * h, g2))
    if tip is not None:
        near_uv = (float(tip[0]), float(tip[1]))
    cols = [np.nonzero(np.isfinite(gl)) for _, gl in lattices]
    if not any(c[0].size for c in cols) and tip is None:
        return None
    reach_A = clip + 2 * h
    lo, hi = -f.pore_radius_A - h, f.pore_radius_A + h
    found = [
        (coords[c[0]], coords[c[1]])
        for (coords, _), c in zip(lattices, cols, strict=True)
        if c[0].size
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
    for coords, gl in lattices:
        np.minimum(gfine, _to_raster(coords, gl, uf, vf, reach_A), out=gfine)
    if tip is not None:
        ball = (
            (uf[:, None] - tip[0]) ** 2
            + (vf[None, :] - tip[1]) ** 2
            + (s_star - tip[2]) ** 2
            - p * p
        )
        np.minimum(gfine, ball, out=gfine)
    disk = (uf[:, None] ** 2 + vf[None, :] ** 2) <= f.pore_radius_A**2 + 1e-9
    rim = disk & ~ndimage.binary_erosion(disk, _CROSS2, border_value=0)
    gfine = np.where(np.isfinite(gfine), gfine, 1e6)
    sec = _measure_sections(gfine[:, :, None], disk, rim, uf, vf, hf, near_uv=near_uv)
    if not sec.covered[0]:
        return None
    return float(sec.area[0]), float(sec.inscribed[0]), bool(sec.enclosed[0])


def _to_raster(coords, g, uf, vf, reach_A) -> np.ndarray:
    """``min over lattice columns (|x - y|^2 + g(y))`` at raster points, two separable passes."""
    rows = np.flatnonzero(np.isfinite(g).any(axis=1))
    colv = np.flatnonzero(np.isfinite(g).any(axis=0))
    out = np.full((len(uf), len(vf)), np.inf)
    if rows.size == 0:
        return out
    uc = coords[rows[0] : rows[-1] + 1]
    vc = coords[colv[0] : colv[-1] + 1]
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


def _refine_bottleneck(ctx: _Context, region: np.ndarray, p: float, k_b: int):
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


def _refine_tip(ctx: _Context, region: np.ndarray, p: float, k_tip: int) -> np.ndarray:
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
