"""Does the narrowest point admit the ion? The permeation verdict and its sensitivity.

Permeation verdict
------------------
The narrowest radius r is compared with the chosen ion's crystal radius
(Shannon 1976, CN 6) and hydrated radius (Nightingale 1959), from
:mod:`poreprobe.bench.ions`, with a borderline band of ``BORDERLINE_A`` = 0.25 Å:

* ``"hydrated"``: r >= hydrated radius (admits the ion with its water shell);
* ``"dehydrated"``: crystal radius + 0.25 Å <= r < hydrated radius (admits only the
  bare ion);
* ``"borderline"``: within 0.25 Å of the crystal radius: a static model cannot say
  whether the bare ion passes;
* ``"closed"``: r < crystal radius - 0.25 Å.

Within 0.25 Å of the hydrated radius the verdict is also flagged borderline
(``PermeationVerdict.borderline``). The band reflects how far pore-lining atoms
move at room temperature: an isotropic B-factor B means a mean-square
displacement B / (8 pi^2) along each direction, so B = 20 Å², typical of well
ordered protein atoms in crystal structures, is 0.50 Å RMS (common practice);
the band is half of that (our choice). The trajectory "closed" count uses the
same rule (:func:`closed_threshold_A`).

The minimum radius is recomputed with every radius set and, where the model has
hydrogens, with hydrogens in and out (the sensitivity table); the report claims
only the cases actually computed, and calls hydrogens partial when only some
atom types carry them (:mod:`poreprobe.checks.hydrogens`).

Everything here is an estimate from a model, not a measurement.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from poreprobe.bench.ions import BORDERLINE_BAND_A, Ion
from poreprobe.errors import PoreNotFoundError, QualityWarning
from poreprobe.geometry.profile import radius_profile
from poreprobe.io.radii import RADIUS_SETS, atom_radii_A, get_radius_set

BORDERLINE_A = BORDERLINE_BAND_A
VERDICTS = ("hydrated", "dehydrated", "borderline", "closed")


def closed_threshold_A(ion: Ion, band_A: float = BORDERLINE_A) -> float:  # noqa: N802
    """Narrowest radius below which a pore is called closed for ``ion`` (Å)."""
    return float(ion.crystal_radius_A - band_A)


@dataclass(frozen=True)
class SensitivityRow:
    """Minimum radius with one radius set and one hydrogen choice.

    Attributes
    ----------
    radius_set : str
    hydrogens : str
        ``"in"`` or ``"out"``.
    min_radius_A, min_s_A : float or None
        None when not computable (e.g. no hydrogens in the model).
    verdict : str or None
    note : str
    """

    radius_set: str
    hydrogens: str
    min_radius_A: float | None
    min_s_A: float | None
    verdict: str | None
    note: str = ""

    def to_dict(self) -> dict:
        return {
            "radius_set": self.radius_set,
            "hydrogens": self.hydrogens,
            "min_radius_A": self.min_radius_A,
            "min_s_A": self.min_s_A,
            "verdict": self.verdict,
            "note": self.note,
        }


@dataclass(frozen=True)
class PermeationVerdict:
    """Does the narrowest point admit the ion?

    Attributes
    ----------
    ion : str
        Ion symbol, e.g. ``"K+"``.
    crystal_radius_A, hydrated_radius_A : float
        From :mod:`poreprobe.bench.ions` (Shannon 1976 CN 6; Nightingale 1959).
    min_radius_A, min_s_A : float
        Narrowest point of the main profile (Å).
    verdict : str
        ``"hydrated"``, ``"dehydrated"``, ``"borderline"`` or ``"closed"``.
    message : str
    robust : bool
        True when every sensitivity row gives the same verdict.
    margin_A : float
        Distance of the narrowest radius from the nearer ion radius (Å); below
        0.25 Å the verdict is called borderline.
    band_A : float
        The borderline band (Å).
    """

    ion: str
    crystal_radius_A: float
    hydrated_radius_A: float
    min_radius_A: float
    min_s_A: float
    verdict: str
    message: str
    robust: bool
    margin_A: float
    band_A: float = BORDERLINE_A

    @property
    def borderline(self) -> bool:
        """True when the narrowest radius is within the band (0.25 Å) of an ion radius."""
        return self.margin_A < self.band_A

    def to_dict(self) -> dict:
        return {
            "ion": self.ion,
            "margin_A": self.margin_A,
            "borderline": self.borderline,
            "borderline_band_A": self.band_A,
            "band_source": "half the 0.50 Å RMS displacement of atoms with B = 20 Å² "
            "(sqrt(B / 8 pi^2), common practice); our choice",
            "crystal_radius_A": self.crystal_radius_A,
            "hydrated_radius_A": self.hydrated_radius_A,
            "min_radius_A": self.min_radius_A,
            "min_s_A": self.min_s_A,
            "verdict": self.verdict,
            "message": self.message,
            "robust": self.robust,
            "sources": "crystal radius: Shannon 1976, Acta Cryst. A32:751 (CN 6); "
            "hydrated radius: Nightingale 1959, J. Phys. Chem. 63:1381",
        }


# ----------------------------------------------------------------------------- verdict


def classify(min_radius_A: float, ion: Ion, band_A: float = BORDERLINE_A) -> str:
    """``"hydrated"``, ``"dehydrated"``, ``"borderline"`` or ``"closed"`` (module docstring)."""
    if not np.isfinite(min_radius_A):
        return "hydrated"
    if min_radius_A >= ion.hydrated_radius_A:
        return "hydrated"
    if min_radius_A >= ion.crystal_radius_A + band_A:
        return "dehydrated"
    if min_radius_A >= closed_threshold_A(ion, band_A):
        return "borderline"
    return "closed"


def borderline_margin_A(min_radius_A: float, ion: Ion) -> float:  # noqa: N802 (unit suffix)
    """Distance (Å) from the narrowest radius to the nearer of the ion's two radii."""
    return float(
        min(abs(min_radius_A - ion.crystal_radius_A), abs(min_radius_A - ion.hydrated_radius_A))
    )


