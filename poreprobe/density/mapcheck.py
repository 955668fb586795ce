"""Checking a model against its own density map at the pore.

:func:`map_check` puts the map on the pore frame of a model's radius profile and reports

1. **unmodelled density in the pore** (:mod:`poreprobe.density.blobs`),
2. **side-chain support** of the pore-lining residues (:mod:`poreprobe.density.support`),
3. **the pore in the map**: the largest density-free sphere per plane
   (:mod:`poreprobe.density.pore_frame`) beside the model's profile,
4. the map value on the centre line, in RMS units.

Contour
-------
The user's level in map units, or by default the map's mean plus ``3`` RMS over the
whole map (our choice; "3 sigma" contours are common practice, recalled from memory).
The fraction of the lining backbone atoms above the contour is reported; below one half
a warning says the contour looks too high for this map.

Fit of the model to the map
---------------------------
The model's expected density (:func:`poreprobe.density.model_map.model_density`,
Gaussian atoms at the stated resolution) is fitted to the map on the voxels around the
pore by least squares, ``map = scale * model + offset``. Their correlation there is
reported; below 0.2 (our choice) the model clearly does not sit in this map (another
origin, cell or voxel size, or another map) and the check stops with an error.

Only the region around the pore is sampled at the map's full resolution: the lumen plus
the lining residues plus 3 Å (the box of the model density and of the blob search), and
the planes of the map radius profile.

Agreement of the two radius profiles
------------------------------------
The map's sphere is bounded by the contour surface, the model's by the van der Waals
surface. For an isolated carbon atom the contour surface lies at ``r_c`` from the atom's
centre (``scale * 6 * Gaussian(r_c) + offset = contour``; 0 when the atom's peak does not
reach the contour), so the map radius exceeds the model radius by up to
``r_vdW - r_c`` (r_vdW = 1.70 Å, carbon, Bondi 1964); walls of many atoms have more
density and bring the two closer. The expected band is therefore
``[-(h + sigma), max(r_vdW - r_c, 0) + h]`` (h the in-plane spacing, sigma the Gaussian
width); planes outside it are reported as disagreeing.

Everything here is an estimate from a model and a map, not a measurement.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.checks.model_checks import Finding, sorted_findings
from poreprobe.density.blobs import DensityBlob, find_blobs, single_water_volume_A3
from poreprobe.density.model_map import gaussian_sigma_A, model_density
from poreprobe.density.pore_frame import (
    centre_line_values,
    lumen_mask,
    map_radius_profile,
    plane_centres_A,
)
from poreprobe.density.support import MIN_SUPPORT, SideChainSupport, side_chain_support
from poreprobe.errors import InputError, QualityWarning
from poreprobe.geometry.lining import PoreLining, pore_lining
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.density_map import DensityMap
from poreprobe.io.structure import Atoms

CONTOUR_RMS = 3.0
MIN_CORRELATION = 0.2
LUMEN_MARGIN_A = 1.0
MIN_BLOB_VOLUME_A3 = 3.0
CARBON_VDW_A = 1.70
PLANE_SPACING_A = 0.25
CAVEAT = "model-based estimates from a model and its map, not measurements"


@dataclass(frozen=True)
class MapCheck:
    """The map at the pore of a model.

    Attributes
    ----------
    s_A, model_radius_A, map_radius_A : ndarray (n_planes,)
        Profile planes (Å), the model's radius and the map's (NaN where open).
    map_centre_A : ndarray (n_planes, 3)
    centre_line_rms : ndarray (n_planes,)
        Map value at each plane's centre as (value - mean) / RMS.
    radius_band_A : (float, float)
        Expected band of map minus model radius (module docstring).
    disagree : ndarray of bool (n_planes,)
        Planes where map minus model radius falls outside the band.
    blobs : tuple of DensityBlob
    support : tuple of SideChainSupport
    findings : tuple of Finding
        ``pore-density``, ``side-chain-unsupported``, ``map-radius-differs``.
    contour : float
    contour_rule : str
    resolution_A, scale, offset, correlation, backbone_inclusion : float
    settings : dict
    map_info : dict
    warnings : tuple of str
    source, version : str
    """

    s_A: np.ndarray
    model_radius_A: np.ndarray
    map_radius_A: np.ndarray
    map_centre_A: np.ndarray
    centre_line_rms: np.ndarray
    radius_band_A: tuple[float, float]
    disagree: np.ndarray
    blobs: tuple[DensityBlob, ...]
    support: tuple[SideChainSupport, ...]
    findings: tuple[Finding, ...]
    contour: float
    contour_rule: str
    resolution_A: float
    scale: float
    offset: float
    correlation: float
    backbone_inclusion: float
    settings: dict
    map_info: dict
    warnings: tuple[str, ...] = ()
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("s_A", "model_radius_A", "map_radius_A", "map_centre_A", "centre_line_rms"):
            getattr(self, name).setflags(write=False)
        self.disagree.setflags(write=False)

    def to_dict(self) -> dict:
        def clean(a):
            return np.where(np.isfinite(a), a, np.nan).tolist()

        return {
            "version": self.version,
            "source": self.source,
            "caveat": CAVEAT,
            "map": dict(self.map_info),
            "contour": self.contour,
            "contour_rule": self.contour_rule,
            "resolution_A": self.resolution_A,
            "fit": {
                "scale": self.scale,
                "offset": self.offset,
                "correlation": self.correlation,
                "backbone_inclusion": self.backbone_inclusion,
                "expected_density": "Gaussian atoms weighted by atomic number, "
                "sigma = d / (pi sqrt 2)",
            },
            "settings": dict(self.settings),
            "profile": {
                "s_A": clean(self.s_A),
                "model_radius_A": clean(self.model_radius_A),
                "map_radius_A": clean(self.map_radius_A),
                "map_centre_A": clean(self.map_centre_A),
                "centre_line_rms": clean(self.centre_line_rms),
                "disagree": self.disagree.tolist(),
            },
            "radius_band_A": list(self.radius_band_A),
            "blobs": [b.to_dict() for b in self.blobs],
            "side_chain_support": [s.to_dict() for s in self.support],
            "findings": [f.to_dict() for f in self.findings],
            "warnings": list(self.warnings),
        }

    def report_lines(self) -> list[str]:
        """Human-readable summary."""
        lines = [
            f"poreprobe {self.version}: map check of {self.source} ({CAVEAT})",
            f"map {self.map_info.get('source', '')}: contour {self.contour:.4g} "
            f"({self.contour_rule}); resolution {self.resolution_A:g} Å; correlation with "
            f"the model around the pore {self.correlation:.2f}; lining backbone in density "
            f"{100 * self.backbone_inclusion:.0f} %",
        ]
        lines.append(f"unmodelled density in the pore: {len(self.blobs)} blob(s)")
        for b in self.blobs:
            lines.append(
                f"  s = {b.s_A:6.1f} Å, {b.radial_A:4.1f} Å from the axis, "
                f"{b.volume_A3:6.1f} Å³, peak {b.peak_rms:4.1f} rms: {b.size_reading}; "
                f"{b.symmetry}; near {', '.join(b.residues[:4]) or 'no residue'}"
            )
        weak = [s for s in self.support if s.unsupported]
        lines.append(
            f"side chains lining the pore: {len(self.support)} scored, {len(weak)} "
            f"unsupported (score < {self.settings['min_support']:g})"
        )
        for s in weak:
            lines.append(f"  {s.residue}: support {s.score:.2f}")
        lo, hi = self.radius_band_A
        n_bad = int(self.disagree.sum())
        lines.append(
            f"map radius vs model radius: {n_bad} plane(s) outside the expected band "
            f"{lo:+.2f} to {hi:+.2f} Å"
        )
        lines += [f"warning: {w}" for w in self.warnings]
        return lines


def _stretches(mask: np.ndarray) -> list[tuple[int, int]]:
    """Index ranges [start, stop) of consecutive True values."""
    edges = np.diff(np.r_[0, mask.astype(np.int8), 0])
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1), strict=True))


def _findings(blobs, support, s, model_r, map_r, disagree, band) -> list[Finding]:
    out = []
    severity = {
        "single ion or water": "low",
        "several waters or ions": "medium",
        "larger: lipid, detergent or ligand": "high",
    }
    for b in blobs:
        out.append(
            Finding(
                severity[b.size_reading],
                "pore-density",
                f"Density the model leaves out at s = {b.s_A:.1f} Å, {b.radial_A:.1f} Å from "
                f"the axis: {b.volume_A3:.0f} Å³ (about {b.water_equivalents:.1f} waters), "
                f"peak {b.peak_rms:.1f} rms; {b.size_reading}; {b.symmetry}. Model what it "
                "is, or the pore may be narrower than the model says.",
                b.residues,
                {"s_A": b.s_A, "radial_A": b.radial_A, "volume_A3": b.volume_A3},
            )
        )
    for sc in support:
        if sc.unsupported:
            out.append(
                Finding(
                    "medium",
                    "side-chain-unsupported",
                    f"The side chain of {sc.residue} lines the pore but has {sc.score:.2f} of "
                    "the density the model predicts relative to its backbone"
                    + (
                        f" (atoms outside density: {', '.join(sc.outside_density)})"
                        if sc.outside_density
                        else ""
                    )
                    + "; its position, and the radius it sets, are not supported by the map.",
                    (sc.residue,),
                    {"s_A": sc.s_A, "score": sc.score},
                )
            )
    for start, stop in _stretches(disagree):
        diff = map_r[start:stop] - model_r[start:stop]
        worst = int(np.nanargmax(np.abs(diff)))
        narrower = diff[worst] < 0
        out.append(
            Finding(
                "medium" if narrower else "low",
                "map-radius-differs",
                f"From s = {s[start]:.1f} to {s[stop - 1]:.1f} Å the map's pore is "
                f"{'narrower' if narrower else 'wider'} than the model's by up to "
                f"{abs(diff[worst]):.2f} Å (expected band {band[0]:+.2f} to {band[1]:+.2f} Å)"
                + (
                    ": density fills part of the modelled pore."
                    if narrower
                    else ": the model's wall atoms sit where the map has little density."
                ),
                (),
                {
                    "s_A": float(s[start + worst]),
                    "s_range_A": [float(s[start]), float(s[stop - 1])],
                    "difference_A": float(diff[worst]),
                },
            )
        )
    return out


def _check_covers(dmap: DensityMap, profile: RadiusProfile) -> np.ndarray:
    """Enclosed planes' centres; an error when the map leaves any of them out."""
    enclosed = np.isfinite(profile.radius_A)
    centres = plane_centres_A(profile)[enclosed]
    inside = dmap.covers(centres)
    if not inside.all():
        lo, hi = dmap.extent_A()
        s_out = profile.s_A[enclosed][~inside]
        raise InputError(
            f"the map {dmap.source} does not cover the pore: {int((~inside).sum())} of "
            f"{len(centres)} pore planes (s = {s_out.min():.1f} to {s_out.max():.1f} Å) lie "
            f"outside its box {np.round(lo, 1).tolist()} to {np.round(hi, 1).tolist()} Å; "
            "check that model and map share one frame"
        )
    return centres


