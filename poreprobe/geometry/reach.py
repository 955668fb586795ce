"""The pore grid and the reach field: how wide a probe can get where, from the entry end.

Definitions
-----------
Clearance of a point x: ``c(x) = min_i (|x - a_i| - r_i)``, the radius of the
largest sphere centred at x that overlaps no atom (exact, from
:class:`poreprobe.geometry.kernel.AtomSpheres`). A probe of radius p can hold its centre
at x when ``c(x) >= p``.

Reach of a point x: the largest p for which x lies in the part of
``{c >= p}`` that is connected to the entry bulk, i.e. the widest-path
(max-min, bottleneck) value ``max over paths from the entry bulk to x of the
smallest clearance along the path``. The probe-centre region of probe p is
``{reach >= p}``.

The grid
--------
Voxels sit in the grid frame: the axis frame (u, v, s) of a
:class:`~poreprobe.geometry.axis.PoreAxis` turned about the axis by ``grid_angle_rad``, an
angle fixed by the atoms near the pore (:mod:`poreprobe.geometry.inplane`), so the grid
moves with the structure under rigid motions instead of following the lab frame. Grid u
and v run across the axis (the axis itself is a grid line), s along it, all at
spacing ``spacing_A``; s positions are multiples of the spacing, so grids of
different structures and spacings share planes. Only voxels inside a cylinder
of radius ``pore_radius_A`` around the axis belong to the pore region, less the
free space outside the protein's wall (:func:`exterior_voxels`). Along s
the grid covers the atoms that touch that cylinder plus a margin of
``max probe + 2 spacings`` at both ends, so the end layers lie beyond the
protein. The **entry bulk** is the end layer (cap) at the entry end
(``from_end="low"``: smallest s); its voxels start the reach with their own
clearance. Connectivity is face-adjacency (6 neighbours).

Algorithms (all exact on the grid; see ``benchmarks/bench_scan.py``)
-------------------------------------------------------------------
``"label"``
    One connected-component labelling (``scipy.ndimage.label``) per level in
    ``levels_A``; ``reach_A`` then holds the largest level whose region holds
    the voxel (exact at the levels). Fastest for a probe set (23 levels on the
    20,000-atom benchmark channel: 0.1-0.2 s), and what
    :func:`poreprobe.probe_scan` uses.
``"union-find"``
    A maximum spanning tree of the graph of free voxels (Kruskal, i.e.
    union-find over voxel pairs sorted by clearance, ``scipy.sparse.csgraph``);
    the reach of a voxel is the smallest clearance on its tree path to the entry
    cap, taken by pointer jumping. The exact value of every voxel in one pass;
    on the benchmark channel about as fast as the 23 labellings, because voxels
    inside atoms drop out of the graph. Default for an exact field.
``"reconstruction"``
    Grey-scale reconstruction by dilation of the clearance from the entry cap
    (``skimage.morphology.reconstruction``, 6-connectivity). Exact, but it
    visits every voxel: 2-3 times slower than union-find on the benchmark
    channel (faster only when most of the region is free space).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import ndimage

from poreprobe._validate import as_coords_A, check_choice, check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.inplane import inplane_angle_rad, rotate_uv, unrotate_uv
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms

ENTRY_ENDS = ("low", "high")
REACH_METHODS = ("auto", "label", "reconstruction", "union-find")
MAX_VOXELS = 60_000_000
#: Gaps narrower than this (clearance below it) count as protein wall when telling the
#: space outside the protein from the pore (default when no probe levels are given).
WALL_GAP_A = 0.5
#: Clearances are exact up to ``max_probe_A + CLEARANCE_MARGIN_A + 3 spacings``, clipped above.
CLEARANCE_MARGIN_A = 3.0

_FACE = ndimage.generate_binary_structure(3, 1)


@dataclass(frozen=True)
class ReachField:
    """Clearance and reach on a grid around the pore axis.

    Attributes
    ----------
    axis : PoreAxis
        The frame: u, v across the axis, s along it (Å).
    spacing_A : float
        Grid spacing (Å), the same along u, v and s.
    origin_A : ndarray of shape (3,)
        Axis-frame (u, v, s) position of voxel (0, 0, 0) (Å).
    shape : tuple of int
        (n_u, n_v, n_s).
    inside : ndarray of bool, shape (n_u, n_v, n_s)
        The pore region: voxels within ``pore_radius_A`` of the axis, less free
        space outside the protein's wall.
    clearance_A : ndarray of float, shape (n_u, n_v, n_s)
        Clearance at each voxel of the cylinder (Å): exact wherever it is >= 0,
        clipped at ``clearance_cap_A``; deep inside atoms a negative upper
        bound (see :func:`_clearance_grid`); NaN outside the cylinder.
    reach_A : ndarray of float, shape (n_u, n_v, n_s)
        Reach value (Å); ``-inf`` where no probe of radius >= 0 (or, with the
        ``"label"`` method, of the smallest level) gets from the entry bulk.
    entry : {"low", "high"}
        The end where probes enter (the s end whose cap starts the reach).
    clearance_cap_A : float
        Clearances (and so reach values) above this are reported as this (Å).
    pore_radius_A : float
        Radius of the pore-region cylinder (Å).
    protein_s_A : (float, float)
        Axial extent (Å) of the atom spheres that touch the pore region.
    levels_A : ndarray or None
        Levels the ``"label"`` method resolved (None for exact methods).
    method : str
        Reach algorithm used.
    radius_set : str
    grid_angle_rad : float
        Rotation of the grid's (u, v) about the axis relative to the axis frame (radians).
    source : str
    version : str
    """

    axis: PoreAxis
    spacing_A: float
    origin_A: np.ndarray
    shape: tuple[int, int, int]
    inside: np.ndarray
    clearance_A: np.ndarray
    reach_A: np.ndarray
    entry: str
    clearance_cap_A: float
    pore_radius_A: float
    protein_s_A: tuple[float, float]
    levels_A: np.ndarray | None
    method: str
    radius_set: str
    grid_angle_rad: float = 0.0
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("origin_A", "inside", "clearance_A", "reach_A"):
            getattr(self, name).setflags(write=False)
        if self.levels_A is not None:
            self.levels_A.setflags(write=False)

    # -- coordinates ---------------------------------------------------------------
    @property
    def u_A(self) -> np.ndarray:  # noqa: N802
        """u coordinates of the grid columns (Å)."""
        return self.origin_A[0] + self.spacing_A * np.arange(self.shape[0])

    @property
    def v_A(self) -> np.ndarray:  # noqa: N802
        """v coordinates of the grid rows (Å)."""
        return self.origin_A[1] + self.spacing_A * np.arange(self.shape[1])

    @property
    def s_A(self) -> np.ndarray:  # noqa: N802
        """Axial positions of the grid layers (Å), ascending."""
        return self.origin_A[2] + self.spacing_A * np.arange(self.shape[2])

    def to_grid_frame(self, xyz_A) -> np.ndarray:
        """Cartesian points (..., 3) in the grid frame (u, v turned by ``grid_angle_rad``)."""
        return rotate_uv(self.axis.to_frame(xyz_A), self.grid_angle_rad)

    def index_to_frame(self, index) -> np.ndarray:
        """Axis-frame (u, v, s) coordinates (Å) of voxel indices (..., 3)."""
        idx = np.asarray(index, dtype=np.float64)
        if idx.shape[-1:] != (3,):
            raise InputError(f"index must have shape (..., 3), got {idx.shape}")
        return unrotate_uv(self.origin_A + idx * self.spacing_A, self.grid_angle_rad)

    def frame_to_index(self, uvs_A) -> np.ndarray:
        """Nearest voxel indices (..., 3) of axis-frame points; may fall outside the grid."""
        uvs = np.asarray(uvs_A, dtype=np.float64)
        if uvs.shape[-1:] != (3,):
            raise InputError(f"uvs_A must have shape (..., 3), got {uvs.shape}")
        grid = rotate_uv(uvs, self.grid_angle_rad)
        return np.rint((grid - self.origin_A) / self.spacing_A).astype(np.int64)

    def index_to_xyz(self, index) -> np.ndarray:
        """Cartesian coordinates (Å) of voxel indices (..., 3)."""
        return self.axis.from_frame(self.index_to_frame(index))

    def xyz_to_index(self, xyz_A) -> np.ndarray:
        """Nearest voxel indices (..., 3) of Cartesian points; may fall outside the grid."""
        return self.frame_to_index(self.axis.to_frame(xyz_A))

    def contains_index(self, index) -> np.ndarray:
        """Whether voxel indices (..., 3) lie on the grid and inside the pore region."""
        idx = np.asarray(index, dtype=np.int64)
        ok = np.all((idx >= 0) & (idx < np.asarray(self.shape)), axis=-1)
        out = np.zeros(ok.shape, dtype=bool)
        sel = idx[ok]
        out[ok] = self.inside[sel[:, 0], sel[:, 1], sel[:, 2]]
        return out

    # -- regions ---------------------------------------------------------------------
    def region(self, probe_radius_A: float) -> np.ndarray:
        """Probe-centre region of one probe: voxels with reach >= ``probe_radius_A``."""
        p = check_positive(probe_radius_A, "probe_radius_A", allow_zero=True)
        if self.levels_A is not None and not np.any(np.isclose(self.levels_A, p, atol=1e-9)):
            raise InputError(
                f"this field was labelled at levels {self.levels_A.tolist()} only; "
                f"probe_radius_A={p} is not one of them"
            )
        return self.reach_A >= p - 1e-9

    @property
    def entry_layer(self) -> int:
        """Index of the entry cap layer."""
        return 0 if self.entry == "low" else self.shape[2] - 1

    @property
    def exit_layer(self) -> int:
        """Index of the cap layer at the far end."""
        return self.shape[2] - 1 if self.entry == "low" else 0

    @property
    def depth_sign(self) -> float:
        """+1 if probes travel towards +s, -1 otherwise."""
        return 1.0 if self.entry == "low" else -1.0

    def to_dict(self) -> dict:
        """Summary (grid geometry and inputs; not the arrays)."""
        return {
            "version": self.version,
            "source": self.source,
            "axis": self.axis.to_dict(),
            "radius_set": self.radius_set,
            "spacing_A": self.spacing_A,
            "origin_A": self.origin_A.tolist(),
            "shape": list(self.shape),
            "entry": self.entry,
            "clearance_cap_A": self.clearance_cap_A,
            "pore_radius_A": self.pore_radius_A,
            "protein_s_A": list(self.protein_s_A),
            "method": self.method,
            "grid_angle_rad": self.grid_angle_rad,
            "levels_A": None if self.levels_A is None else self.levels_A.tolist(),
            "n_inside": int(self.inside.sum()),
        }


def resolve_radii(atoms: Atoms, radii, radii_A) -> tuple[np.ndarray, str]:
    """Per-atom radii (Å) and the radius-set label, from a set name or an explicit array."""
    if radii_A is None:
        rset = get_radius_set(radii)
        return atom_radii_A(atoms, rset), rset.name
    arr = np.asarray(radii_A, dtype=np.float64).reshape(-1)
    if arr.shape != (len(atoms),):
        raise InputError(f"radii_A must have {len(atoms)} values, got {arr.shape}")
    if not np.isfinite(arr).all() or (arr <= 0).any():
        raise InputError("radii_A must be finite and > 0")
    label = radii.name if isinstance(radii, RadiusSet) else "per-atom array"
    return arr, label


def check_levels(levels_A, name: str = "levels_A") -> np.ndarray:
    """A 1-D, finite, non-negative, strictly increasing array of probe radii (Å)."""
    try:
        arr = np.asarray(levels_A, dtype=np.float64).reshape(-1)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be numbers, got {levels_A!r}") from exc
    if arr.size == 0:
        raise InputError(f"{name} is empty")
    if not np.isfinite(arr).all():
        raise InputError(f"{name} holds NaN or infinite values")
    if (arr < 0).any():
        raise InputError(f"{name} must be >= 0, got {arr[arr < 0][0]:g}")
    if arr.size > 1 and (np.diff(arr) <= 0).any():
        raise InputError(f"{name} must be strictly increasing, got {arr.tolist()}")
    return arr


def reach_field(
    atoms: Atoms,
    axis: PoreAxis,
    *,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A=None,
    spacing_A: float = 0.5,
    from_end: str = "low",
    pore_radius_A: float = 15.0,
    max_probe_A: float = 6.0,
    levels_A=None,
    method: str = "auto",
) -> ReachField:
    """Clearance and reach of every voxel of the pore region.

    Parameters
    ----------
    atoms : Atoms
        The channel.
    axis : PoreAxis
        Pore axis (from :func:`poreprobe.find_pore_axis`).
    radii : str or RadiusSet
        Radius set (default ``"bondi"``); ignored when ``radii_A`` is given.
    radii_A : array_like of shape (n,), optional
        Explicit per-atom radii (Å).
    spacing_A : float
        Grid spacing (Å, > 0).
    from_end : {"low", "high"}
        End of the axis where probes enter (low or high s).
    pore_radius_A : float
        Radius (Å) of the cylinder around the axis that bounds the pore region.
    max_probe_A : float
        Largest probe radius of interest (Å); sets the margin beyond the protein
        so the entry cap holds bulk for every probe. Raised to ``max(levels_A)``.
    levels_A : array_like, optional
        Probe radii (strictly increasing, Å) for the ``"label"`` method.
    method : {"auto", "label", "reconstruction", "union-find"}
        Reach algorithm (see module docstring). ``"auto"``: ``"label"`` when
        ``levels_A`` is given, else ``"union-find"``.

    Returns
    -------
    ReachField

    Raises
    ------
    InputError
        Bad spacing, radius, method, levels or radii; a grid above
        ``MAX_VOXELS`` voxels.
    PoreNotFoundError
        No atom lies within ``pore_radius_A`` of the axis.

    Examples
    --------
    >>> import poreprobe
    >>> from poreprobe.geometry.synthetic import cylinder
    >>> atoms, _, _ = cylinder(6.0, 10.0)
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> f = poreprobe.reach_field(atoms, axis, spacing_A=1.0, pore_radius_A=8.0, max_probe_A=3)
    >>> bool(f.region(3.0)[:, :, f.exit_layer].any())   # a 3 Å probe gets through
    True
    """
    spacing_A = check_positive(spacing_A, "spacing_A")
    pore_radius_A = check_positive(pore_radius_A, "pore_radius_A")
    max_probe_A = check_positive(max_probe_A, "max_probe_A", allow_zero=True)
    from_end = check_choice(from_end, "from_end", ENTRY_ENDS)
    method = check_choice(method, "method", REACH_METHODS)
    if not isinstance(axis, PoreAxis):
        raise InputError(f"axis must be a PoreAxis, got {type(axis).__name__}")
    if pore_radius_A < 2 * spacing_A:
        raise InputError(
            f"pore_radius_A must be at least 2 spacings ({2 * spacing_A:g} Å), "
            f"got {pore_radius_A:g}"
        )
    levels = None if levels_A is None else check_levels(levels_A)
    if method == "auto":
        method = "label" if levels is not None else "union-find"
    if method == "label" and levels is None:
        raise InputError("method 'label' needs levels_A (the probe radii to resolve)")
    if levels is not None:
        max_probe_A = max(max_probe_A, float(levels[-1]))
    radii_arr, radius_label = resolve_radii(atoms, radii, radii_A)
    coords = as_coords_A(atoms.coords_A)
    frame = axis.to_frame(coords)
    theta = inplane_angle_rad(frame, pore_radius_A)
    frame = rotate_uv(frame, theta)
    lateral = np.hypot(frame[:, 0], frame[:, 1]) - radii_arr
    touching = lateral <= pore_radius_A
    if not touching.any():
        raise PoreNotFoundError(
            f"no atom lies within pore_radius_A = {pore_radius_A:g} Å of "
            "the axis; check the axis or enlarge pore_radius_A"
        )
    s_lo = float((frame[touching, 2] - radii_arr[touching]).min())
    s_hi = float((frame[touching, 2] + radii_arr[touching]).max())
    margin = max_probe_A + 2 * spacing_A
    k_lo = int(np.floor((s_lo - margin) / spacing_A))
    k_hi = int(np.ceil((s_hi + margin) / spacing_A))
    half = int(np.ceil(pore_radius_A / spacing_A))
    n_uv = 2 * half + 1
    shape = (n_uv, n_uv, k_hi - k_lo + 1)
    n_vox = shape[0] * shape[1] * shape[2]
    if n_vox > MAX_VOXELS:
        raise InputError(
            f"the grid would hold {n_vox} voxels (limit {MAX_VOXELS}); "
            "increase spacing_A or reduce pore_radius_A"
        )
    origin = np.array([-half * spacing_A, -half * spacing_A, k_lo * spacing_A])
    uv = spacing_A * np.arange(-half, half + 1)
    disk = (uv[:, None] ** 2 + uv[None, :] ** 2) <= pore_radius_A**2 + 1e-9
    cap = max_probe_A + CLEARANCE_MARGIN_A + 3 * spacing_A
    clearance = _clearance_grid(
        frame, radii_arr, uv, origin[2] + spacing_A * np.arange(shape[2]), disk, cap
    )
    wall_gap = float(levels[0]) if levels is not None else WALL_GAP_A
    inside = np.broadcast_to(disk[:, :, None], shape) & ~exterior_voxels(
        clearance, disk, uv, wall_gap
    )
    entry_layer = 0 if from_end == "low" else shape[2] - 1
    if method == "label":
        reach = reach_by_labels(clearance, inside, entry_layer, levels)
    elif method == "reconstruction":
        reach = reach_by_reconstruction(clearance, inside, entry_layer)
    else:
        reach = reach_by_union_find(clearance, inside, entry_layer)
    return ReachField(
        axis=axis,
        spacing_A=spacing_A,
        origin_A=origin,
        shape=shape,
        inside=inside,
        clearance_A=clearance,
        reach_A=reach,
        entry=from_end,
        clearance_cap_A=cap,
        pore_radius_A=pore_radius_A,
        protein_s_A=(s_lo, s_hi),
        levels_A=levels,
        method=method,
        radius_set=radius_label,
        grid_angle_rad=theta,
        source=atoms.source,
    )


def exterior_voxels(clearance_A, disk, uv_A, wall_gap_A: float = 0.5) -> np.ndarray:
    """Voxels outside the protein, excluded from the pore region.

    Free space here is where the clearance is at least ``wall_gap_A`` (gaps
    between atoms too narrow for the smallest probe of interest count as wall).
    At every level where the free space around the axis is enclosed by atoms
    within the plane, the free space of that plane connected (in the plane) to
    the edge of the cylinder lies outside the protein's wall, and so does
    everything narrower than ``wall_gap_A`` that is not enclosed with the axis'
    part. Without this a probe could go round the outside of a narrow protein
    instead of through its pore.
    """
    n_u, n_v, n_s = clearance_A.shape
    free = disk[:, :, None] & (clearance_A >= wall_gap_A)
    planar = np.zeros((3, 3, 3), dtype=bool)
    planar[:, :, 1] = ndimage.generate_binary_structure(2, 1)
    labels, n_lab = ndimage.label(free, structure=planar)
    rim = disk & ~ndimage.binary_erosion(
        disk, ndimage.generate_binary_structure(2, 1), border_value=0
    )
    touches = np.zeros(n_lab + 1, dtype=bool)
    touches[np.unique(labels[rim])] = True
    touches[0] = False
    rho2 = uv_A[:, None] ** 2 + uv_A[None, :] ** 2
    score = np.where(free, rho2[:, :, None], np.inf).reshape(n_u * n_v, n_s)
    axis_label = labels.reshape(n_u * n_v, n_s)[np.argmin(score, axis=0), np.arange(n_s)]
    enclosed_level = ~touches[axis_label] & (axis_label > 0)
    return touches[labels] & enclosed_level[None, None, :]


def _clearance_grid(frame_A, radii_A, uv_A, s_A, disk, cap_A: float) -> np.ndarray:
    """Clearance at every in-cylinder voxel (NaN elsewhere), exact wherever it is >= 0.

    Values are exact up to ``cap_A`` and clipped there. Voxels deep inside the
    atoms are not queried one by one: the voxels with all-even indices are
    computed first, and since the clearance is 1-Lipschitz,
    ``c(x) <= c(X) + |x - X|`` for the even voxel X next to x; where that
    bound is negative, x lies inside an atom and the bound is stored instead of
    the exact (negative) value. Likewise ``c(X) - |x - X| >= cap_A`` gives the
    clipped value without a query.
    """
    spheres = AtomSpheres(frame_A, radii_A)
    shape = (len(uv_A), len(uv_A), len(s_A))
    h = float(s_A[1] - s_A[0]) if len(s_A) > 1 else float(uv_A[1] - uv_A[0])
    out = np.full(shape, np.nan)
    inside = np.broadcast_to(disk[:, :, None], shape)

    def query(mask):
        idx = np.nonzero(mask)
        for start in range(0, len(idx[0]), 2_000_000):
            part = tuple(a[start : start + 2_000_000] for a in idx)
            pts = np.column_stack([uv_A[part[0]], uv_A[part[1]], s_A[part[2]]])
            out[part] = spheres.clearance_A(pts, max_clearance_A=cap_A)

    even = np.zeros(shape, dtype=bool)
    even[::2, ::2, ::2] = True
    query(even & inside)
    todo = inside & ~even
    coarse = out[::2, ::2, ::2]
    for di in (0, 1):
        for dj in (0, 1):
            for dk in (0, 1):
                if di == dj == dk == 0:
                    continue
                sub = out[di::2, dj::2, dk::2]
                nu, nv, ns = sub.shape
                near = coarse[:nu, :nv, :ns]
                step = h * np.sqrt(di + dj + dk)
                with np.errstate(invalid="ignore"):
                    deep = near + step < 0
                    far = near - step >= cap_A
                sel = todo[di::2, dj::2, dk::2]
                sub[sel & deep] = (near + step)[sel & deep]
                sub[sel & far] = cap_A
                sel &= ~(deep | far)
                todo[di::2, dj::2, dk::2] = sel
    query(todo)
    return out


def _entry_labels(labels: np.ndarray, entry_layer: int, n_labels: int) -> np.ndarray:
    keep = np.zeros(n_labels + 1, dtype=bool)
    keep[np.unique(labels[:, :, entry_layer])] = True
    keep[0] = False
    return keep


def reach_by_labels(clearance_A, inside, entry_layer: int, levels_A) -> np.ndarray:
    """Reach quantised to ``levels_A``: one connected-component labelling per level.

    ``reach >= level`` holds exactly where the voxel is connected (face
    adjacency, through voxels with clearance >= level) to the entry cap.
    """
    levels = check_levels(levels_A)
    reach = np.full(clearance_A.shape, -np.inf)
    free = inside & (clearance_A >= levels[0])
    for level in levels:
        mask = free & (clearance_A >= level)
        if not mask[:, :, entry_layer].any():
            break
        labels, n_labels = ndimage.label(mask, structure=_FACE)
        region = _entry_labels(labels, entry_layer, n_labels)[labels]
        if not region.any():
            break
        reach[region] = level
        free = region
    return reach


def reach_by_reconstruction(clearance_A, inside, entry_layer: int) -> np.ndarray:
    """Exact reach by grey-scale reconstruction by dilation from the entry cap."""
    from skimage.morphology import reconstruction

    free = inside & (clearance_A >= 0)
    mask_img = np.where(free, clearance_A, -1.0)
    marker = np.full(clearance_A.shape, -1.0)
    marker[:, :, entry_layer] = mask_img[:, :, entry_layer]
    rec = reconstruction(marker, mask_img, method="dilation", footprint=_FACE)
    return np.where(free & (rec >= 0), rec, -np.inf)


def reach_by_union_find(clearance_A, inside, entry_layer: int) -> np.ndarray:
    """Exact reach from a maximum spanning tree of the voxel graph (Kruskal / union-find).

    On a maximum spanning tree the path between two nodes maximises the
    smallest edge weight, so with edge weight ``min(c_a, c_b)`` and a virtual
    root joined to every entry-cap voxel, the reach of a voxel is the smallest
    clearance on its tree path to the root.
    """
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import breadth_first_order, minimum_spanning_tree

    free = inside & (clearance_A >= 0)
    n = int(free.sum())
    reach = np.full(clearance_A.shape, -np.inf)
    if n == 0:
        return reach
    ids = np.full(clearance_A.shape, -1, dtype=np.int64)
    ids[free] = np.arange(n)
    values = clearance_A[free]
    rows, cols, weights = [], [], []
    for ax in range(3):
        a = np.moveaxis(ids, ax, 0)
        pair = (a[:-1] >= 0) & (a[1:] >= 0)
        ra, rb = a[:-1][pair], a[1:][pair]
        rows.append(ra)
        cols.append(rb)
        weights.append(np.minimum(values[ra], values[rb]))
    cap = ids[:, :, entry_layer]
    cap = cap[cap >= 0]
    rows.append(cap)
    cols.append(np.full(len(cap), n))
    weights.append(values[cap])
    w = np.concatenate(weights)
    top = float(w.max()) + 1.0
    graph = coo_matrix(
        (top - w, (np.concatenate(rows), np.concatenate(cols))), shape=(n + 1, n + 1)
    ).tocsr()
    tree = minimum_spanning_tree(graph)
    _, pred = breadth_first_order(tree, n, directed=False, return_predecessors=True)
    val = np.append(values, np.inf)
    anc = pred.astype(np.int64)
    anc[n] = n
    lost = anc < 0
    anc[lost] = np.flatnonzero(lost)
    val[lost] = -np.inf
    while True:
        new_val = np.minimum(val, val[anc])
        new_anc = anc[anc]
        val = new_val
        if np.array_equal(new_anc, anc):
            break
        anc = new_anc
    reach[free] = val[:n]
    return reach
