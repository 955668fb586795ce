"""Where the resistance lies: a series-resistance model of the pore.

All results are **model estimates** built from a radius profile; they depend on the
radius set, on the model's quality and on the definitions below.

Model
-----
The permeation pathway is a chain of named segments in series: the access region of
the entry-side bath, one or more pore segments, and the access region of the far-side
bath. ``s`` increases from the entry end (see :mod:`poreprobe.axis`).

* **Pore segment** (Ohmic conductor with the bulk resistivity; Hille, *Ion Channels of
  Excitable Membranes*, 3rd ed. 2001)::

      R = (ρ / μ) ∫ ds / (π r(s)²)

  over the segment, with ``r(s)`` the profile radius taken as linear between planes,
  so each plane interval [s_k, s_k+1] contributes exactly ``(s_k+1 - s_k) / (π r_k
  r_k+1)`` (exact for cylinders and cones). ``μ`` is an optional mobility factor
  (0 < μ <= 1, default 1) a user may set to account for reduced ion mobility in narrow
  pores; it divides the conductivity of pore segments only, never of the baths.
* **Access region** of each mouth (a disc of radius ``a`` in an insulating wall
  opening into a half-space bath; Hall 1975, J. Gen. Physiol. 66:531)::

      R = ρ_side / (4 a)

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

Baths and sides
---------------
The base resistivity ρ comes from the user (Ω m or S/m) or from a named electrolyte
(:mod:`poreprobe.electrolyte`). Each side may have its resistivity scaled by a factor
(e.g. a viscogen on one side only). Each pore segment is bathed by the entry side, the
far side or neither (base ρ); by default segments wholly on the entry side of the
narrowest plane take the entry side's solution, segments wholly on the far side the
far side's, and a segment containing the narrowest plane neither (a solute that
raises the resistivity is taken not to pass the constriction).

Inverse analysis
----------------
From conductances measured in control (G0), with the entry side's resistivity raised
by a factor f_e (G_e) and with the far side's raised by f_f (G_f), the three-resistor
series model (entry side R_e, unaffected middle R_m, far side R_f)::

    1/G0 = R_e + R_m + R_f,   1/G_e = f_e R_e + R_m + R_f,   1/G_f = R_e + R_m + f_f R_f

is solved exactly: ``R_e = (1/G_e - 1/G0) / (f_e - 1)``, ``R_f = (1/G_f - 1/G0) /
(f_f - 1)``, ``R_m = 1/G0 - R_e - R_f``. Uncertainties are propagated to first order
(delta method) from independent SDs of the three conductances; they grow as
``1 / |f - 1|`` when a factor approaches 1.

Energetics aside
----------------
A conductance ratio is often quoted as a free-energy difference: ``ln(G1 / G2)`` in
units of kT. If each conductance scales as ``exp(-ΔG / kT)`` with a barrier ΔG (rate
theory; common practice), channel 1's barrier is lower than channel 2's by that amount.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from poreprobe import __version__
from poreprobe._validate import check_choice, check_finite, check_positive
from poreprobe.electrolyte import bath_conductivity
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.profile import RadiusProfile
from poreprobe.structure import Atoms, select_indices

SIDES = ("entry", "far", "neither")
MOUTH_RULE = ("pore = enclosed run of planes around the narrowest plane, clipped to the axial "
              "extent of the atoms within max_radius_A of the axis; mouth radius = profile "
              "radius at each pore end")
_TOL_A = 1e-6
_TIE_A = 1e-3   # planes this close to the minimum radius tie for the narrowest point
_A_TO_M = 1e-10


# --------------------------------------------------------------------------- integrals
def pore_integral_per_m(s_A, radius_A, s_start_A: float, s_end_A: float) -> float:
    """``∫ ds / (π r(s)²)`` over [s_start_A, s_end_A] in 1/m, r linear between planes.

    Parameters
    ----------
    s_A : ndarray of shape (n,)
        Increasing plane positions (Å).
    radius_A : ndarray of shape (n,)
        Radius at each plane (Å); must be finite and > 0 over the interval.
    s_start_A, s_end_A : float
        Interval (Å), within ``s_A[0] .. s_A[-1]``, ``s_start_A <= s_end_A``.

    Returns
    -------
    float
        The integral in m⁻¹ (multiply by a resistivity in Ω m to get Ω).

    Raises
    ------
    InputError
        Bad arrays or interval, or an open (NaN) plane within the interval.
    PoreNotFoundError
        If the radius is <= 0 within the interval (a closed pore).

    Notes
    -----
    Each interval between neighbouring nodes (planes inside the range plus the two
    ends, radii linearly interpolated there) contributes ``Δs / (π r_a r_b)``, the
    exact integral for a radius linear in s.

    Examples
    --------
    >>> import numpy as np
    >>> s = np.linspace(0, 10, 11); r = np.full(11, 5.0)
    >>> round(pore_integral_per_m(s, r, 0, 10) * 1e-10 * np.pi * 25, 9)
    10.0
    """
    s = np.asarray(s_A, dtype=float)
    r = np.asarray(radius_A, dtype=float)
    if s.ndim != 1 or s.shape != r.shape or s.size < 2:
        raise InputError(f"s_A and radius_A must be 1-D of equal length >= 2, got {s.shape} "
                         f"and {r.shape}")
    if np.any(np.diff(s) <= 0):
        raise InputError("s_A must increase strictly")
    lo, hi = check_finite(s_start_A, "s_start_A"), check_finite(s_end_A, "s_end_A")
    if hi < lo or lo < s[0] - _TOL_A or hi > s[-1] + _TOL_A:
        raise InputError(f"interval {lo:g}..{hi:g} Å must be ordered and within "
                         f"{s[0]:g}..{s[-1]:g} Å")
    inside = (s > lo + _TOL_A) & (s < hi - _TOL_A)
    nodes = np.concatenate([[lo], s[inside], [hi]])
    radii = np.interp(nodes, s, r)
    # a NaN plane next to an end makes the interpolated end radius NaN as well
    used = np.concatenate([[radii[0]], r[inside], [radii[-1]]])
    if not np.all(np.isfinite(used)):
        raise InputError(f"the radius is open (NaN) within {lo:g}..{hi:g} Å")
    if np.any(used <= 0):
        raise PoreNotFoundError(f"the pore is closed (radius {used.min():.2f} Å <= 0) within "
                                f"{lo:g}..{hi:g} Å: no conductance")
    return float(np.sum(np.diff(nodes) / (np.pi * radii[:-1] * radii[1:])) / _A_TO_M)


def access_resistance_ohm(resistivity_ohm_m: float, mouth_radius_A: float) -> float:
    """Access resistance of one circular mouth, ``ρ / (4 a)`` (Hall 1975).

    Examples
    --------
    >>> round(access_resistance_ohm(0.8, 5.0) / 1e8, 6)
    4.0
    """
    rho = check_positive(resistivity_ohm_m, "resistivity_ohm_m")
    a = check_positive(mouth_radius_A, "mouth_radius_A")
    return rho / (4.0 * a * _A_TO_M)


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
        raise PoreNotFoundError(f"only one enclosed plane around s = {s[k]:.2f} Å; "
                                "no pore length to integrate")
    others = finite.copy()
    others[first:last + 1] = False
    if others.any():
        warnings.warn(f"{int(others.sum())} enclosed planes are cut off from the pore by open "
                      "planes and count as bath", QualityWarning, stacklevel=2)
    lo, hi, clipped = float(s[first]), float(s[last]), False
    if atoms is not None:
        if not isinstance(atoms, Atoms):
            raise InputError(f"atoms must be Atoms, got {type(atoms).__name__}")
        frame = profile.axis.to_frame(atoms.coords_A)
        near = np.hypot(frame[:, 0], frame[:, 1]) <= profile.max_radius_A
        if not near.any():
            raise InputError(f"no atom lies within max_radius_A = {profile.max_radius_A:g} Å "
                             "of the profile's axis: are these the atoms profiled?")
        s_wall = frame[near, 2]
        new_lo, new_hi = max(lo, float(s_wall.min())), min(hi, float(s_wall.max()))
        if new_hi - new_lo <= _TOL_A:
            raise PoreNotFoundError("the atoms around the axis span no length of the enclosed "
                                    f"planes ({lo:.2f}..{hi:.2f} Å)")
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


def _parse_segment_specs(segments, profile: RadiusProfile, atoms: Atoms | None,
                         extent: PoreExtent) -> list[PoreSegment]:
    out = []
    for item in segments:
        if isinstance(item, PoreSegment):
            out.append(item)
            continue
        if not isinstance(item, Sequence) or isinstance(item, str) or len(item) not in (2, 3):
            raise InputError("each segment must be (name, s_start_A, s_end_A) or "
                             f"(name, selection); got {item!r}")
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
            raise InputError(f"segment {name!r}: selection {sel!r} spans s = {lo:.2f}..{hi:.2f}"
                             f" Å, outside the pore ({extent.start_A:.2f}.."
                             f"{extent.end_A:.2f} Å)")
        if lo < extent.start_A - _TOL_A or hi > extent.end_A + _TOL_A:
            warnings.warn(f"segment {name!r}: selection {sel!r} spans s = {lo:.2f}..{hi:.2f} Å;"
                          f" clipped to the pore ({extent.start_A:.2f}..{extent.end_A:.2f} Å)",
                          QualityWarning, stacklevel=3)
            lo, hi = max(lo, extent.start_A), min(hi, extent.end_A)
        if hi - lo <= _TOL_A:
            raise InputError(f"segment {name!r}: selection {sel!r} has no axial extent "
                             f"(s = {lo:.2f} Å)")
        out.append(PoreSegment(str(name), lo, hi, f"selection {sel}"))
    return out


def pore_segments(profile: RadiusProfile, *, atoms: Atoms | None = None,
                  segments: Sequence | None = None, cuts_s_A: Sequence[float] | None = None,
                  constriction_margin_A: float = 1.0,
                  side_names: tuple[str, str] = ("entry", "far"),
                  extent: PoreExtent | None = None) -> tuple[PoreSegment, ...]:
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
    entry_name, far_name = _check_side_names(side_names)
    if segments is not None and cuts_s_A is not None:
        raise InputError("give either segments or cuts_s_A, not both")
    if cuts_s_A is not None:
        cuts = sorted(check_finite(c, "cuts_s_A") for c in cuts_s_A)
        for c in cuts:
            if not lo + _TOL_A < c < hi - _TOL_A:
                raise InputError(f"cut at s = {c:g} Å lies outside the pore "
                                 f"({lo:.2f}..{hi:.2f} Å)")
        if any(b - a <= _TOL_A for a, b in zip(cuts[:-1], cuts[1:], strict=True)):
            raise InputError(f"cuts_s_A repeats a position: {cuts}")
        edges = [lo, *cuts, hi]
        return tuple(PoreSegment(f"pore {i + 1}", a, b, "cut")
                     for i, (a, b) in enumerate(zip(edges[:-1], edges[1:], strict=True)))
    if segments is None or len(segments) == 0:
        margin = check_positive(constriction_margin_A, "constriction_margin_A", allow_zero=True)
        c_lo, c_hi = _constriction_range(profile, extent, margin)
        parts = [(f"{entry_name}-side pore", lo, c_lo), ("constriction", c_lo, c_hi),
                 (f"{far_name}-side pore", c_hi, hi)]
        return tuple(PoreSegment(n, a, b, "automatic") for n, a, b in parts if b - a > _TOL_A)
    user = _parse_segment_specs(segments, profile, atoms, extent)
    names = [seg.name for seg in user]
    for seg in user:
        if not seg.name.strip():
            raise InputError("segment names must not be empty")
        if names.count(seg.name) > 1:
            raise InputError(f"segment name {seg.name!r} is used twice")
        if seg.s_end_A - seg.s_start_A <= _TOL_A:
            raise InputError(f"segment {seg.name!r} must have start < end, got "
                             f"{seg.s_start_A:g}..{seg.s_end_A:g} Å")
        if seg.s_start_A < lo - _TOL_A or seg.s_end_A > hi + _TOL_A:
            raise InputError(f"segment {seg.name!r} ({seg.s_start_A:g}..{seg.s_end_A:g} Å) "
                             f"lies outside the pore ({lo:.2f}..{hi:.2f} Å)")
    user.sort(key=lambda seg: seg.s_start_A)
    for a, b in zip(user[:-1], user[1:], strict=True):
        if b.s_start_A < a.s_end_A - _TOL_A:
            raise InputError(f"segments {a.name!r} ({a.s_start_A:g}..{a.s_end_A:g} Å) and "
                             f"{b.name!r} ({b.s_start_A:g}..{b.s_end_A:g} Å) overlap")
    out: list[PoreSegment] = []
    cursor = lo
    for i, seg in enumerate(user):
        if seg.s_start_A - cursor > _TOL_A:
            gap = (f"pore before {seg.name}" if i == 0
                   else f"pore between {user[i - 1].name} and {seg.name}")
            out.append(PoreSegment(gap, cursor, seg.s_start_A, "remainder"))
        out.append(PoreSegment(seg.name, max(seg.s_start_A, lo), min(seg.s_end_A, hi),
                               seg.origin))
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
    inside = np.isfinite(r) & (r <= limit + 1e-12) & (s >= extent.start_A - _TOL_A) & (
        s <= extent.end_A + _TOL_A)
    first, last = k, k
    while first > 0 and inside[first - 1]:
        first -= 1
    while last < len(s) - 1 and inside[last + 1]:
        last += 1
    half = 0.5 * profile.step_A
    return (max(extent.start_A, float(s[first]) - half),
            min(extent.end_A, float(s[last]) + half))


def _check_side_names(side_names) -> tuple[str, str]:
    if (isinstance(side_names, str) or not isinstance(side_names, Sequence)
            or len(side_names) != 2 or not all(isinstance(n, str) and n.strip()
                                               for n in side_names)
            or side_names[0] == side_names[1]):
        raise InputError(f"side_names must be two different non-empty names, got {side_names!r}")
    return side_names[0].strip(), side_names[1].strip()


# --------------------------------------------------------------------------- forward model
@dataclass(frozen=True)
class SegmentResistance:
    """The resistance of one segment of the series model.

    Attributes
    ----------
    name : str
    kind : {"access", "pore"}
    side : {"entry", "far", "neither"}
        Whose solution fills it.
    s_start_A, s_end_A : float
        Axial extent (Å); for an access region both are the mouth position.
    radius_A : float
        Narrowest radius in a pore segment; the mouth radius for an access region (Å).
    resistivity_ohm_m : float
        Effective resistivity used (side factor and mobility factor applied).
    mobility_factor : float
    resistance_Gohm : float
    share_percent : float
        Share of the total series resistance.
    origin : str
    """

    name: str
    kind: str
    side: str
    s_start_A: float
    s_end_A: float
    radius_A: float
    resistivity_ohm_m: float
    mobility_factor: float
    resistance_Gohm: float
    share_percent: float
    origin: str

    @property
    def length_A(self) -> float:  # noqa: N802 (unit suffix)
        return self.s_end_A - self.s_start_A

    def to_dict(self) -> dict:
        out = dict(self.__dict__)
        out["length_A"] = self.length_A
        return out


@dataclass(frozen=True)
class ConductanceEstimate:
    """Series-resistance breakdown of a pore and its conductance (a model estimate).

    Attributes
    ----------
    segments : tuple of SegmentResistance
        Entry access, pore segments in order along s, far access.
    resistance_Gohm : float
        Total series resistance.
    conductance_pS : float
        ``1 / resistance``.
    resistivity_ohm_m : float
        Base bulk resistivity.
    resistivity_source : str
    entry_side_factor, far_side_factor : float
        Resistivity factors of the two baths.
    pore_start_A, pore_end_A : float
        Pore extent along s (Å).
    narrowest_s_A, narrowest_radius_A : float
    entry_mouth_radius_A, far_mouth_radius_A : float
    mouth_rule : str
    side_names : (str, str)
    radius_set, source, version : str
    """

    segments: tuple[SegmentResistance, ...]
    resistance_Gohm: float
    conductance_pS: float
    resistivity_ohm_m: float
    resistivity_source: str
    entry_side_factor: float
    far_side_factor: float
    pore_start_A: float
    pore_end_A: float
    narrowest_s_A: float
    narrowest_radius_A: float
    entry_mouth_radius_A: float
    far_mouth_radius_A: float
    mouth_rule: str
    side_names: tuple[str, str]
    radius_set: str
    source: str
    version: str = field(default=__version__)

    def by_side_Gohm(self) -> dict[str, float]:  # noqa: N802 (unit suffix)
        """Total resistance filled by each side's solution: ``entry``, ``neither``, ``far``."""
        out = dict.fromkeys(SIDES, 0.0)
        for seg in self.segments:
            out[seg.side] += seg.resistance_Gohm
        return out

    def predicted_conductance_pS(  # noqa: N802 (unit suffix)
            self, entry_factor: float = 1.0, far_factor: float = 1.0) -> float:
        """Conductance if the entry/far side resistivities are further scaled by the factors."""
        fe = check_positive(entry_factor, "entry_factor")
        ff = check_positive(far_factor, "far_factor")
        parts = self.by_side_Gohm()
        total = fe * parts["entry"] + parts["neither"] + ff * parts["far"]
        return 1e3 / total

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "source": self.source,
            "radius_set": self.radius_set,
            "model": "series resistance: Ohmic pore segments (Hille 2001) + access "
                     "resistance rho/(4a) at each mouth (Hall 1975); a model estimate",
            "resistivity_ohm_m": self.resistivity_ohm_m,
            "resistivity_source": self.resistivity_source,
            "entry_side_factor": self.entry_side_factor,
            "far_side_factor": self.far_side_factor,
            "side_names": list(self.side_names),
            "pore_s_range_A": [self.pore_start_A, self.pore_end_A],
            "narrowest_s_A": self.narrowest_s_A,
            "narrowest_radius_A": self.narrowest_radius_A,
            "mouth_radius_A": {"entry": self.entry_mouth_radius_A,
                               "far": self.far_mouth_radius_A},
            "mouth_rule": self.mouth_rule,
            "segments": [seg.to_dict() for seg in self.segments],
            "by_side_Gohm": self.by_side_Gohm(),
            "resistance_Gohm": self.resistance_Gohm,
            "conductance_pS": self.conductance_pS,
        }