def verdict_text(verdict, ion, r_min, s_min, robust, rows) -> str:
    where = f"the narrowest point (radius {r_min:.2f} Å at s = {s_min:.1f} Å)"
    text = {
        "hydrated": f"{where} admits a {ion.symbol} ion with its hydration shell (hydrated "
        f"radius {ion.hydrated_radius_A:.2f} Å, Nightingale 1959).",
        "dehydrated": f"{where} admits a bare {ion.symbol} ion (crystal radius "
        f"{ion.crystal_radius_A:.2f} Å, Shannon 1976, CN 6) but not the hydrated "
        f"ion ({ion.hydrated_radius_A:.2f} Å): the ion would have to shed water "
        "here.",
        "borderline": f"{where} is within {BORDERLINE_A:g} Å of the crystal radius of "
        f"{ion.symbol} ({ion.crystal_radius_A:.2f} Å, Shannon 1976, CN 6): borderline, "
        "neither open nor closed for the bare ion in a static model, since the wall "
        "atoms move about 0.5 Å RMS at room temperature (B = 20 Å²).",
        "closed": f"{where} is narrower than the crystal radius of {ion.symbol} "
        f"({ion.crystal_radius_A:.2f} Å, Shannon 1976, CN 6) by more than "
        f"{BORDERLINE_A:g} Å: in this model the pore cannot pass the ion (a closed gate, "
        "or a model packed too tightly).",
    }[verdict]
    text = text[0].upper() + text[1:]
    margin = borderline_margin_A(r_min, ion)
    if margin < BORDERLINE_A and verdict != "borderline":
        text += (
            f" This is borderline: the narrowest radius is within {margin:.2f} Å of the "
            "ion's radius, less than the thermal motion of the wall atoms (B = 20 Å² "
            "means 0.5 Å RMS), so a flexing pore may well decide otherwise."
        )
    verdicts = {r.verdict for r in rows if r.verdict}
    text += " " + _computed_text(rows, robust, verdicts)
    return text


def _computed_text(rows, robust: bool, verdicts) -> str:
    """What the sensitivity table actually computed, and whether the verdict held."""
    computed = [r for r in rows if r.min_radius_A is not None]
    h_cases = {r.hydrogens for r in computed}
    partial = any("partial" in r.note for r in computed if r.hydrogens == "in")
    if {"in", "out"} <= h_cases:
        hyd = (
            "with the model's partial hydrogens in and out"
            if partial
            else ("with hydrogens in and out")
        )
    elif h_cases == {"out"} and any(r.note == "no hydrogens in the model" for r in rows):
        hyd = "with heavy atoms only (the model has no hydrogens, none were computed)"
    else:
        hyd = "with hydrogens " + "/".join(sorted(h_cases))
    if robust:
        return f"The verdict is the same with every radius set, {hyd}."
    return (
        f"The verdict changes with the radius set or hydrogens ({', '.join(sorted(verdicts))}; "
        f"computed {hyd}): treat it as uncertain."
    )


def sensitivity_rows(walls_atoms, axis, main, ion, hydrogens, rset, profile_kw):
    from poreprobe.checks.hydrogens import hydrogen_coverage

    rows = []
    has_h = bool(walls_atoms.is_hydrogen.any())
    coverage = hydrogen_coverage(walls_atoms)
    partial_note = coverage.describe() if coverage.status == "partial" else ""
    names = list(RADIUS_SETS)
    if rset.name not in names:
        names.insert(0, rset.name)
    for name in names:
        this = rset if name == rset.name else get_radius_set(name)
        for h_label in ("in", "out"):
            if h_label == "in" and not has_h:
                rows.append(
                    SensitivityRow(name, "in", None, None, None, "no hydrogens in the model")
                )
                continue
            use_h = h_label == "in"
            if name == rset.name and use_h == (hydrogens and has_h):
                prof = main
            else:
                atoms = walls_atoms if use_h else walls_atoms.subset(~walls_atoms.is_hydrogen)
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore", QualityWarning)
                    radii_A = atom_radii_A(atoms, this)
                try:
                    prof = radius_profile(atoms, axis, radii_A=radii_A, **profile_kw)
                except PoreNotFoundError:
                    rows.append(SensitivityRow(name, h_label, None, None, None, "no enclosed pore"))
                    continue
            rows.append(
                SensitivityRow(
                    name,
                    h_label,
                    float(prof.min_radius_A),
                    float(prof.min_s_A),
                    classify(prof.min_radius_A, ion),
                    "; ".join(
                        t
                        for t in (
                            "main profile" if prof is main else "",
                            partial_note if use_h else "",
                        )
                        if t
                    ),
                )
            )
    return tuple(rows)
