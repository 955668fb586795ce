"""The radius profile: the largest empty sphere centred in each plane across the axis.

Definition
----------
For planes perpendicular to the pore axis at positions s (a fixed step over the
protein's axial extent plus a margin), the profile radius is the radius of the
largest sphere centred in that plane that overlaps no atom's van der Waals
sphere, i.e. the maximum over the plane of the clearance
``min_i (|x - a_i| - r_i)``, restricted to the pore:

* **Continuity.** The centre is the local maximum of the clearance reached by
  hill-climbing in the plane from the axis point (every fourth plane) or from the
  straight line between those planes' centres (the planes in between). If that maximum lies more
  than ``1 Å + step`` from the previous plane's centre (a jump into a side
  pocket), or escapes to the bulk while the previous plane is enclosed, the
  climb is repeated from the previous centre, so the centre follows the pore.
  Planes are visited outwards from the plane at s = 0.
* **The pore's own region.** From that local maximum, the largest sphere of the
  plane's pore region is taken: the region holds every point a sphere of at least
  ``neck_fraction`` (default 0.75) times the current radius can slide to within the
  plane (:mod:`poreprobe.geometry.planeregion`). Larger maxima joined by wide necks are
  found; side pockets behind narrow necks are not the pore and are left out.
* **Open planes.** Where the sphere grows beyond ``max_radius_A`` the plane is
  open to the bulk: its radius and centre are NaN.
* **Occluded planes.** Where no point of the plane is free (the largest clearance is
  negative: atoms overlap every point), the plane is occluded: radius 0,
  ``occluded`` True, and the (negative) clearance, how deep the atoms overlap at the
  least covered point, in ``signed_clearance_A``.

The climb runs on all planes at once: a trust-region sequence of small linear
programs on the clearance of the nearest atoms (:mod:`poreprobe.geometry.planemax`),
each step checked against all atoms with the exact KD-tree kernel, so the
radius reported at the returned centre is exact.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.inplane import inplane_angle_rad, rotate_uv, unrotate_uv
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.planemax import maximise_in_planes
from poreprobe.geometry.planeregion import NECK_FRACTION, check_neck_fraction, region_maximum
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms

#: Atoms within this lateral distance of the axis orient the in-plane rasters (Å).
INPLANE_RADIUS_A = 15.0


@dataclass(frozen=True)
class RadiusProfile:
    """Pore radius along the axis.

    Attributes
    ----------
    s_A : ndarray of shape (n_planes,)
        Plane positions along the axis (Å).
    radius_A : ndarray of shape (n_planes,)
        Largest empty sphere radius per plane (Å); NaN where the plane is open, 0 where
        it is occluded.
    center_A : ndarray of shape (n_planes, 3)
        Sphere centres in the input's Cartesian frame (Å); NaN where open.
    axis : PoreAxis
    radius_set : str
        Name of the radius set used.
    step_A, max_radius_A : float
        Plane spacing and the open-plane cut-off (Å).
    min_radius_A, min_s_A : float
        Narrowest radius and its position (NaN if every plane is open).
    min_center_A : ndarray of shape (3,)
    min_residues : tuple of str
        Residues (``"A:LEU12"``) with atoms within ``contact_tol_A`` of the
        sphere's surface at the narrowest plane.
    contact_tol_A : float
    nearest_atom : ndarray of int, shape (n_planes,)
        Index (into the atoms profiled) of the atom touching each sphere; -1 where open.
    occluded : ndarray of bool, shape (n_planes,)
        No point of the plane is free (radius 0).
    signed_clearance_A : ndarray of shape (n_planes,)
        Clearance at each centre (Å): the radius where the plane is free, negative
        (the overlap depth of the atoms at the least covered point) where occluded,
        NaN where open.
    neck_fraction : float
        The fraction f of the region's neck criterion.
    source : str
    version : str
    """

    s_A: np.ndarray
    radius_A: np.ndarray
    center_A: np.ndarray
    axis: PoreAxis
    radius_set: str
    step_A: float
    max_radius_A: float
    min_radius_A: float
    min_s_A: float
    min_center_A: np.ndarray
    min_residues: tuple[str, ...]
    contact_tol_A: float
    nearest_atom: np.ndarray
    occluded: np.ndarray = None
    signed_clearance_A: np.ndarray = None
    neck_fraction: float = 0.75
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        if self.occluded is None:
            object.__setattr__(self, "occluded", np.zeros(len(self.s_A), dtype=bool))
        if self.signed_clearance_A is None:
            object.__setattr__(self, "signed_clearance_A", np.array(self.radius_A, dtype=float))
        for name in (
            "s_A",
            "radius_A",
            "center_A",
            "min_center_A",
            "nearest_atom",
            "occluded",
            "signed_clearance_A",
        ):
            getattr(self, name).setflags(write=False)

    @property
    def min_occluded(self) -> bool:
        """True when the narrowest plane is occluded (no free point: radius 0)."""
        k = np.flatnonzero(self.s_A == self.min_s_A)
        return bool(k.size and self.occluded[k[0]])

    def narrowest_text(self) -> str:
        """``"radius 1.34 Å at s = 2.0 Å"``, or the occluded wording (never a negative radius)."""
        if not np.isfinite(self.min_radius_A):
            return "n/a (every plane open)"
        if self.min_occluded:
            k = int(np.flatnonzero(self.s_A == self.min_s_A)[0])
            return (
                f"occluded at s = {self.min_s_A:.1f} Å (no free point in the plane; atoms "
                f"overlap by {-float(self.signed_clearance_A[k]):.2f} Å there; "
                f"{self.n_occluded} occluded plane{'s' if self.n_occluded != 1 else ''})"
            )
        return f"radius {self.min_radius_A:.2f} Å at s = {self.min_s_A:.1f} Å"

    @property
    def n_occluded(self) -> int:
        """Number of occluded planes."""
        return int(np.count_nonzero(self.occluded))

    def to_dict(self) -> dict:
        """JSON-ready dictionary (NaN becomes None)."""

        def clean(arr):
            arr = np.asarray(arr, dtype=float)
            return np.where(np.isfinite(arr), arr, np.nan).tolist()

        return {
            "version": self.version,
            "source": self.source,
            "axis": self.axis.to_dict(),
            "radius_set": self.radius_set,
            "step_A": self.step_A,
            "max_radius_A": self.max_radius_A,
            "min_radius_A": _none_if_nan(self.min_radius_A),
            "min_s_A": _none_if_nan(self.min_s_A),
            "min_center_A": clean(self.min_center_A),
            "min_residues": list(self.min_residues),
            "contact_tol_A": self.contact_tol_A,
            "neck_fraction": self.neck_fraction,
            "min_occluded": self.min_occluded,
            "n_occluded": self.n_occluded,
            "profile": {
                "s_A": clean(self.s_A),
                "radius_A": clean(self.radius_A),
                "center_A": clean(self.center_A),
                "occluded": self.occluded.tolist(),
                "signed_clearance_A": clean(self.signed_clearance_A),
            },
        }


def _none_if_nan(value: float):
    return None if not np.isfinite(value) else float(value)


def plane_positions_A(s_atoms_A: np.ndarray, step_A: float, margin_A: float) -> np.ndarray:
    """Plane positions: multiples of ``step_A`` covering the atoms' extent plus a margin."""
    lo = np.floor((s_atoms_A.min() - margin_A) / step_A)
    hi = np.ceil((s_atoms_A.max() + margin_A) / step_A)
    return np.arange(lo, hi + 1) * step_A