def resolve_resistivity(*, resistivity_ohm_m: float | None = None,
                        conductivity_S_per_m: float | None = None,
                        electrolyte: str | None = None, conc_mM: float | None = None
                        ) -> tuple[float, str]:
    """Base resistivity (Ω m) and a description of where it came from.

    Exactly one of ``resistivity_ohm_m``, ``conductivity_S_per_m`` or
    ``electrolyte`` (with ``conc_mM``) must be given.
    """
    given = [resistivity_ohm_m is not None, conductivity_S_per_m is not None,
             electrolyte is not None]
    if sum(given) != 1:
        raise InputError("give exactly one of resistivity_ohm_m, conductivity_S_per_m or "
                         "electrolyte (with conc_mM)")
    if conc_mM is not None and electrolyte is None:
        raise InputError("conc_mM needs electrolyte")
    if resistivity_ohm_m is not None:
        rho = check_positive(resistivity_ohm_m, "resistivity_ohm_m")
        return rho, f"user resistivity {rho:g} Ohm m"
    if conductivity_S_per_m is not None:
        kappa = check_positive(conductivity_S_per_m, "conductivity_S_per_m")
        return 1.0 / kappa, f"user conductivity {kappa:g} S/m"
    if conc_mM is None:
        raise InputError(f"electrolyte {electrolyte!r} needs conc_mM")
    bath = bath_conductivity(electrolyte, conc_mM)
    return bath.resistivity_ohm_m, (
        f"{bath.electrolyte} {bath.conc_mM:g} mM at {bath.temperature_C:g} °C: "
        f"{bath.conductivity_S_per_m:.4g} S/m interpolated from {bath.source}")


