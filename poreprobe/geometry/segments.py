"""Where the pore runs along its axis, and its named segments in series.

The pore extent, mouth radii and segments feed the series-resistance model of
:mod:`poreprobe.bench.conductance`; like it, they are model-based estimates.

Pore ends and mouth radius
--------------------------
The pore is the run of enclosed (finite-radius) planes containing the narrowest plane
(where planes tie within 0.001 Å for the minimum, the middle one of them);
open planes (NaN, wider than the profile's ``max_radius_A``) end it. When the atoms
are given, it is further clipped to the axial extent of the *wall atoms*, the atoms
whose centres lie within the profile's ``max_radius_A`` of the axis line (no atom
farther out can enclose a plane): planes beyond the last wall atom lie in the bath, and
their radius only measures the distance to the protein's end (the "trumpet" the profile
shows past the ends), so they are not pore. The **mouth radius** ``a`` is
the profile radius (linearly interpolated) at each pore end: a wide funnel is counted
in the pore integral up to its last enclosed plane and opens with its widest radius.
Users may give both mouth radii instead.

Segments
--------
Pore segments come from the user as named s ranges (Å), as atom selections whose
axial extent (min to max s of the selected atoms) defines a segment, or as cut
positions; parts of the pore they leave uncovered become segments of their own. They
must lie within the pore and must not overlap. Without user segments the automatic
rule applies: the **constriction** is the contiguous stretch of planes around the
narrowest plane whose radius is within ``constriction_margin_A`` (default 1 Å) of the
minimum (extended by half a plane step each way); the wider parts on either side are
the entry-side and far-side pore segments.
"""

from __future__ import annotations

import warnings
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_finite, check_positive
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.cleaning import select_indices
from poreprobe.io.structure import Atoms

MOUTH_RULE = (
    "pore = enclosed run of planes around the narrowest plane, clipped to the axial "
    "extent of the atoms within max_radius_A of the axis; mouth radius = profile "
    "radius at each pore end"
)
_TOL_A = 1e-6
_TIE_A = 1e-3  # planes this close to the minimum radius tie for the narrowest point


# --------------------------------------------------------------------------- segments
@dataclass(frozen=True)
class PoreSegment:
    """One pore segment along s.

    Attributes
    ----------
    name : str
    s_start_A, s_end_A : float
        Its extent along the axis (Å).
    origin : str
        How it was defined: ``"user range"``, ``"selection <SEL>"``, ``"cut"``,
        ``"automatic"`` or ``"remainder"`` (a part no user segment covered).
    """

    name: str
    s_start_A: float
    s_end_A: float
    origin: str

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True)
class PoreExtent:
    """Where the pore runs along s and where it is narrowest (Å)."""

    start_A: float
    end_A: float
    narrowest_s_A: float
    narrowest_radius_A: float
    clipped_to_atoms: bool