class _PlaneClimber:
    """Climbs planes to their local clearance maxima (see :mod:`poreprobe.geometry.planemax`)."""

    def __init__(self, spheres: AtomSpheres, max_radius_A: float):
        self.spheres = spheres  # atoms in the axis frame (u, v, s)
        self.cap = max_radius_A

    def solve(self, s: np.ndarray, start: np.ndarray, delta_A: float = 1.0):
        """Climb from ``start`` (P, 2) in the planes ``s`` (P,); returns centres and radii."""
        return maximise_in_planes(self.spheres, s, start, self.cap, delta_A=delta_A)

    def solve_all(self, s: np.ndarray, every: int = 4):
        """Climb every plane: every ``every``-th from the axis point, the others warm-started.

        Planes between two enclosed anchor planes start from the straight line between
        the anchors' centres (with a smaller first step); the rest from the axis point.
        """
        centres = np.zeros((len(s), 2))
        values = np.empty(len(s))
        anchors = np.unique(np.r_[np.arange(0, len(s), every), len(s) - 1])
        centres[anchors], values[anchors] = self.solve(s[anchors], centres[anchors])
        rest = np.setdiff1d(np.arange(len(s)), anchors)
        if rest.size:
            right = np.searchsorted(anchors, rest)
            lo, hi = anchors[right - 1], anchors[right]
            weight = ((rest - lo) / (hi - lo))[:, None]
            start = (1 - weight) * centres[lo] + weight * centres[hi]
            enclosed = (values[lo] <= self.cap) & (values[hi] <= self.cap)
            start[~enclosed] = 0.0
            centres[rest], values[rest] = self.solve(s[rest], start, delta_A=0.25)
        return centres, values