def _mobility_for(mobility_factor, names: list[str]) -> dict[str, float]:
    if isinstance(mobility_factor, Mapping):
        unknown = set(mobility_factor) - set(names)
        if unknown:
            raise InputError(f"mobility_factor names unknown segment(s) {sorted(unknown)}; "
                             f"pore segments: {names}")
        out = dict.fromkeys(names, 1.0)
        out.update({k: float(v) for k, v in mobility_factor.items()})
    else:
        out = dict.fromkeys(names, mobility_factor)
    for name, value in out.items():
        val = check_positive(value, f"mobility_factor[{name!r}]")
        if val > 1:
            raise InputError(f"mobility_factor[{name!r}] must be in (0, 1] (it reduces the "
                             f"conductivity of narrow pores), got {value!r}")
        out[name] = val
    return out


def series_resistance(profile: RadiusProfile, *, atoms: Atoms | None = None,
                      resistivity_ohm_m: float | None = None,
                      conductivity_S_per_m: float | None = None,
                      electrolyte: str | None = None, conc_mM: float | None = None,
                      segments: Sequence | None = None,
                      cuts_s_A: Sequence[float] | None = None,
                      entry_side_factor: float = 1.0, far_side_factor: float = 1.0,
                      bathed_by: Mapping[str, str] | None = None,
                      mobility_factor: float | Mapping[str, float] = 1.0,
                      mouth_radii_A: tuple[float, float] | None = None,
                      side_names: tuple[str, str] = ("entry", "far"),
                      constriction_margin_A: float = 1.0) -> ConductanceEstimate:
    """Series-resistance breakdown of a pore from its radius profile.

    Parameters
    ----------
    profile : RadiusProfile
        From :func:`poreprobe.radius_profile`.
    atoms : Atoms, optional
        The atoms profiled: clips the pore to the wall atoms (recommended) and
        allows selection segments.
    resistivity_ohm_m, conductivity_S_per_m : float, optional
        Bulk resistivity (Ω m) or conductivity (S/m) of the bath.
    electrolyte, conc_mM : str, float, optional
        ``"KCl"`` or ``"NaCl"`` and its concentration (mmol/L, 25 °C); see
        :func:`poreprobe.electrolyte.bath_conductivity`. Exactly one source of
        resistivity must be given.
    segments, cuts_s_A, constriction_margin_A
        Pore segments; see :func:`pore_segments`.
    entry_side_factor, far_side_factor : float
        Resistivity factors (> 0) of the entry-side and far-side baths.
    bathed_by : mapping of str to {"entry", "far", "neither"}, optional
        Which side's solution fills a pore segment (by name); the others follow
        the default rule (module docstring).
    mobility_factor : float or mapping of str to float
        Mobility scaling (0 < μ <= 1) of pore segments: one value for all, or per
        segment name (others 1). Default 1 (bulk mobility).
    mouth_radii_A : (float, float), optional
        Entry and far mouth radii (Å) instead of the profile's end radii.
    side_names : (str, str)
        Labels for the two sides, e.g. ``("intracellular", "extracellular")``.

    Returns
    -------
    ConductanceEstimate

    Raises
    ------
    InputError
        Bad resistivity, factor, segment, side or mobility input.
    PoreNotFoundError
        No enclosed pore in the profile, or a closed one (radius <= 0).

    Examples
    --------
    >>> import poreprobe
    >>> from poreprobe import synthetic
    >>> atoms, _, _ = synthetic.cylinder(6.7, 10.0)
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> prof = poreprobe.radius_profile(atoms, axis)
    >>> est = series_resistance(prof, atoms=atoms, resistivity_ohm_m=0.8)
    >>> [seg.name for seg in est.segments]
    ['entry access', 'constriction', 'far access']
    >>> 540 < est.conductance_pS < 560
    True
    """
    rho, rho_source = resolve_resistivity(
        resistivity_ohm_m=resistivity_ohm_m, conductivity_S_per_m=conductivity_S_per_m,
        electrolyte=electrolyte, conc_mM=conc_mM)
    fe = check_positive(entry_side_factor, "entry_side_factor")
    ff = check_positive(far_side_factor, "far_side_factor")
    entry_name, far_name = _check_side_names(side_names)
    extent = pore_extent(profile, atoms)
    pores = pore_segments(profile, atoms=atoms, segments=segments, cuts_s_A=cuts_s_A,
                          constriction_margin_A=constriction_margin_A,
                          side_names=(entry_name, far_name), extent=extent)
    names = [seg.name for seg in pores]
    sides = _sides_for(pores, extent.narrowest_s_A, bathed_by or {})
    mobility = _mobility_for(mobility_factor, names)
    s, r = profile.s_A, profile.radius_A
    if mouth_radii_A is None:
        a_entry = float(np.interp(extent.start_A, s, r))
        a_far = float(np.interp(extent.end_A, s, r))
    else:
        if isinstance(mouth_radii_A, str) or len(mouth_radii_A) != 2:
            raise InputError(f"mouth_radii_A must be two radii (Å), got {mouth_radii_A!r}")
        a_entry = check_positive(mouth_radii_A[0], "mouth_radii_A[0]")
        a_far = check_positive(mouth_radii_A[1], "mouth_radii_A[1]")
    side_rho = {"entry": rho * fe, "far": rho * ff, "neither": rho}
    rows = [(f"{entry_name} access", "access", "entry", extent.start_A, extent.start_A, a_entry,
             side_rho["entry"], 1.0, access_resistance_ohm(side_rho["entry"], a_entry),
             "Hall 1975 rho/(4a)")]
    for seg in pores:
        eff = side_rho[sides[seg.name]] / mobility[seg.name]
        integral = pore_integral_per_m(s, r, seg.s_start_A, seg.s_end_A)
        rows.append((seg.name, "pore", sides[seg.name], seg.s_start_A, seg.s_end_A,
                     _min_radius(s, r, seg.s_start_A, seg.s_end_A), eff, mobility[seg.name],
                     eff * integral, seg.origin))
    rows.append((f"{far_name} access", "access", "far", extent.end_A, extent.end_A, a_far,
                 side_rho["far"], 1.0, access_resistance_ohm(side_rho["far"], a_far),
                 "Hall 1975 rho/(4a)"))
    total_ohm = sum(row[8] for row in rows)
    segs = tuple(SegmentResistance(name, kind, side, lo, hi, rad, eff, mob, res * 1e-9,
                                   100.0 * res / total_ohm, origin)
                 for name, kind, side, lo, hi, rad, eff, mob, res, origin in rows)
    return ConductanceEstimate(
        segments=segs, resistance_Gohm=total_ohm * 1e-9, conductance_pS=1e12 / total_ohm,
        resistivity_ohm_m=rho, resistivity_source=rho_source, entry_side_factor=fe,
        far_side_factor=ff, pore_start_A=extent.start_A, pore_end_A=extent.end_A,
        narrowest_s_A=extent.narrowest_s_A, narrowest_radius_A=extent.narrowest_radius_A,
        entry_mouth_radius_A=a_entry, far_mouth_radius_A=a_far,
        mouth_rule=MOUTH_RULE if mouth_radii_A is None else "mouth radii given by the user",
        side_names=(entry_name, far_name), radius_set=profile.radius_set,
        source=profile.source,
    )