def map_check(
    dmap: DensityMap,
    atoms: Atoms,
    profile: RadiusProfile,
    *,
    resolution_A: float,
    lining: PoreLining | None = None,
    contour: float | None = None,
    lumen_margin_A: float = LUMEN_MARGIN_A,
    min_blob_volume_A3: float = MIN_BLOB_VOLUME_A3,
    min_support: float = MIN_SUPPORT,
    min_correlation: float = MIN_CORRELATION,
    plane_spacing_A: float = PLANE_SPACING_A,
) -> MapCheck:
    """Check a model against its density map at the pore (module docstring).

    Parameters
    ----------
    dmap : DensityMap
        The map, on the model's frame (:func:`poreprobe.io.density_map.read_density_map`).
    atoms : Atoms
        The atoms the profile was computed from (same order).
    profile : RadiusProfile
    resolution_A : float
        The map's resolution d (Å, > 0): the width of the model's expected density.
    lining : PoreLining, optional
        Lining residues (default :func:`poreprobe.geometry.lining.pore_lining`).
    contour : float, optional
        Density threshold in map units (default the map mean + 3 RMS).
    lumen_margin_A : float
        The lumen extends this far beyond the profile radius (Å, default 1).
    min_blob_volume_A3 : float
        Smaller blobs are dropped (Å^3, default 3).
    min_support : float
        Side-chain support score below which a side chain is flagged (default 0.5).
    min_correlation : float
        Smallest model-map correlation around the pore accepted (default 0.2).
    plane_spacing_A : float
        Grid spacing of the map radius profile within a plane (Å, default 0.25).

    Returns
    -------
    MapCheck

    Raises
    ------
    InputError
        Bad settings, a map that does not cover the pore, or a model that does not sit in
        the map's density.
    """
    if not isinstance(dmap, DensityMap):
        raise InputError(f"dmap must be a DensityMap, got {type(dmap).__name__}")
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    d = check_positive(resolution_A, "resolution_A")
    margin = check_positive(lumen_margin_A, "lumen_margin_A", allow_zero=True)
    min_vol = check_positive(min_blob_volume_A3, "min_blob_volume_A3", allow_zero=True)
    min_support = check_positive(min_support, "min_support")
    h = check_positive(plane_spacing_A, "plane_spacing_A")
    if contour is None:
        level = dmap.mean + CONTOUR_RMS * dmap.rms
        rule = f"map mean + {CONTOUR_RMS:g} RMS (default)"
    else:
        level = float(contour)
        if not np.isfinite(level):
            raise InputError(f"contour must be a finite number (map units), got {contour}")
        rule = "given"
    if not np.isfinite(profile.radius_A).any():
        raise InputError("the profile has no enclosed plane: no pore to check")
    centres = _check_covers(dmap, profile)
    if lining is None:
        lining = pore_lining(atoms, profile)
    notes: list[str] = []

    # the box around the pore: lumen plus lining residues plus 3 Å
    radius = profile.radius_A[np.isfinite(profile.radius_A)]
    reach = float(radius.max()) + margin
    lining_labels = [r.label for r in lining.residues]
    labels = atoms.residue_labels()
    # atoms of the lining residues, near the pore (labels can repeat far away in a model
    # that holds several copies of a channel under the same chain names)
    from scipy.spatial import cKDTree

    near_pore, _ = cKDTree(centres).query(atoms.coords_A, distance_upper_bound=reach + 10.0)
    lining_atoms = np.isin(labels, lining_labels) & np.isfinite(near_pore)
    pts = np.concatenate([centres - reach, centres + reach, atoms.coords_A[lining_atoms]])
    box = dmap.crop(pts.min(axis=0) - 3.0, pts.max(axis=0) + 3.0)
    expected = model_density(atoms, box, d)
    obs = box.values.astype(np.float64).ravel()
    exp = expected.astype(np.float64).ravel()
    if not exp.std() > 0:
        raise InputError("no model atom lies near the pore inside the map")
    cc = float(np.corrcoef(obs, exp)[0, 1])
    scale, offset = np.polyfit(exp, obs, 1)
    if not cc >= min_correlation or not scale > 0:
        raise InputError(
            f"the model does not sit in the map's density (correlation {cc:.2f} around the "
            f"pore, below {min_correlation:g}): check the map's origin, cell and voxel size "
            "against the model, and that this is the model's map"
        )
    fitted = scale * expected.astype(np.float64) + offset

    # unmodelled density in the lumen
    positions = box.positions_A()
    lumen = lumen_mask(positions, profile, margin).reshape(box.shape)
    residual = box.values - fitted
    unexplained = lumen & (box.values > level) & (residual > 0.5 * (level - offset))
    sigma = gaussian_sigma_A(d)
    v_single = single_water_volume_A3(scale, offset, level, sigma)
    blobs = find_blobs(
        box.values,
        positions,
        unexplained,
        residual,
        voxel_volume_A3=box.voxel_volume_A3,
        map_mean=dmap.mean,
        map_rms=dmap.rms,
        profile=profile,
        atoms=atoms,
        single_volume_A3=v_single,
        resolution_A=d,
        min_volume_A3=min_vol,
        min_peak_residual=level - offset,
    )

    # side-chain support of the lining residues
    at_obs = np.full(len(atoms), np.nan)
    at_exp = np.full(len(atoms), np.nan)
    at_obs[lining_atoms] = box.sample(atoms.coords_A[lining_atoms])
    from scipy.ndimage import map_coordinates

    at_exp[lining_atoms] = (
        scale
        * map_coordinates(
            expected, box.index_of(atoms.coords_A[lining_atoms]).T, order=1, mode="nearest"
        )
        + offset
    )
    support = side_chain_support(
        atoms,
        lining_labels,
        at_obs,
        at_exp,
        profile.axis.s_A(atoms.coords_A),
        offset=offset,
        contour=level,
        min_support=min_support,
    )
    bb = lining_atoms & np.isin(atoms.name, ("N", "CA", "C", "O")) & np.isfinite(at_obs)
    inclusion = float(np.mean(at_obs[bb] > level)) if bb.any() else float("nan")
    if inclusion < 0.5:
        notes.append(
            f"only {100 * inclusion:.0f} % of the lining backbone atoms are above the contour "
            f"{level:.4g}: the contour looks too high for this map (give --contour)"
        )

    # the pore in the map
    half = min(profile.max_radius_A, float(radius.max()) + 5.0) + 2 * h
    map_r, map_c = map_radius_profile(dmap, profile, level, half_width_A=half, spacing_A=h)
    peak_c = scale * 6.0 / (2.0 * np.pi * sigma**2) ** 1.5
    height = level - offset
    r_c = sigma * np.sqrt(2.0 * np.log(peak_c / height)) if 0 < height < peak_c else 0.0
    band = (-(h + sigma), max(CARBON_VDW_A - r_c, 0.0) + h)
    diff = map_r - profile.radius_A
    with np.errstate(invalid="ignore"):
        disagree = np.isfinite(diff) & ((diff < band[0]) | (diff > band[1]))
    centre_rms = (centre_line_values(dmap, profile) - dmap.mean) / dmap.rms

    findings = _findings(blobs, support, profile.s_A, profile.radius_A, map_r, disagree, band)
    for note in notes:
        warnings.warn(note, QualityWarning, stacklevel=2)
    return MapCheck(
        s_A=np.array(profile.s_A, dtype=np.float64),
        model_radius_A=np.array(profile.radius_A, dtype=np.float64),
        map_radius_A=map_r,
        map_centre_A=map_c,
        centre_line_rms=centre_rms,
        radius_band_A=(float(band[0]), float(band[1])),
        disagree=disagree,
        blobs=blobs,
        support=support,
        findings=sorted_findings(findings),
        contour=float(level),
        contour_rule=rule,
        resolution_A=d,
        scale=float(scale),
        offset=float(offset),
        correlation=cc,
        backbone_inclusion=inclusion,
        settings={
            "radius_set": profile.radius_set,
            "lumen_margin_A": margin,
            "min_blob_volume_A3": min_vol,
            "min_support": min_support,
            "min_correlation": float(min_correlation),
            "plane_spacing_A": h,
            "gaussian_sigma_A": sigma,
            "single_water_volume_A3": v_single,
            "box_shape": list(box.shape),
        },
        map_info=dmap.to_dict(),
        warnings=tuple(notes),
        source=atoms.source,
    )