def pore_extent(profile: RadiusProfile, atoms: Atoms | None = None) -> PoreExtent:
    """The pore's axial extent under the rule in the module docstring.

    Parameters
    ----------
    profile : RadiusProfile
    atoms : Atoms, optional
        The atoms the profile was computed from; clips the pore to the axial
        extent of the wall atoms.

    Returns
    -------
    PoreExtent

    Raises
    ------
    PoreNotFoundError
        If the profile has fewer than two enclosed planes in a row.
    InputError
        If ``atoms`` does not match the profile.
    """
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    s, r = profile.s_A, profile.radius_A
    finite = np.isfinite(r)
    if not finite.any():
        raise PoreNotFoundError("the profile has no enclosed plane")
    k = int(np.nanargmin(r))
    first, last = k, k
    while first > 0 and finite[first - 1]:
        first -= 1
    while last < len(s) - 1 and finite[last + 1]:
        last += 1
    if last == first:
        raise PoreNotFoundError(
            f"only one enclosed plane around s = {s[k]:.2f} Å; no pore length to integrate"
        )
    others = finite.copy()
    others[first : last + 1] = False
    if others.any():
        warnings.warn(
            f"{int(others.sum())} enclosed planes are cut off from the pore by open "
            "planes and count as bath",
            QualityWarning,
            stacklevel=2,
        )
    lo, hi, clipped = float(s[first]), float(s[last]), False
    if atoms is not None:
        if not isinstance(atoms, Atoms):
            raise InputError(f"atoms must be Atoms, got {type(atoms).__name__}")
        frame = profile.axis.to_frame(atoms.coords_A)
        near = np.hypot(frame[:, 0], frame[:, 1]) <= profile.max_radius_A
        if not near.any():
            raise InputError(
                f"no atom lies within max_radius_A = {profile.max_radius_A:g} Å "
                "of the profile's axis: are these the atoms profiled?"
            )
        s_wall = frame[near, 2]
        new_lo, new_hi = max(lo, float(s_wall.min())), min(hi, float(s_wall.max()))
        if new_hi - new_lo <= _TOL_A:
            raise PoreNotFoundError(
                "the atoms around the axis span no length of the enclosed "
                f"planes ({lo:.2f}..{hi:.2f} Å)"
            )
        clipped = (new_lo > lo + _TOL_A) or (new_hi < hi - _TOL_A)
        lo, hi = new_lo, new_hi
    within = (s >= lo - _TOL_A) & (s <= hi + _TOL_A) & finite
    if within.any():
        r_min = float(np.min(r[within]))
        ties = np.flatnonzero(within & (r <= r_min + _TIE_A))
        s_min = float(s[ties[(len(ties) - 1) // 2]])
    else:  # the pore is shorter than one plane step
        s_min = 0.5 * (lo + hi)
        r_min = float(np.interp(s_min, s, r))
    return PoreExtent(lo, hi, s_min, r_min, clipped)


def _parse_segment_specs(
    segments, profile: RadiusProfile, atoms: Atoms | None, extent: PoreExtent
) -> list[PoreSegment]:
    out = []
    for item in segments:
        if isinstance(item, PoreSegment):
            out.append(item)
            continue
        if not isinstance(item, Sequence) or isinstance(item, str) or len(item) not in (2, 3):
            raise InputError(
                "each segment must be (name, s_start_A, s_end_A) or "
                f"(name, selection); got {item!r}"
            )
        name = item[0]
        if len(item) == 3:
            lo = check_finite(item[1], f"segment {name!r} start")
            hi = check_finite(item[2], f"segment {name!r} end")
            out.append(PoreSegment(str(name), lo, hi, "user range"))
            continue
        sel = item[1]
        if atoms is None:
            raise InputError(f"segment {name!r} is given by a selection; pass the atoms too")
        idx = select_indices(atoms, sel)
        s_sel = profile.axis.s_A(atoms.coords_A[idx])
        lo, hi = float(s_sel.min()), float(s_sel.max())
        if hi <= extent.start_A or lo >= extent.end_A:
            raise InputError(
                f"segment {name!r}: selection {sel!r} spans s = {lo:.2f}..{hi:.2f}"
                f" Å, outside the pore ({extent.start_A:.2f}.."
                f"{extent.end_A:.2f} Å)"
            )
        if lo < extent.start_A - _TOL_A or hi > extent.end_A + _TOL_A:
            warnings.warn(
                f"segment {name!r}: selection {sel!r} spans s = {lo:.2f}..{hi:.2f} Å;"
                f" clipped to the pore ({extent.start_A:.2f}..{extent.end_A:.2f} Å)",
                QualityWarning,
                stacklevel=3,
            )
            lo, hi = max(lo, extent.start_A), min(hi, extent.end_A)
        if hi - lo <= _TOL_A:
            raise InputError(
                f"segment {name!r}: selection {sel!r} has no axial extent (s = {lo:.2f} Å)"
            )
        out.append(PoreSegment(str(name), lo, hi, f"selection {sel}"))
    return out


def pore_segments(
    profile: RadiusProfile,
    *,
    atoms: Atoms | None = None,
    segments: Sequence | None = None,
    cuts_s_A: Sequence[float] | None = None,
    constriction_margin_A: float = 1.0,
    side_names: tuple[str, str] = ("entry", "far"),
    extent: PoreExtent | None = None,
) -> tuple[PoreSegment, ...]:
    """Cut the pore into named segments in series, ordered along s.

    Parameters
    ----------
    profile : RadiusProfile
    atoms : Atoms, optional
        Needed for selection segments; clips the pore to the wall atoms.
    segments : sequence, optional
        Items ``(name, s_start_A, s_end_A)`` (Å) or ``(name, selection)``
        (MDAnalysis selection; its atoms' axial extent), or :class:`PoreSegment`.
        Must lie within the pore and not overlap; uncovered parts become
        ``"remainder"`` segments.
    cuts_s_A : sequence of float, optional
        Cut positions (Å) strictly inside the pore; segments are named
        ``"pore 1"``, ``"pore 2"``, ... from the entry end. Not with ``segments``.
    constriction_margin_A : float
        Automatic rule (no segments or cuts): planes within this of the minimum
        radius around the narrowest plane form the constriction (Å, >= 0).
    side_names : (str, str)
        Labels of the entry and far sides (used in automatic segment names).
    extent : PoreExtent, optional
        Precomputed :func:`pore_extent`.

    Returns
    -------
    tuple of PoreSegment

    Raises
    ------
    InputError
        Segments out of the pore, overlapping, empty or badly formed; cuts out of
        range or repeated; both segments and cuts given.
    """
    extent = extent or pore_extent(profile, atoms)
    lo, hi = extent.start_A, extent.end_A
    entry_name, far_name = check_side_names(side_names)
    if segments is not None and cuts_s_A is not None:
        raise InputError("give either segments or cuts_s_A, not both")
    if cuts_s_A is not None:
        cuts = sorted(check_finite(c, "cuts_s_A") for c in cuts_s_A)
        for c in cuts:
            if not lo + _TOL_A < c < hi - _TOL_A:
                raise InputError(f"cut at s = {c:g} Å lies outside the pore ({lo:.2f}..{hi:.2f} Å)")
        if any(b - a <= _TOL_A for a, b in zip(cuts[:-1], cuts[1:], strict=True)):
            raise InputError(f"cuts_s_A repeats a position: {cuts}")
        edges = [lo, *cuts, hi]
        return tuple(
            PoreSegment(f"pore {i + 1}", a, b, "cut")
            for i, (a, b) in enumerate(zip(edges[:-1], edges[1:], strict=True))
        )
    if segments is None or len(segments) == 0:
        margin = check_positive(constriction_margin_A, "constriction_margin_A", allow_zero=True)
        c_lo, c_hi = _constriction_range(profile, extent, margin)
        parts = [
            (f"{entry_name}-side pore", lo, c_lo),
            ("constriction", c_lo, c_hi),
            (f"{far_name}-side pore", c_hi, hi),
        ]
        return tuple(PoreSegment(n, a, b, "automatic") for n, a, b in parts if b - a > _TOL_A)
    user = _parse_segment_specs(segments, profile, atoms, extent)
    names = [seg.name for seg in user]
    for seg in user:
        if not seg.name.strip():
            raise InputError("segment names must not be empty")
        if names.count(seg.name) > 1:
            raise InputError(f"segment name {seg.name!r} is used twice")
        if seg.s_end_A - seg.s_start_A <= _TOL_A:
            raise InputError(
                f"segment {seg.name!r} must have start < end, got "
                f"{seg.s_start_A:g}..{seg.s_end_A:g} Å"
            )
        if seg.s_start_A < lo - _TOL_A or seg.s_end_A > hi + _TOL_A:
            raise InputError(
                f"segment {seg.name!r} ({seg.s_start_A:g}..{seg.s_end_A:g} Å) "
                f"lies outside the pore ({lo:.2f}..{hi:.2f} Å)"
            )
    user.sort(key=lambda seg: seg.s_start_A)
    for a, b in zip(user[:-1], user[1:], strict=True):
        if b.s_start_A < a.s_end_A - _TOL_A:
            raise InputError(
                f"segments {a.name!r} ({a.s_start_A:g}..{a.s_end_A:g} Å) and "
                f"{b.name!r} ({b.s_start_A:g}..{b.s_end_A:g} Å) overlap"
            )
    out: list[PoreSegment] = []
    cursor = lo
    for i, seg in enumerate(user):
        if seg.s_start_A - cursor > _TOL_A:
            gap = (
                f"pore before {seg.name}"
                if i == 0
                else f"pore between {user[i - 1].name} and {seg.name}"
            )
            out.append(PoreSegment(gap, cursor, seg.s_start_A, "remainder"))
        out.append(PoreSegment(seg.name, max(seg.s_start_A, lo), min(seg.s_end_A, hi), seg.origin))
        cursor = min(seg.s_end_A, hi)
    if hi - cursor > _TOL_A:
        out.append(PoreSegment(f"pore after {user[-1].name}", cursor, hi, "remainder"))
    reserved = {f"{entry_name} access", f"{far_name} access"}
    clash = reserved.intersection(seg.name for seg in out)
    if clash:
        raise InputError(f"segment name {sorted(clash)[0]!r} is reserved for an access region")
    return tuple(out)


def _constriction_range(profile: RadiusProfile, extent: PoreExtent, margin_A: float):
    s, r = profile.s_A, profile.radius_A
    k = int(np.argmin(np.abs(s - extent.narrowest_s_A)))
    limit = extent.narrowest_radius_A + margin_A
    inside = (
        np.isfinite(r)
        & (r <= limit + 1e-12)
        & (s >= extent.start_A - _TOL_A)
        & (s <= extent.end_A + _TOL_A)
    )
    first, last = k, k
    while first > 0 and inside[first - 1]:
        first -= 1
    while last < len(s) - 1 and inside[last + 1]:
        last += 1
    half = 0.5 * profile.step_A
    return (max(extent.start_A, float(s[first]) - half), min(extent.end_A, float(s[last]) + half))


def check_side_names(side_names) -> tuple[str, str]:
    if (
        isinstance(side_names, str)
        or not isinstance(side_names, Sequence)
        or len(side_names) != 2
        or not all(isinstance(n, str) and n.strip() for n in side_names)
        or side_names[0] == side_names[1]
    ):
        raise InputError(f"side_names must be two different non-empty names, got {side_names!r}")
    return side_names[0].strip(), side_names[1].strip()