def radius_profile(
    atoms: Atoms,
    axis: PoreAxis,
    *,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A: np.ndarray | None = None,
    step_A: float = 0.2,
    margin_A: float = 2.0,
    max_radius_A: float = 20.0,
    s_range_A: tuple[float, float] | None = None,
    contact_tol_A: float = 0.3,
    neck_fraction: float = NECK_FRACTION,
) -> RadiusProfile:
    """Compute the pore radius profile along an axis.

    Parameters
    ----------
    atoms : Atoms
        The channel (at least 2 atoms).
    axis : PoreAxis
        From :func:`poreprobe.find_pore_axis`.
    radii : str or RadiusSet
        Radius set (default ``"bondi"``); ignored when ``radii_A`` is given.
    radii_A : ndarray of shape (n,), optional
        Explicit per-atom radii (Å).
    step_A : float
        Plane spacing (Å, > 0). Planes sit at multiples of the step.
    margin_A : float
        Extension beyond the atoms' axial extent (Å, >= 0).
    max_radius_A : float
        Planes whose sphere would exceed this are open (NaN).
    s_range_A : (float, float), optional
        Explicit (low, high) plane range, e.g. to share one grid across frames.
    contact_tol_A : float
        Atoms whose surface lies within this distance of the narrowest sphere
        are reported in ``min_residues``.
    neck_fraction : float
        Fraction f in (0, 1] of the region's neck criterion: the plane's maximum is taken
        over the points a sphere of at least ``f`` times the local radius can reach
        within the plane (see :mod:`poreprobe.geometry.planeregion`).

    Returns
    -------
    RadiusProfile

    Raises
    ------
    InputError
        Bad step, margin, range or radii.
    PoreNotFoundError
        If the pore is closed everywhere or no plane is enclosed.

    Notes
    -----
    Radius at a plane: ``max_{x in plane} min_i (|x - a_i| - r_i)`` subject to
    the continuity rule in the module docstring.

    Examples
    --------
    >>> import numpy as np, poreprobe
    >>> t = np.linspace(0, 2 * np.pi, 12, endpoint=False)
    >>> ring = [[6 * np.cos(a), 6 * np.sin(a), z] for z in np.arange(-6, 7, 1.0) for a in t]
    >>> atoms = poreprobe.make_atoms(ring)
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> prof = poreprobe.radius_profile(atoms, axis, step_A=0.5, margin_A=0)
    >>> round(prof.min_radius_A, 3)
    4.3
    """
    step_A = check_positive(step_A, "step_A")
    margin_A = check_positive(margin_A, "margin_A", allow_zero=True)
    max_radius_A = check_positive(max_radius_A, "max_radius_A")
    contact_tol_A = check_positive(contact_tol_A, "contact_tol_A", allow_zero=True)
    neck_fraction = check_neck_fraction(neck_fraction)
    if len(atoms) < 2:
        raise InputError(f"need at least 2 atoms for a radius profile, got {len(atoms)}")
    rset = get_radius_set(radii) if radii_A is None else None
    radius_label = rset.name if rset is not None else "per-atom array"
    if radii_A is None:
        radii_A = atom_radii_A(atoms, rset)
    else:
        radii_A = np.asarray(radii_A, dtype=np.float64)
        if radii_A.shape != (len(atoms),):
            raise InputError(f"radii_A must have {len(atoms)} values, got {radii_A.shape}")
    # in-plane axes turned by an angle fixed by the atoms (geometry.inplane), so the
    # region rasters move with the structure, not with the lab frame
    frame = axis.to_frame(atoms.coords_A)
    theta = inplane_angle_rad(frame, INPLANE_RADIUS_A)
    frame = rotate_uv(frame, theta)
    if s_range_A is None:
        s_planes = plane_positions_A(frame[:, 2], step_A, margin_A)
    else:
        lo, hi = (float(v) for v in s_range_A)
        if not (np.isfinite(lo) and np.isfinite(hi) and hi > lo):
            raise InputError(f"s_range_A must be (low, high) with high > low, got {s_range_A}")
        s_planes = np.arange(np.floor(lo / step_A), np.ceil(hi / step_A) + 1) * step_A
    if len(s_planes) > 200_000:
        raise InputError(f"{len(s_planes)} planes requested; increase step_A")
    spheres_frame = AtomSpheres(frame, radii_A)
    climber = _PlaneClimber(spheres_frame, max_radius_A)
    centres, values = climber.solve_all(s_planes)
    centres, values = _enforce_continuity(
        s_planes, centres, values, climber, max_radius_A, jump_A=1.0 + step_A
    )
    centres, values = region_maximum(
        spheres_frame, s_planes, centres, values, max_radius_A, neck_fraction=neck_fraction
    )
    open_plane = values > max_radius_A
    occluded = ~open_plane & (values < 0)
    signed = np.where(open_plane, np.nan, values)
    radius = np.where(open_plane, np.nan, np.maximum(values, 0.0))
    uvs = np.column_stack([centres, s_planes])
    nearest = spheres_frame.clearance_A(uvs, return_index=True)[1]
    nearest = np.where(open_plane, -1, nearest)
    centre_xyz = axis.from_frame(unrotate_uv(uvs, theta))
    centre_xyz[open_plane] = np.nan
    if np.all(open_plane):
        raise PoreNotFoundError(
            "every plane along the axis is open: no enclosed pore "
            f"(max_radius_A = {max_radius_A}); check the axis"
        )
    # narrowest: the smallest signed clearance (the deepest overlap among occluded planes)
    k = int(np.nanargmin(signed))
    dist = np.linalg.norm(frame - uvs[k], axis=1) - radii_A
    touching = np.flatnonzero(dist <= signed[k] + contact_tol_A)
    labels = atoms.residue_labels()[touching]
    residues = tuple(dict.fromkeys(labels[np.argsort(dist[touching], kind="stable")].tolist()))
    return RadiusProfile(
        s_A=s_planes,
        radius_A=radius,
        center_A=centre_xyz,
        axis=axis,
        radius_set=radius_label,
        step_A=step_A,
        max_radius_A=max_radius_A,
        min_radius_A=float(radius[k]),
        min_s_A=float(s_planes[k]),
        min_center_A=centre_xyz[k].copy(),
        min_residues=residues,
        contact_tol_A=contact_tol_A,
        nearest_atom=nearest.astype(np.int64),
        occluded=occluded,
        signed_clearance_A=signed,
        neck_fraction=neck_fraction,
        source=atoms.source,
    )


def _enforce_continuity(s, centres, values, climber, cap, jump_A):
    """Walk outwards from s = 0; re-climb planes whose centre jumped or escaped.

    A plane is climbed again from the previous plane's centre when its own centre lies
    more than ``jump_A`` from it, or when it came out open while the previous plane is
    enclosed (the axis point lay outside a bent pore).
    """
    start = int(np.argmin(np.abs(s)))
    for order in (range(start + 1, len(s)), range(start - 1, -1, -1)):
        prev = start
        for k in order:
            if values[prev] <= cap:
                escaped = values[k] > cap
                if escaped or np.linalg.norm(centres[k] - centres[prev]) > jump_A:
                    c, v = climber.solve(s[k : k + 1], centres[prev][None])
                    centres[k], values[k] = c[0], v[0]
            prev = k
    return centres, values