def _min_radius(s, r, lo, hi) -> float:
    inside = (s > lo) & (s < hi)
    ends = np.interp([lo, hi], s, r)
    return float(min(np.min(r[inside], initial=np.inf), ends.min()))


def _sides_for(pores: Sequence[PoreSegment], narrowest_s_A: float,
               bathed_by: Mapping[str, str]) -> dict[str, str]:
    names = [seg.name for seg in pores]
    if not isinstance(bathed_by, Mapping):
        raise InputError(f"bathed_by must map segment names to sides, got {bathed_by!r}")
    unknown = set(bathed_by) - set(names)
    if unknown:
        raise InputError(f"bathed_by names unknown segment(s) {sorted(unknown)}; pore "
                         f"segments: {names}")
    out = {}
    for seg in pores:
        if seg.name in bathed_by:
            out[seg.name] = check_choice(bathed_by[seg.name], f"bathed_by[{seg.name!r}]", SIDES)
        elif seg.s_end_A <= narrowest_s_A + _TOL_A:
            out[seg.name] = "entry"
        elif seg.s_start_A >= narrowest_s_A - _TOL_A:
            out[seg.name] = "far"
        else:
            out[seg.name] = "neither"
    return out


# --------------------------------------------------------------------------- inverse analysis
@dataclass(frozen=True)
class SideResistanceSplit:
    """Three-resistor split (entry side, unaffected middle, far side) from measurements.

    Attributes
    ----------
    conductances_pS : (float, float, float)
        Measured G0 (control), G_e (entry side raised), G_f (far side raised).
    conductance_sd_pS : (float, float, float)
    factor_entry, factor_far : float
        Resistivity factors applied on each side.
    resistance_Gohm : dict
        ``{"entry": R_e, "middle": R_m, "far": R_f, "total": 1/G0}``.
    resistance_sd_Gohm : dict
        First-order SDs of the same.
    share_percent, share_sd_percent : dict
        ``R_x / (1/G0)`` in percent and its SD (``entry``, ``middle``, ``far``).
    ln_ratio_kT : dict
        ``{"entry": ln(G0/G_e), "far": ln(G0/G_f)}`` (see :func:`ratio_free_energy`).
    ln_ratio_sd_kT : dict
    prediction : dict or None
        The forward model's split for the structure, if one was given.
    """

    conductances_pS: tuple[float, float, float]
    conductance_sd_pS: tuple[float, float, float]
    factor_entry: float
    factor_far: float
    resistance_Gohm: dict
    resistance_sd_Gohm: dict
    share_percent: dict
    share_sd_percent: dict
    ln_ratio_kT: dict
    ln_ratio_sd_kT: dict
    prediction: dict | None = None
    version: str = field(default=__version__)

    def to_dict(self) -> dict:
        out = dict(self.__dict__)
        out["conductances_pS"] = dict(zip(("control", "entry_raised", "far_raised"),
                                          self.conductances_pS, strict=True))
        out["conductance_sd_pS"] = dict(zip(("control", "entry_raised", "far_raised"),
                                            self.conductance_sd_pS, strict=True))
        out["model"] = ("three resistors in series; R_e = (1/G_e - 1/G0)/(f_e - 1), "
                        "R_f = (1/G_f - 1/G0)/(f_f - 1), R_m = 1/G0 - R_e - R_f; "
                        "first-order error propagation")
        out["segments"] = [
            {"name": f"{key} side" if key != "middle" else "middle",
             "resistance_Gohm": self.resistance_Gohm[key],
             "resistance_sd_Gohm": self.resistance_sd_Gohm[key],
             "share_percent": self.share_percent[key],
             "share_sd_percent": self.share_sd_percent[key]}
            for key in ("entry", "middle", "far")]
        out["conductance_pS"] = self.conductances_pS[0]
        out["conductance_sd_pS"] = self.conductance_sd_pS[0]
        return out


