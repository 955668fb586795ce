"""The pore's centre line as poreprobe's own data: a table of points in mmCIF.

One point per enclosed profile plane: s, the sphere centre (Å, the input model's
Cartesian frame), the radius and the residues lining it, written with gemmi in two
categories of our own (no ``_atom_site`` loop, so no pseudo-atoms): see
:func:`write_center_line`. :mod:`poreprobe.figures.viewer_tube` turns the same
points into a tube mesh that viewers show as a surface.

All values are model-based estimates that depend on the radius set.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.export import check_suffix, write_atomic
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A
from poreprobe.io.structure import Atoms

CENTERLINE_SUFFIXES = (".cif", ".mmcif")


@dataclass(frozen=True)
class CenterLine:
    """The pore's centre line: one point per enclosed profile plane.

    Attributes
    ----------
    s_A : ndarray of shape (n,)
        Axial position (Å).
    center_A : ndarray of shape (n, 3)
        Sphere centre in the model's Cartesian frame (Å).
    radius_A : ndarray of shape (n,)
        Profile radius (Å).
    lining : tuple of tuple of str
        Per point, the residues (``"A:LEU12"``) with an atom whose van der Waals
        surface lies within ``contact_tol_A`` of the sphere, closest first.
    contact_tol_A : float
    axis : PoreAxis
    radius_set, source, version : str
    """

    s_A: np.ndarray
    center_A: np.ndarray
    radius_A: np.ndarray
    lining: tuple[tuple[str, ...], ...]
    contact_tol_A: float
    axis: object
    radius_set: str = ""
    source: str = ""
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("s_A", "center_A", "radius_A"):
            getattr(self, name).setflags(write=False)

    def to_dict(self) -> dict:
        return {
            "s_A": self.s_A.tolist(),
            "center_A": self.center_A.tolist(),
            "radius_A": self.radius_A.tolist(),
            "lining": [list(x) for x in self.lining],
            "contact_tol_A": self.contact_tol_A,
            "axis": self.axis.to_dict(),
            "radius_set": self.radius_set,
            "source": self.source,
            "version": self.version,
        }


def center_line(
    atoms: Atoms,
    profile: RadiusProfile,
    *,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_A: np.ndarray | None = None,
    contact_tol_A: float | None = None,
) -> CenterLine:
    """The profile's enclosed sphere centres with their radii and lining residues.

    Parameters
    ----------
    atoms : Atoms
        The model the profile was computed on.
    profile : RadiusProfile
    radii, radii_A
        Radius set or per-atom radii (Å); use the profile's.
    contact_tol_A : float, optional
        Atoms whose surface is within this distance (Å) of a sphere line it
        (default: the profile's ``contact_tol_A``).

    Returns
    -------
    CenterLine
    """
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    tol = (
        profile.contact_tol_A
        if contact_tol_A is None
        else check_positive(contact_tol_A, "contact_tol_A", allow_zero=True)
    )
    radii_A = atom_radii_A(atoms, radii) if radii_A is None else np.asarray(radii_A, float)
    if radii_A.shape != (len(atoms),):
        raise InputError(f"radii_A must have {len(atoms)} values, got {radii_A.shape}")
    ok = np.isfinite(profile.radius_A)
    centres, radius = profile.center_A[ok], profile.radius_A[ok]
    spheres = AtomSpheres(atoms.coords_A, radii_A)
    reach = radius + tol + spheres.max_radius_A
    candidates = spheres.tree.query_ball_point(centres, reach)
    labels = atoms.residue_labels()
    lining = []
    for c, r, idx in zip(centres, radius, candidates, strict=True):
        idx = np.asarray(idx, dtype=np.int64)
        gap = np.linalg.norm(atoms.coords_A[idx] - c, axis=1) - radii_A[idx]
        close = gap <= r + tol
        order = np.argsort(gap[close], kind="stable")
        lining.append(tuple(dict.fromkeys(labels[idx[close]][order].tolist())))
    return CenterLine(
        s_A=profile.s_A[ok].copy(),
        center_A=centres.copy(),
        radius_A=radius.copy(),
        lining=tuple(lining),
        contact_tol_A=tol,
        axis=profile.axis,
        radius_set=profile.radius_set,
        source=profile.source,
    )


CENTER_LINE_CATEGORY = "_poreprobe_center_line."
CENTER_LINE_POINT_CATEGORY = "_poreprobe_center_line_point."
#: Columns of the point table, in order.
CENTER_LINE_POINT_COLUMNS = ("id", "s", "center_x", "center_y", "center_z", "radius", "lining")


def center_line_document(line: CenterLine):
    """A ``gemmi.cif.Document`` holding a centre line (see :func:`write_center_line`)."""
    import gemmi

    if not isinstance(line, CenterLine):
        raise InputError(f"line must be a CenterLine, got {type(line).__name__}")
    n = len(line.s_A)
    if n == 0:
        raise InputError("the centre line has no points")
    doc = gemmi.cif.Document()
    block = doc.add_new_block("poreprobe_center_line")
    q = gemmi.cif.quote
    ax = line.axis
    info = {
        "definition": "centre and radius of the largest sphere, centred in each plane "
        "across the pore axis, that overlaps no atom's van der Waals sphere",
        "length_unit": "angstrom",
        "s_definition": "axial position: (centre - axis_point) . axis_direction",
        "lining_definition": "residues with an atom whose van der Waals surface lies "
        "within contact_tolerance of the sphere, closest first, "
        "written chain:RESNAMEnumber and separated by spaces",
        "contact_tolerance": f"{line.contact_tol_A:g}",
        "radius_set": line.radius_set or None,
        "axis_point_x": f"{ax.point_A[0]:.4f}",
        "axis_point_y": f"{ax.point_A[1]:.4f}",
        "axis_point_z": f"{ax.point_A[2]:.4f}",
        "axis_direction_x": f"{ax.direction[0]:.6f}",
        "axis_direction_y": f"{ax.direction[1]:.6f}",
        "axis_direction_z": f"{ax.direction[2]:.6f}",
        "axis_method": ax.method,
        "number_of_points": str(n),
        "source": line.source or None,
        "software": f"poreprobe {line.version}",
        "caution": "model-based estimate: depends on the radius set and the model",
    }
    block.set_pairs(CENTER_LINE_CATEGORY, info)  # quotes where needed; None is "?"
    loop = block.init_loop(CENTER_LINE_POINT_CATEGORY, list(CENTER_LINE_POINT_COLUMNS))
    for k in range(n):
        x, y, z = line.center_A[k]
        loop.add_row(
            [
                str(k + 1),
                f"{line.s_A[k]:.4f}",
                f"{x:.4f}",
                f"{y:.4f}",
                f"{z:.4f}",
                f"{line.radius_A[k]:.4f}",
                q(" ".join(line.lining[k])) if line.lining[k] else ".",
            ]
        )
    return doc


def write_center_line(line: CenterLine, path) -> None:
    """Write a centre line as mmCIF (a table of points, no atoms), atomically.

    One data block ``poreprobe_center_line`` with two categories of our own and
    no ``_atom_site`` loop:

    ``_poreprobe_center_line``
        Key-value pairs: definitions, ``length_unit`` (angstrom), contact tolerance,
        radius set, axis point and direction, number of points, source, software.
    ``_poreprobe_center_line_point``
        One row per point: ``id``, ``s``, ``center_x``, ``center_y``, ``center_z``,
        ``radius`` (all Å) and ``lining`` (residues, space-separated; ``.`` when none).

    Parameters
    ----------
    line : CenterLine
    path : str or os.PathLike
        ``.cif`` or ``.mmcif``.
    """
    check_suffix(path, CENTERLINE_SUFFIXES, "centre line")
    write_atomic(path, center_line_document(line).as_string())
