"""Where the resistance lies: a series-resistance model of the pore.

All results are **model estimates** built from a radius profile; they depend on the
radius set, on the model's quality and on the definitions below.

Model
-----
The permeation pathway is a chain of named segments in series: the access region of
the entry-side bath, one or more pore segments, and the access region of the far-side
bath. ``s`` increases from the entry end (see :mod:`poreprobe.geometry.axis`).

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

The pore's extent, mouth radii and segments are defined in :mod:`poreprobe.geometry.segments`;
the inverse analysis from measured conductances is in :mod:`poreprobe.bench.side_split`.

Baths and sides
---------------
The base resistivity ρ comes from the user (Ω m or S/m) or from a named electrolyte
(:mod:`poreprobe.bench.electrolyte`). Each side may have its resistivity scaled by a factor
(e.g. a viscogen on one side only). Each pore segment is bathed by the entry side, the
far side or neither (base ρ); by default segments wholly on the entry side of the
narrowest plane take the entry side's solution, segments wholly on the far side the
far side's, and a segment containing the narrowest plane neither (a solute that
raises the resistivity is taken not to pass the constriction).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_choice, check_finite, check_positive
from poreprobe._version import __version__
from poreprobe.bench.electrolyte import bath_conductivity
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.geometry.segments import (
    MOUTH_RULE,
    PoreSegment,
    check_side_names,
    pore_extent,
    pore_segments,
)
from poreprobe.io.structure import Atoms

SIDES = ("entry", "far", "neither")
_TOL_A = 1e-6
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
        raise InputError(
            f"s_A and radius_A must be 1-D of equal length >= 2, got {s.shape} and {r.shape}"
        )
    if np.any(np.diff(s) <= 0):
        raise InputError("s_A must increase strictly")
    lo, hi = check_finite(s_start_A, "s_start_A"), check_finite(s_end_A, "s_end_A")
    if hi < lo or lo < s[0] - _TOL_A or hi > s[-1] + _TOL_A:
        raise InputError(
            f"interval {lo:g}..{hi:g} Å must be ordered and within {s[0]:g}..{s[-1]:g} Å"
        )
    inside = (s > lo + _TOL_A) & (s < hi - _TOL_A)
    nodes = np.concatenate([[lo], s[inside], [hi]])
    radii = np.interp(nodes, s, r)
    # a NaN plane next to an end makes the interpolated end radius NaN as well
    used = np.concatenate([[radii[0]], r[inside], [radii[-1]]])
    if not np.all(np.isfinite(used)):
        raise InputError(f"the radius is open (NaN) within {lo:g}..{hi:g} Å")
    if np.any(used <= 0):
        raise PoreNotFoundError(
            f"the pore is closed (radius {used.min():.2f} Å <= 0) within "
            f"{lo:g}..{hi:g} Å: no conductance"
        )
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
        self, entry_factor: float = 1.0, far_factor: float = 1.0
    ) -> float:
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
            "mouth_radius_A": {"entry": self.entry_mouth_radius_A, "far": self.far_mouth_radius_A},
            "mouth_rule": self.mouth_rule,
            "segments": [seg.to_dict() for seg in self.segments],
            "by_side_Gohm": self.by_side_Gohm(),
            "resistance_Gohm": self.resistance_Gohm,
            "conductance_pS": self.conductance_pS,
        }


def resolve_resistivity(
    *,
    resistivity_ohm_m: float | None = None,
    conductivity_S_per_m: float | None = None,
    electrolyte: str | None = None,
    conc_mM: float | None = None,
) -> tuple[float, str]:
    """Base resistivity (Ω m) and a description of where it came from.

    Exactly one of ``resistivity_ohm_m``, ``conductivity_S_per_m`` or
    ``electrolyte`` (with ``conc_mM``) must be given.
    """
    given = [
        resistivity_ohm_m is not None,
        conductivity_S_per_m is not None,
        electrolyte is not None,
    ]
    if sum(given) != 1:
        raise InputError(
            "give exactly one of resistivity_ohm_m, conductivity_S_per_m or "
            "electrolyte (with conc_mM)"
        )
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
        f"{bath.conductivity_S_per_m:.4g} S/m interpolated from {bath.source}"
    )


def _mobility_for(mobility_factor, names: list[str]) -> dict[str, float]:
    if isinstance(mobility_factor, Mapping):
        unknown = set(mobility_factor) - set(names)
        if unknown:
            raise InputError(
                f"mobility_factor names unknown segment(s) {sorted(unknown)}; "
                f"pore segments: {names}"
            )
        out = dict.fromkeys(names, 1.0)
        out.update({k: float(v) for k, v in mobility_factor.items()})
    else:
        out = dict.fromkeys(names, mobility_factor)
    for name, value in out.items():
        val = check_positive(value, f"mobility_factor[{name!r}]")
        if val > 1:
            raise InputError(
                f"mobility_factor[{name!r}] must be in (0, 1] (it reduces the "
                f"conductivity of narrow pores), got {value!r}"
            )
        out[name] = val
    return out


def series_resistance(
    profile: RadiusProfile,
    *,
    atoms: Atoms | None = None,
    resistivity_ohm_m: float | None = None,
    conductivity_S_per_m: float | None = None,
    electrolyte: str | None = None,
    conc_mM: float | None = None,
    segments: Sequence | None = None,
    cuts_s_A: Sequence[float] | None = None,
    entry_side_factor: float = 1.0,
    far_side_factor: float = 1.0,
    bathed_by: Mapping[str, str] | None = None,
    mobility_factor: float | Mapping[str, float] = 1.0,
    mouth_radii_A: tuple[float, float] | None = None,
    side_names: tuple[str, str] = ("entry", "far"),
    constriction_margin_A: float = 1.0,
) -> ConductanceEstimate:
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
        :func:`poreprobe.bench.electrolyte.bath_conductivity`. Exactly one source of
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
    >>> from poreprobe.geometry import synthetic
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
        resistivity_ohm_m=resistivity_ohm_m,
        conductivity_S_per_m=conductivity_S_per_m,
        electrolyte=electrolyte,
        conc_mM=conc_mM,
    )
    fe = check_positive(entry_side_factor, "entry_side_factor")
    ff = check_positive(far_side_factor, "far_side_factor")
    entry_name, far_name = check_side_names(side_names)
    extent = pore_extent(profile, atoms)
    pores = pore_segments(
        profile,
        atoms=atoms,
        segments=segments,
        cuts_s_A=cuts_s_A,
        constriction_margin_A=constriction_margin_A,
        side_names=(entry_name, far_name),
        extent=extent,
    )
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
    rows = [
        (
            f"{entry_name} access",
            "access",
            "entry",
            extent.start_A,
            extent.start_A,
            a_entry,
            side_rho["entry"],
            1.0,
            access_resistance_ohm(side_rho["entry"], a_entry),
            "Hall 1975 rho/(4a)",
        )
    ]
    for seg in pores:
        eff = side_rho[sides[seg.name]] / mobility[seg.name]
        integral = pore_integral_per_m(s, r, seg.s_start_A, seg.s_end_A)
        rows.append(
            (
                seg.name,
                "pore",
                sides[seg.name],
                seg.s_start_A,
                seg.s_end_A,
                _min_radius(s, r, seg.s_start_A, seg.s_end_A),
                eff,
                mobility[seg.name],
                eff * integral,
                seg.origin,
            )
        )
    rows.append(
        (
            f"{far_name} access",
            "access",
            "far",
            extent.end_A,
            extent.end_A,
            a_far,
            side_rho["far"],
            1.0,
            access_resistance_ohm(side_rho["far"], a_far),
            "Hall 1975 rho/(4a)",
        )
    )
    total_ohm = sum(row[8] for row in rows)
    segs = tuple(
        SegmentResistance(
            name, kind, side, lo, hi, rad, eff, mob, res * 1e-9, 100.0 * res / total_ohm, origin
        )
        for name, kind, side, lo, hi, rad, eff, mob, res, origin in rows
    )
    return ConductanceEstimate(
        segments=segs,
        resistance_Gohm=total_ohm * 1e-9,
        conductance_pS=1e12 / total_ohm,
        resistivity_ohm_m=rho,
        resistivity_source=rho_source,
        entry_side_factor=fe,
        far_side_factor=ff,
        pore_start_A=extent.start_A,
        pore_end_A=extent.end_A,
        narrowest_s_A=extent.narrowest_s_A,
        narrowest_radius_A=extent.narrowest_radius_A,
        entry_mouth_radius_A=a_entry,
        far_mouth_radius_A=a_far,
        mouth_rule=MOUTH_RULE if mouth_radii_A is None else "mouth radii given by the user",
        side_names=(entry_name, far_name),
        radius_set=profile.radius_set,
        source=profile.source,
    )


def _min_radius(s, r, lo, hi) -> float:
    inside = (s > lo) & (s < hi)
    ends = np.interp([lo, hi], s, r)
    return float(min(np.min(r[inside], initial=np.inf), ends.min()))


def _sides_for(
    pores: Sequence[PoreSegment], narrowest_s_A: float, bathed_by: Mapping[str, str]
) -> dict[str, str]:
    names = [seg.name for seg in pores]
    if not isinstance(bathed_by, Mapping):
        raise InputError(f"bathed_by must map segment names to sides, got {bathed_by!r}")
    unknown = set(bathed_by) - set(names)
    if unknown:
        raise InputError(
            f"bathed_by names unknown segment(s) {sorted(unknown)}; pore segments: {names}"
        )
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