def _measurement(value, name: str) -> tuple[float, float]:
    if isinstance(value, Sequence) and not isinstance(value, str):
        if len(value) != 2:
            raise InputError(f"{name} must be a value or (value, sd) in pS, got {value!r}")
        g, sd = value
    else:
        g, sd = value, 0.0
    g = check_finite(g, name)
    if g <= 0:
        raise InputError(f"{name} must be a positive conductance (pS), got {g:g}")
    return g, check_positive(sd, f"{name} SD", allow_zero=True)


def _check_factor(value, name: str) -> float:
    f = check_positive(value, name)
    if abs(f - 1.0) < 1e-9:
        raise InputError(f"{name} must differ from 1 (no change leaves the split undefined), "
                         f"got {value!r}")
    return f


def split_side_resistances(control_pS, entry_raised_pS, far_raised_pS, *,
                           factor_entry: float, factor_far: float,
                           estimate: ConductanceEstimate | None = None) -> SideResistanceSplit:
    """Solve the three-resistor series model from measured conductances.

    Parameters
    ----------
    control_pS, entry_raised_pS, far_raised_pS : float or (float, float)
        Conductances (pS, > 0), optionally with their SD: control, with the entry
        side's resistivity raised by ``factor_entry``, and with the far side's raised
        by ``factor_far``. Measurements are taken as independent.
    factor_entry, factor_far : float
        Resistivity factors (> 0, != 1).
    estimate : ConductanceEstimate, optional
        A forward-model estimate for the structure (computed with side factors 1);
        its split and predicted conductances are reported beside the measured split.

    Returns
    -------
    SideResistanceSplit

    Warns
    -----
    QualityWarning
        If a recovered resistance is negative (noise or a model that does not fit).

    Examples
    --------
    >>> res = split_side_resistances(1e3 / 3.0, 1e3 / 4.0, 1e3 / 3.5,
    ...                              factor_entry=2.0, factor_far=2.0)
    >>> [round(res.resistance_Gohm[k], 9) for k in ("entry", "middle", "far")]
    [1.0, 1.5, 0.5]
    """
    g = np.empty(3)
    sd = np.empty(3)
    for i, (value, name) in enumerate(((control_pS, "control conductance"),
                                       (entry_raised_pS, "entry-raised conductance"),
                                       (far_raised_pS, "far-raised conductance"))):
        g[i], sd[i] = _measurement(value, name)
    fe = _check_factor(factor_entry, "factor_entry")
    ff = _check_factor(factor_far, "factor_far")
    r = 1e3 / g                               # GOhm
    var_r = (1e3 * sd / g**2) ** 2
    # outputs linear in r: rows entry, middle, far, total
    j_entry = np.array([-1.0, 1.0, 0.0]) / (fe - 1.0)
    j_far = np.array([-1.0, 0.0, 1.0]) / (ff - 1.0)
    j_total = np.array([1.0, 0.0, 0.0])
    jac = np.stack([j_entry, j_total - j_entry - j_far, j_far, j_total])
    values = jac @ r
    cov = jac @ np.diag(var_r) @ jac.T
    keys = ("entry", "middle", "far", "total")
    res = dict(zip(keys, values.tolist(), strict=True))
    res_sd = dict(zip(keys, np.sqrt(np.diag(cov)).tolist(), strict=True))
    share_jac = jac[:3] / values[3] - np.outer(values[:3], j_total) / values[3] ** 2
    share_cov = share_jac @ np.diag(var_r) @ share_jac.T
    share = dict(zip(keys[:3], (100 * values[:3] / values[3]).tolist(), strict=True))
    share_sd = dict(zip(keys[:3], (100 * np.sqrt(np.diag(share_cov))).tolist(), strict=True))
    negative = [k for k in keys[:3] if res[k] < 0]
    if negative:
        warnings.warn(f"negative resistance recovered for {', '.join(negative)}: the "
                      "measurements do not fit the three-resistor model within their noise",
                      QualityWarning, stacklevel=2)
    ln_e = ratio_free_energy(g[0], g[1], sd1_pS=sd[0], sd2_pS=sd[1])
    ln_f = ratio_free_energy(g[0], g[2], sd1_pS=sd[0], sd2_pS=sd[2])
    prediction = None
    if estimate is not None:
        if not isinstance(estimate, ConductanceEstimate):
            raise InputError(f"estimate must be a ConductanceEstimate, got "
                             f"{type(estimate).__name__}")
        parts = estimate.by_side_Gohm()
        total = estimate.resistance_Gohm
        prediction = {
            "resistance_Gohm": {"entry": parts["entry"], "middle": parts["neither"],
                                "far": parts["far"], "total": total},
            "share_percent": {"entry": 100 * parts["entry"] / total,
                              "middle": 100 * parts["neither"] / total,
                              "far": 100 * parts["far"] / total},
            "conductances_pS": {"control": estimate.conductance_pS,
                                "entry_raised": estimate.predicted_conductance_pS(fe, 1.0),
                                "far_raised": estimate.predicted_conductance_pS(1.0, ff)},
            "note": "forward model estimate for the structure (not a measurement)",
        }
    return SideResistanceSplit(
        conductances_pS=tuple(g.tolist()), conductance_sd_pS=tuple(sd.tolist()),
        factor_entry=fe, factor_far=ff, resistance_Gohm=res, resistance_sd_Gohm=res_sd,
        share_percent=share, share_sd_percent=share_sd,
        ln_ratio_kT={"entry": ln_e.ln_ratio, "far": ln_f.ln_ratio},
        ln_ratio_sd_kT={"entry": ln_e.ln_ratio_sd, "far": ln_f.ln_ratio_sd},
        prediction=prediction,
    )


