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

from poreprobe._progress import progress
from poreprobe._validate import check_int, check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.probe_sections import ScanContext, path_bottleneck, scan_one
from poreprobe.geometry.reach import check_levels, reach_field, resolve_radii
from poreprobe.io.export import to_csv
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet
from poreprobe.io.structure import Atoms

#: Default probe radii (Å): 0.5 to 6.0 in steps of 0.25 (23 probes).
DEFAULT_PROBE_RADII_A = np.round(np.arange(0.5, 6.0 + 1e-9, 0.25), 10)


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
    bottleneck_clearance_A : float
        Off-grid bottleneck ``B`` (Å): the largest probe radius that passes, from the
        atoms (see :mod:`poreprobe.geometry.scanrefine`); probes pass exactly when
        ``p <= B``. NaN if not found.
    bottleneck_s_A : float
        Its level along the axis (Å).
    discretisation_error_A : float
        Estimate of the grid's remaining effect: the largest change of a capture radius
        (probes that enter on both grids) between this scan and one at
        ``error_spacing_A`` (Å); NaN if not estimated.
    error_spacing_A : float
        The coarser spacing of that comparison (1.5 x ``spacing_A``); NaN if not estimated.
    pass_changes_with_spacing : int
        Number of probes whose pass / enter decision differs between the two spacings.
    grid_angle_rad : float
        Rotation of the grid's in-plane axes from the axis frame, fixed by the structure.
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
    bottleneck_clearance_A: float = math.nan
    bottleneck_s_A: float = math.nan
    discretisation_error_A: float = math.nan
    error_spacing_A: float = math.nan
    pass_changes_with_spacing: int = 0
    grid_angle_rad: float = 0.0
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
            "bottleneck_clearance_A": _none_if_nan(self.bottleneck_clearance_A),
            "bottleneck_s_A": _none_if_nan(self.bottleneck_s_A),
            "discretisation": {
                "spacing_A": self.spacing_A,
                "compared_spacing_A": _none_if_nan(self.error_spacing_A),
                "max_capture_change_A": _none_if_nan(self.discretisation_error_A),
                "pass_changes": self.pass_changes_with_spacing,
                "meaning": "largest |change| of a capture radius between the two spacings: "
                "an estimate of the grid's remaining effect",
            },
            "grid_angle_rad": self.grid_angle_rad,
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
    error_estimate: bool = True,
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
    error_estimate : bool
        Also scan at 1.5 x ``spacing_A`` and report the largest change of a capture
        radius (``discretisation_error_A``), an estimate of the grid's remaining effect.

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
    ctx = ScanContext(field_, frame, radii_arr, refine_factor)
    n_p, n_s = len(probes), field_.shape[2]
    out = {
        name: np.full(n_p, np.nan) for name in ("capture", "capture_in", "open", "open_in", "stop")
    }
    passes = np.zeros(n_p, dtype=bool)
    enters = np.zeros(n_p, dtype=bool)
    prof = np.full((n_p, n_s), np.nan)
    prof_in = np.full((n_p, n_s), np.nan)
    notes: list[str] = []
    grid_pass = np.array([bool(field_.region(p)[:, :, field_.exit_layer].any()) for p in probes])
    bneck = path_bottleneck(ctx, probes, grid_pass)
    final_pass = (probes <= bneck.clearance_A) if bneck.accepted else grid_pass
    if bneck.note:
        notes.append(bneck.note)
    for i in progress(range(n_p), total=n_p, desc="probe scan", quiet=quiet):
        res = scan_one(ctx, float(probes[i]), bool(final_pass[i]), bneck)
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
    err, err_h, n_changed = math.nan, math.nan, 0
    if error_estimate:
        err_h = 1.5 * spacing_A
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", QualityWarning)
            try:
                coarse = probe_scan(
                    atoms,
                    axis,
                    probe_radii_A=probes,
                    radii_A=radii_arr,
                    spacing_A=err_h,
                    from_end=from_end,
                    pore_radius_A=pore_radius_A,
                    refine_factor=refine_factor,
                    error_estimate=False,
                )
            except PoreNotFoundError:
                coarse = None
        if coarse is not None:
            both = enters & coarse.enters
            diff = np.abs(out["capture"] - coarse.capture_radius_A)[both]
            diff = diff[np.isfinite(diff)]
            err = float(diff.max()) if diff.size else 0.0
            n_changed = int(np.count_nonzero((passes != coarse.passes) | (enters != coarse.enters)))
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
        bottleneck_clearance_A=float(bneck.clearance_A) if bneck.accepted else math.nan,
        bottleneck_s_A=float(bneck.s_A) if bneck.accepted else math.nan,
        discretisation_error_A=err,
        error_spacing_A=err_h,
        pass_changes_with_spacing=n_changed,
        grid_angle_rad=float(field_.grid_angle_rad),
        source=atoms.source,
    )


def _none_if_nan(value: float):
    return None if not math.isfinite(value) else float(value)


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
