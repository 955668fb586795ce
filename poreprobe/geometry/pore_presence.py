"""Is there a pore at all? A criterion on the enclosed length along the axis and its wall.

Any line through a protein finds a "narrowest radius": packing voids inside a
globular enzyme measure about 1 Å (heavy atoms, van der Waals radii), and the
ligand pocket of a receptor opens from one side only. Before a narrowest radius
is reported as a pore's, the profile must show an enclosed lumen:

Criterion
---------
A plane of the profile is **walled lumen** when

1. its largest empty sphere has radius at least :data:`LUMEN_RADIUS_A` = 1.4 Å
   (a water molecule fits; water radius 1.4 Å, common practice), and
2. a water-sized probe (radius 1.4 Å) moving outwards from the sphere's centre in
   each of :data:`N_DIRECTIONS` = 16 in-plane directions (evenly spaced, from the
   axis's canonical reference direction) bumps into protein within
   :data:`WALL_REACH_A` = 20 Å of the centre (the probe path is sampled every
   0.5 Å: a contact is a sample point whose clearance is below 1.4 Å).

The model **has a pore** when the walled-lumen planes add up to at least
:data:`MIN_LENGTH_A` = 17 Å along the axis (their number times the plane spacing;
gates and selectivity filters narrower than water may interrupt them). Our choice,
from the entries in the tests (Bondi radii, planes every 0.2, 0.5 or 1 Å): the
channels there have 21-22 Å (gramicidin A, 1GRM, and the K+ channel inner-helix
fragment, the shortest) to over 80 Å (GLIC) of walled lumen, while the packing
voids of lysozyme (9LYZ) add up to 3-7 Å, the ligand pocket and cavities of
the P2Y1 receptor (4XNW, assembly 1) to 8-10 Å, and its deposited pair of
receptors to 13.5-14 Å (``benchmarks/bench_pore_presence.py`` prints them). A channel whose
pore is narrower than water over nearly its whole length is also reported
without one.

The test runs when the axis is found from the structure; an axis given by the user
(a point and direction, or two selections) states where the pore is, and the
criterion is then not applied (``pore_found`` is null, with the reason).

When there is no pore, commands say so in one line, write ``"pore_found": false``
and ``"min_radius_A": null`` and exit with status 0: it is a result, not an error.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_positive
from poreprobe.geometry.kernel import AtomSpheres

LUMEN_RADIUS_A = 1.4
PROBE_RADIUS_A = 1.4
N_DIRECTIONS = 16
WALL_REACH_A = 20.0
MIN_LENGTH_A = 17.0
SAMPLE_A = 0.5


@dataclass(frozen=True)
class PorePresence:
    """Whether a profile shows an enclosed pore (see the module docstring).

    Attributes
    ----------
    pore_found : bool or None
        None when the criterion was not applied (see ``not_tested``).
    walled_length_A : float
        Total length of the walled-lumen planes (Å): their number times the spacing.
    s_range_A : tuple of float or None
        (first, last) s of the walled-lumen planes (Å); None when there is none.
    walled : ndarray of bool, shape (n_planes,)
        Per plane: walled lumen.
    min_length_A, lumen_radius_A, probe_radius_A, wall_reach_A : float
        The criterion's thresholds (Å).
    n_directions : int
    """

    pore_found: bool | None
    walled_length_A: float
    s_range_A: tuple[float, float] | None
    walled: np.ndarray
    min_length_A: float = MIN_LENGTH_A
    lumen_radius_A: float = LUMEN_RADIUS_A
    probe_radius_A: float = PROBE_RADIUS_A
    wall_reach_A: float = WALL_REACH_A
    n_directions: int = N_DIRECTIONS
    not_tested: str = ""

    def __post_init__(self):
        self.walled.setflags(write=False)

    def message(self) -> str:
        """One line for the terminal."""
        if self.pore_found is None:
            return f"pore presence not tested: {self.not_tested}"
        if self.pore_found:
            lo, hi = self.s_range_A
            return (
                f"pore: {self.walled_length_A:.1f} Å of enclosed water-sized lumen "
                f"between s = {lo:.1f} and {hi:.1f} Å"
            )
        return (
            f"no pore found: {self.walled_length_A:.1f} Å of enclosed water-sized lumen "
            f"along the axis, less than the {self.min_length_A:g} Å a pore needs; "
            "no narrowest radius is reported"
        )

    def to_dict(self) -> dict:
        if self.pore_found is None:
            return {"pore_found": None, "not_tested": self.not_tested}
        return {
            "pore_found": self.pore_found,
            "walled_length_A": self.walled_length_A,
            "s_range_A": None if self.s_range_A is None else list(self.s_range_A),
            "criterion": (
                f"at least {self.min_length_A:g} Å in all of planes whose largest "
                f"empty sphere is >= {self.lumen_radius_A:g} Å and from whose centre a "
                f"{self.probe_radius_A:g} Å probe meets protein within {self.wall_reach_A:g} Å "
                f"in each of {self.n_directions} in-plane directions"
            ),
        }


def pore_presence(
    profile,
    coords_A,
    radii_A,
    *,
    min_length_A: float = MIN_LENGTH_A,
    lumen_radius_A: float = LUMEN_RADIUS_A,
    wall_reach_A: float = WALL_REACH_A,
    n_directions: int = N_DIRECTIONS,
) -> PorePresence:
    """Decide whether a radius profile runs through an enclosed pore.

    Parameters
    ----------
    profile : RadiusProfile
        The profile (its planes, sphere centres, radii and axis).
    coords_A : array_like of shape (n, 3)
        The atoms the profile was computed on (Å).
    radii_A : array_like of shape (n,)
        Their radii (Å).
    min_length_A, lumen_radius_A, wall_reach_A : float
        Thresholds of the criterion (Å), see the module docstring.
    n_directions : int
        In-plane directions probed for the wall (at least 4).

    Returns
    -------
    PorePresence
    """
    min_length_A = check_positive(min_length_A, "min_length_A")
    lumen_radius_A = check_positive(lumen_radius_A, "lumen_radius_A")
    wall_reach_A = check_positive(wall_reach_A, "wall_reach_A")
    if not isinstance(n_directions, int | np.integer) or n_directions < 4:
        from poreprobe.errors import InputError

        raise InputError(f"n_directions must be an integer >= 4, got {n_directions!r}")
    radius = np.asarray(profile.radius_A, dtype=np.float64)
    centres = np.asarray(profile.center_A, dtype=np.float64)
    walled = np.zeros(len(radius), dtype=bool)
    with np.errstate(invalid="ignore"):
        candidate = np.isfinite(radius) & (radius >= lumen_radius_A)
    idx = np.flatnonzero(candidate)
    if len(idx):
        e1, e2 = profile.axis.reference_basis()
        ang = np.arange(n_directions) * (2 * np.pi / n_directions)
        dirs = np.outer(np.cos(ang), e1) + np.outer(np.sin(ang), e2)  # (k, 3)
        steps = np.arange(SAMPLE_A, wall_reach_A + 1e-9, SAMPLE_A)  # (t,)
        pts = (
            centres[idx, None, None, :] + steps[None, None, :, None] * dirs[None, :, None, :]
        )  # (p, k, t, 3)
        spheres = AtomSpheres(np.asarray(coords_A, dtype=np.float64), np.asarray(radii_A))
        clear = spheres.clearance_A(
            pts.reshape(-1, 3), max_clearance_A=PROBE_RADIUS_A + 1.0
        ).reshape(pts.shape[:3])
        hit = (clear < PROBE_RADIUS_A).any(axis=2)  # (p, k)
        walled[idx] = hit.all(axis=1)
    length = float(walled.sum() * profile.step_A)
    s_range = None
    if walled.any():
        s_walled = np.asarray(profile.s_A)[walled]
        s_range = (float(s_walled.min()), float(s_walled.max()))
    return PorePresence(
        pore_found=length >= min_length_A,
        walled_length_A=length,
        s_range_A=s_range,
        walled=walled,
        min_length_A=min_length_A,
        lumen_radius_A=lumen_radius_A,
        wall_reach_A=wall_reach_A,
        n_directions=int(n_directions),
    )


def presence_not_tested(reason: str) -> PorePresence:
    """A :class:`PorePresence` recording that the criterion was not applied, and why."""
    return PorePresence(
        pore_found=None,
        walled_length_A=float("nan"),
        s_range_A=None,
        walled=np.zeros(0, dtype=bool),
        not_tested=str(reason),
    )


USER_AXIS_METHODS = ("user", "selections")


def applies_to(axis) -> bool:
    """Whether the criterion is applied for this axis (not for an axis the user gave)."""
    return axis.method not in USER_AXIS_METHODS