# --------------------------------------------------------------------------- energetics
@dataclass(frozen=True)
class RatioFreeEnergy:
    """A conductance ratio as a free-energy difference.

    Attributes
    ----------
    ratio : float
        ``G1 / G2``.
    ln_ratio : float
        ``ln(G1 / G2)``, in units of kT.
    ln_ratio_sd : float
        First-order SD from independent SDs of G1 and G2.
    kJ_per_mol : float
        ``ln_ratio × R T`` in kJ/mol at ``temperature_K``.
    temperature_K : float
    """

    ratio: float
    ln_ratio: float
    ln_ratio_sd: float
    kJ_per_mol: float
    temperature_K: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def ratio_free_energy(g1_pS: float, g2_pS: float, *, sd1_pS: float = 0.0, sd2_pS: float = 0.0,
                      temperature_K: float = 298.15) -> RatioFreeEnergy:
    """``ln(G1 / G2)`` in kT (and kJ/mol): the energetics aside of the module docstring.

    Examples
    --------
    >>> round(ratio_free_energy(200.0, 100.0).ln_ratio, 6)
    0.693147
    """
    g1 = check_positive(g1_pS, "g1_pS")
    g2 = check_positive(g2_pS, "g2_pS")
    s1 = check_positive(sd1_pS, "sd1_pS", allow_zero=True)
    s2 = check_positive(sd2_pS, "sd2_pS", allow_zero=True)
    t = check_positive(temperature_K, "temperature_K")
    ln = math.log(g1 / g2)
    return RatioFreeEnergy(g1 / g2, ln, math.hypot(s1 / g1, s2 / g2),
                           ln * constants.R * t / 1000.0, t)
