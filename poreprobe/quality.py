"""Is this model ready? A readiness report for the residues around the pore.

:func:`check_model` profiles the pore, finds the lining residues
(:mod:`poreprobe.lining`) and checks the model where it matters for the pore.
Every finding has a severity (``high``, ``medium``, ``low``, ``info``), a code, a
plain-language consequence and the residues concerned.

Scope
-----
A residue **lines** the pore when one of its atoms comes within the lining
distance (default 1.0 Å) of a profile sphere's surface; it is **near** the pore
within ``near_distance_A`` (default 5.0 Å: about the length of a side chain, so
a residue whose side chain is missing is still caught through its backbone).
Residue-level checks look at residues that line or are near the pore; a finding
on a lining residue is one step more severe than on a near one.

Checks (codes)
--------------
``missing-side-chain-atoms``, ``missing-backbone-atoms``
    heavy atoms absent compared with the standard residue
    (:data:`poreprobe.residues.STANDARD_HEAVY_ATOMS`, the PDB Chemical Component
    Dictionary's lists).
``nonstandard-residue``
    a polymer residue that is not one of the 20 standard amino acids (terminal
    caps such as ACE and NME excepted).
``alternate-locations``, ``zero-occupancy``, ``partial-occupancy``
    as read from the file (partial occupancy without alternate locations).
``high-b-factor``
    residue mean B more than ``b_factor_sigmas`` robust standard deviations
    (1.4826 x median absolute deviation, common practice) above its chain's
    median (default 3).
``chain-break``
    consecutive residues of a chain whose C-N distance exceeds 2.0 Å (a peptide
    bond is 1.33 Å; common practice), or CA-CA exceeds 4.2 Å when C or N is
    missing (3.8 Å in a trans peptide; common practice), or whose numbering
    jumps, with a flanking residue near the pore.
``asymmetry``
    per-residue deviation of equivalent subunits from their symmetric
    consensus (:mod:`poreprobe.symmetry`) above ``symmetry_tolerance_A``
    (default 1.0 Å, our choice: about the coordinate uncertainty of a model at
    3 Å resolution, recalled from memory).
``steric-clash``
    heavy-atom pairs closer than ``clash_fraction`` of their radius sum
    (:mod:`poreprobe.clashes`, default 0.75); the 100 closest pairs one by one,
    any further ones in one summary finding.
``water-in-pore``, ``ion-in-pore``, ``hetero-in-pore``
    non-polymer atoms inside the pore: when not counted as walls, the atom's
    centre lies within a profile sphere's radius plus the lining distance; when
    counted as walls, the atom lines the pore like a wall atom.
``hydrogens-absent``, ``hydrogens-present``, ``hydrogens-partial``
    what the hydrogens mean for the radius set.
``single-chain``, ``uniform-b-factors``, ``verdict-depends-on-settings``.

Permeation verdict
------------------
The narrowest radius is compared with the chosen ion's crystal radius
(Shannon 1976, CN 6) and hydrated radius (Nightingale 1959), from
:mod:`poreprobe.ions`: ``"hydrated"`` (admits the hydrated ion), ``"dehydrated"``
(admits only the bare ion) or ``"closed"`` (admits neither). The minimum radius
is recomputed with every radius set and with hydrogens in and out (the
sensitivity table); the verdict is called robust when all of them agree, and
borderline when the narrowest radius lies within 0.25 Å of either ion radius
(our choice: less than the thermal motion of wall atoms, whose RMS displacement
``sqrt(B / 8 pi^2)`` is 0.5 Å for B = 20 Å², common practice).

Everything here is an estimate from a model, not a measurement.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable
from dataclasses import dataclass, field, replace

import numpy as np
from scipy.spatial import cKDTree

from poreprobe import __version__
from poreprobe._validate import check_positive, check_range
from poreprobe.axis import PoreAxis, find_pore_axis
from poreprobe.clashes import CLASH_FRACTION, find_clashes
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.ions import Ion, get_ion
from poreprobe.lining import (
    CONSTRICTION_RADIUS_A,
    LINING_DISTANCE_A,
    PoreLining,
    lining_contacts,
    pore_lining,
)
from poreprobe.profile import RadiusProfile, radius_profile
from poreprobe.radii import RADIUS_SETS, RadiusSet, atom_radii_A, get_radius_set
from poreprobe.residues import missing_heavy_atoms, standard_name
from poreprobe.structure import KINDS, Atoms
from poreprobe.symmetry import SubunitDeviation, subunit_deviation

SEVERITIES = ("high", "medium", "low", "info")
NEAR_DISTANCE_A = 5.0
B_FACTOR_SIGMAS = 3.0
SYMMETRY_TOLERANCE_A = 1.0
PEPTIDE_BREAK_A = 2.0
CA_BREAK_A = 4.2
TERMINAL_CAPS = frozenset({"ACE", "NME", "NH2", "NMA", "FOR", "ETA"})
BORDERLINE_A = 0.25
MAX_CLASH_FINDINGS = 100
VERDICTS = ("hydrated", "dehydrated", "closed")


@dataclass(frozen=True)
class Finding:
    """One finding of the readiness report.

    Attributes
    ----------
    severity : str
        ``"high"``, ``"medium"``, ``"low"`` or ``"info"``.
    code : str
        Stable identifier, e.g. ``"missing-side-chain-atoms"``.
    message : str
        What was found and what it means for the pore, in plain language.
    residues : tuple of str
        Residue labels (``"A:LEU12"``) concerned.
    details : dict
        Numbers behind the message (atom names, distances, ...).
    """

    severity: str
    code: str
    message: str
    residues: tuple[str, ...] = ()
    details: dict = field(default_factory=dict)

    def to_dict(self) -> dict:
        return {
            "severity": self.severity,
            "code": self.code,
            "message": self.message,
            "residues": list(self.residues),
            "details": dict(self.details),
        }


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
        From :mod:`poreprobe.ions` (Shannon 1976 CN 6; Nightingale 1959).
    min_radius_A, min_s_A : float
        Narrowest point of the main profile (Å).
    verdict : str
        ``"hydrated"``, ``"dehydrated"`` or ``"closed"``.
    message : str
    robust : bool
        True when every sensitivity row gives the same verdict.
    margin_A : float
        Distance of the narrowest radius from the nearer ion radius (Å); below
        0.25 Å the verdict is called borderline.
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

    @property
    def borderline(self) -> bool:
        """True when the narrowest radius is within 0.25 Å of an ion radius."""
        return self.margin_A < BORDERLINE_A

    def to_dict(self) -> dict:
        return {
            "ion": self.ion,
            "margin_A": self.margin_A,
            "borderline": self.borderline,
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


@dataclass(frozen=True)
class QualityReport:
    """The readiness report of one model.

    Attributes
    ----------
    findings : tuple of Finding
        Sorted by severity (high first).
    lining : PoreLining
        Lining residues and constrictions.
    profile : RadiusProfile
        The main profile (chosen radius set and hydrogens).
    verdict : PermeationVerdict
    sensitivity : tuple of SensitivityRow
    symmetry : SubunitDeviation or None
    walls : tuple of str
        Atom kinds counted as pore walls.
    hydrogens : bool
        Whether hydrogens (if any) were counted in the main profile.
    model_has_hydrogens : bool
        Whether the model's wall atoms include hydrogens at all.
    settings : dict
        Distances, thresholds and fractions used.
    notes : tuple of str
        What was dropped or changed while reading.
    source, version : str
    """

    findings: tuple[Finding, ...]
    lining: PoreLining
    profile: RadiusProfile
    verdict: PermeationVerdict
    sensitivity: tuple[SensitivityRow, ...]
    symmetry: SubunitDeviation | None
    walls: tuple[str, ...]
    hydrogens: bool
    model_has_hydrogens: bool
    settings: dict
    notes: tuple[str, ...] = ()
    source: str = ""
    version: str = field(default=__version__)

    def by_code(self, code: str) -> tuple[Finding, ...]:
        """Findings with one code."""
        return tuple(f for f in self.findings if f.code == code)

    def counts(self) -> dict[str, int]:
        """Number of findings per severity."""
        return {sev: sum(f.severity == sev for f in self.findings) for sev in SEVERITIES}

    def to_dict(self) -> dict:
        prof = self.profile
        return {
            "version": self.version,
            "source": self.source,
            "caveat": "model-based estimates, not measurements",
            "radius_set": prof.radius_set,
            "hydrogens": self.hydrogens,
            "model_has_hydrogens": self.model_has_hydrogens,
            "walls": list(self.walls),
            "settings": dict(self.settings),
            "axis": prof.axis.to_dict(),
            "min_radius_A": prof.min_radius_A,
            "min_s_A": prof.min_s_A,
            "profile": prof.to_dict()["profile"],
            "lining": [r.to_dict() for r in self.lining.residues],
            "constrictions": [c.to_dict() for c in self.lining.constrictions],
            "lining_by_level": self.lining.levels(),
            "findings": [f.to_dict() for f in self.findings],
            "counts": self.counts(),
            "verdict": self.verdict.to_dict(),
            "sensitivity": [r.to_dict() for r in self.sensitivity],
            "symmetry": None if self.symmetry is None else self.symmetry.to_dict(),
            "notes": list(self.notes),
        }

    def _hydrogen_text(self) -> str:
        if not self.model_has_hydrogens:
            return "no hydrogens in the model"
        return "hydrogens counted" if self.hydrogens else "hydrogens left out"

    def report_lines(self) -> list[str]:
        """The human-readable report, findings sorted by severity."""
        prof = self.profile
        lines = [
            f"poreprobe {self.version}: readiness report for {self.source} "
            "(model-based estimates, not measurements)",
            f"radius set {prof.radius_set}; {self._hydrogen_text()}; walls: "
            f"{', '.join(self.walls)}; axis {prof.axis.method}",
            f"narrowest: radius {prof.min_radius_A:.2f} Å at s = {prof.min_s_A:.1f} Å",
            "",
            f"permeation ({self.verdict.ion}): {self.verdict.message}",
            "",
        ]
        counts = self.counts()
        lines.append("findings: " + ", ".join(f"{counts[s]} {s}" for s in SEVERITIES))
        for f in self.findings:
            lines.append(f"  [{f.severity.upper():6}] {f.code}: {f.message}")
        lines += ["", f"constrictions (radius <= {self.lining.constriction_radius_A:g} Å):"]
        lines += [f"  {c.text}" for c in self.lining.constrictions] or ["  none"]
        lines += [
            "",
            f"lining residues (within {self.lining.lining_distance_A:g} Å of the "
            "profile spheres): chain resname resid  s range (Å)  closest (Å)  part",
        ]
        for r in self.lining.residues:
            lines.append(
                f"  {r.chain:>2} {r.resname:>4} {r.resid:>5}{r.icode:1} "
                f"{r.s_min_A:7.1f} to {r.s_max_A:6.1f}  {r.closest_A:6.2f}  {r.part}"
            )
        lines += ["", "sensitivity of the narrowest radius (Å):"]
        for row in self.sensitivity:
            value = "   n/a" if row.min_radius_A is None else f"{row.min_radius_A:6.2f}"
            lines.append(
                f"  {row.radius_set:>10}  hydrogens {row.hydrogens:>3}: {value}"
                + (f"  ({row.verdict})" if row.verdict else "")
                + (f"  {row.note}" if row.note else "")
            )
        lines += [f"note: {n}" for n in self.notes]
        return lines


# ----------------------------------------------------------------------------- helpers


def _sorted(findings: Iterable[Finding]) -> tuple[Finding, ...]:
    rank = {s: k for k, s in enumerate(SEVERITIES)}
    return tuple(sorted(findings, key=lambda f: (rank[f.severity], f.code)))


@dataclass
class _Region:
    """Residues near the pore: label -> (lines?, s_min, s_max)."""

    lines: dict
    near: dict

    def contains(self, label: str) -> bool:
        return label in self.near

    def severity(self, labels, lining_level: str, near_level: str) -> str:
        return lining_level if any(lab in self.lines for lab in labels) else near_level

    def where(self, label: str) -> str:
        if label in self.lines:
            lo, hi = self.lines[label]
            return f"it lines the pore at s = {lo:.1f} to {hi:.1f} Å"
        lo, hi = self.near[label]
        return f"it lies near the pore (s = {lo:.1f} to {hi:.1f} Å)"


def _region(atoms, radii_A, profile, lining, near_distance_A) -> _Region:
    poly = np.flatnonzero(atoms.kind == "polymer")
    plane, atom, _ = lining_contacts(
        atoms.coords_A[poly], radii_A[poly], profile.center_A, profile.radius_A, near_distance_A
    )
    labels = atoms.residue_labels()[poly][atom]
    s = profile.s_A[plane]
    near = {}
    if len(labels):
        uniq, inverse = np.unique(labels, return_inverse=True)
        lo = np.full(len(uniq), np.inf)
        hi = np.full(len(uniq), -np.inf)
        np.minimum.at(lo, inverse, s)
        np.maximum.at(hi, inverse, s)
        first = np.full(len(uniq), len(labels))
        np.minimum.at(first, inverse, np.arange(len(labels)))
        for j in np.argsort(first):
            near[str(uniq[j])] = (float(lo[j]), float(hi[j]))
    lines = {r.label: (r.s_min_A, r.s_max_A) for r in lining.residues}
    for lab, span in lines.items():
        near.setdefault(lab, span)
    return _Region(lines=lines, near=near)


def _residue_groups(atoms: Atoms, mask: np.ndarray) -> dict[str, np.ndarray]:
    """Residue label -> row indices (in file order), over the rows in ``mask``."""
    labels = atoms.residue_labels()
    idx = np.flatnonzero(mask)
    out: dict[str, list] = {}
    for i, lab in zip(idx, labels[idx], strict=True):
        out.setdefault(str(lab), []).append(int(i))
    return {k: np.array(v) for k, v in out.items()}


# ----------------------------------------------------------------------------- checks


def _check_completeness(atoms, residues, region) -> list[Finding]:
    out = []
    for label, rows in residues.items():
        if not region.contains(label):
            continue
        resname = str(atoms.resname[rows[0]])
        if standard_name(resname) is None:
            if resname.upper() in TERMINAL_CAPS:
                continue
            out.append(
                Finding(
                    region.severity([label], "medium", "low"),
                    "nonstandard-residue",
                    f"{label} is a non-standard residue ({resname}); {region.where(label)}. Its "
                    "atoms get element radii only and its completeness cannot be checked against "
                    "a standard residue: check it by hand.",
                    (label,),
                    {"resname": resname},
                )
            )
            continue
        heavy = rows[~atoms.is_hydrogen[rows]]
        backbone, side = missing_heavy_atoms(resname, atoms.name[heavy])
        if side:
            out.append(
                Finding(
                    region.severity([label], "high", "medium"),
                    "missing-side-chain-atoms",
                    f"{label} lacks side-chain atoms {', '.join(side)} of the standard "
                    f"{standard_name(resname)}; {region.where(label)}. A truncated side chain "
                    "makes the pore look wider than it is: the radius here is an upper bound "
                    "until the side chain is modelled.",
                    (label,),
                    {"missing": list(side)},
                )
            )
        if backbone:
            out.append(
                Finding(
                    region.severity([label], "high", "medium"),
                    "missing-backbone-atoms",
                    f"{label} lacks backbone atoms {', '.join(backbone)}; {region.where(label)}. "
                    "The wall here is incomplete, so the pore may look wider than it is.",
                    (label,),
                    {"missing": list(backbone)},
                )
            )
    return out


def _check_occupancy(atoms, residues, region, altloc_policy) -> list[Finding]:
    out = []
    for label, rows in residues.items():
        if not region.contains(label):
            continue
        alt = atoms.altloc[rows]
        if (alt != "").any():
            letters = sorted(set(alt[alt != ""].tolist()))
            names = atoms.name[rows][alt != ""].tolist()
            out.append(
                Finding(
                    region.severity([label], "medium", "low"),
                    "alternate-locations",
                    f"{label} has alternate conformations (atoms {', '.join(names[:6])}"
                    f"{' ...' if len(names) > 6 else ''}; kept altloc {', '.join(letters)} by the "
                    f"'{altloc_policy}' policy); {region.where(label)}. The radius here depends on "
                    "which conformation is real: compare the profiles of each altloc.",
                    (label,),
                    {"atoms": names, "kept_altlocs": letters, "policy": altloc_policy},
                )
            )
        occ = atoms.occupancy[rows]
        plain = alt == ""
        zero = plain & (occ <= 0.0)
        if zero.any():
            names = atoms.name[rows][zero].tolist()
            out.append(
                Finding(
                    region.severity([label], "high", "medium"),
                    "zero-occupancy",
                    f"{label}: atoms {', '.join(names)} have zero occupancy; "
                    f"{region.where(label)}. They were placed without support from the data, so "
                    "the wall they form here is a guess.",
                    (label,),
                    {"atoms": names},
                )
            )
        partial = plain & (occ > 0.0) & (occ < 1.0)
        if partial.any():
            names = atoms.name[rows][partial].tolist()
            out.append(
                Finding(
                    region.severity([label], "medium", "low"),
                    "partial-occupancy",
                    f"{label}: atoms {', '.join(names)} have occupancy "
                    f"{occ[partial].min():.2f}-{occ[partial].max():.2f} without alternate "
                    f"conformations; {region.where(label)}. The wall here is only partly supported "
                    "by the data.",
                    (label,),
                    {"atoms": names, "occupancy": occ[partial].tolist()},
                )
            )
    return out


def _check_b_factors(atoms, residues, region, sigmas) -> list[Finding]:
    out = []
    heavy_poly = (atoms.kind == "polymer") & ~atoms.is_hydrogen
    b_all = atoms.b_factor[heavy_poly]
    if len(b_all) and np.ptp(b_all) == 0:
        return [
            Finding(
                "info",
                "uniform-b-factors",
                f"All polymer atoms have the same B-factor ({b_all[0]:g} Å²), so local "
                "model quality could not be judged from B-factors (predicted models "
                "often store a confidence score in this column instead).",
            )
        ]
    stats = {}
    for ch in np.unique(atoms.chain[heavy_poly]):
        b = atoms.b_factor[heavy_poly & (atoms.chain == ch)]
        med = float(np.median(b))
        spread = max(1.4826 * float(np.median(np.abs(b - med))), 0.05 * abs(med), 1.0)
        stats[str(ch)] = (med, spread)
    for label, rows in residues.items():
        if not region.contains(label):
            continue
        heavy = rows[~atoms.is_hydrogen[rows]]
        if not len(heavy):
            continue
        ch = str(atoms.chain[heavy[0]])
        med, spread = stats[ch]
        b_res = float(atoms.b_factor[heavy].mean())
        if b_res > med + sigmas * spread:
            out.append(
                Finding(
                    region.severity([label], "medium", "low"),
                    "high-b-factor",
                    f"{label}: mean B-factor {b_res:.0f} Å², far above chain {ch}'s median "
                    f"{med:.0f} Å² (more than {sigmas:g} robust SDs); {region.where(label)}. This "
                    "part of the model is poorly determined, so the radius here is uncertain.",
                    (label,),
                    {"b_factor_A2": b_res, "chain_median_A2": med, "robust_sd_A2": spread},
                )
            )
    return out


def _check_chain_breaks(atoms, residues, region) -> list[Finding]:
    out = []
    by_chain: dict[str, list] = {}
    for label, rows in residues.items():
        by_chain.setdefault(str(atoms.chain[rows[0]]), []).append((label, rows))
    for ch, items in by_chain.items():
        for (lab1, r1), (lab2, r2) in zip(items[:-1], items[1:], strict=True):
            n1 = dict(zip(atoms.name[r1].tolist(), r1, strict=True))
            n2 = dict(zip(atoms.name[r2].tolist(), r2, strict=True))
            gap = int(atoms.resid[r2[0]] - atoms.resid[r1[0]])
            if "C" in n1 and "N" in n2:
                dist = float(np.linalg.norm(atoms.coords_A[n1["C"]] - atoms.coords_A[n2["N"]]))
                broken, what = dist > PEPTIDE_BREAK_A, f"C-N {dist:.1f} Å"
            elif "CA" in n1 and "CA" in n2:
                dist = float(np.linalg.norm(atoms.coords_A[n1["CA"]] - atoms.coords_A[n2["CA"]]))
                broken, what = dist > CA_BREAK_A, f"CA-CA {dist:.1f} Å"
            else:
                dist, broken, what = float("nan"), gap > 1, "backbone atoms missing"
            if not broken or not (region.contains(lab1) or region.contains(lab2)):
                continue
            missing = max(gap - 1, 0)
            count = (
                f"{missing} residue{'s' if missing != 1 else ''} missing by numbering"
                if missing
                else "no residue number skipped"
            )
            out.append(
                Finding(
                    region.severity([lab1, lab2], "high", "medium"),
                    "chain-break",
                    f"chain {ch} is broken between {lab1} and {lab2} ({count}; {what}) near the "
                    "pore. Missing residues there may line or narrow the pore in reality, so the "
                    "profile nearby may be too wide.",
                    (lab1, lab2),
                    {"missing_by_numbering": missing, "distance_A": dist},
                )
            )
    return out


def _check_symmetry(sym: SubunitDeviation | None, region, tolerance) -> list[Finding]:
    if sym is None:
        return []
    out = []
    for k, chain in enumerate(sym.chains):
        labels = [
            lab
            for lab, dev in zip(sym.residue_labels[k], sym.deviation_A[k], strict=True)
            if region.contains(lab) and np.isfinite(dev) and dev > tolerance
        ]
        if not labels:
            continue
        dev = sym.by_label()
        worst = max(dev[lab] for lab in labels)
        out.append(
            Finding(
                region.severity(labels, "medium", "low"),
                "asymmetry",
                f"chain {chain} deviates from the {sym.n_fold}-fold symmetric consensus of chains "
                f"{', '.join(sym.chains)} by up to {worst:.1f} Å at {len(labels)} residue"
                f"{'s' if len(labels) != 1 else ''} around the pore ({', '.join(labels[:5])}"
                f"{' ...' if len(labels) > 5 else ''}). The pore is not symmetric there: one "
                "subunit may set the narrowest point. Check whether this is real or a modelling "
                "error.",
                tuple(labels),
                {"deviation_A": {lab: dev[lab] for lab in labels}},
            )
        )
    return out


def _check_clashes(atoms, radii_A, region, fraction, radius_set) -> list[Finding]:
    labels = atoms.residue_labels()
    in_region = np.isin(labels, list(region.near))
    out = []
    clashes = find_clashes(atoms, radii_A, clash_fraction=fraction, only=np.flatnonzero(in_region))
    if len(clashes) > MAX_CLASH_FINDINGS:
        rest = clashes[MAX_CLASH_FINDINGS:]
        res = tuple(dict.fromkeys(str(labels[k]) for c in rest for k in (c.atom_i, c.atom_j)))
        out.append(
            Finding(
                region.severity(res, "high", "medium"),
                "steric-clash",
                f"{len(rest)} further clashing atom pairs around the pore (beyond the "
                f"{MAX_CLASH_FINDINGS} listed one by one): the model is badly packed here, so "
                "its pore radii mean little until it is refined.",
                res,
                {"further_pairs": len(rest)},
            )
        )
        clashes = clashes[:MAX_CLASH_FINDINGS]
    for clash in clashes:
        res = tuple(dict.fromkeys([str(labels[clash.atom_i]), str(labels[clash.atom_j])]))
        out.append(
            Finding(
                region.severity(res, "high", "medium"),
                "steric-clash",
                f"{clash.labels[0]} and {clash.labels[1]} are {clash.distance_A:.2f} Å apart, "
                f"{clash.fraction:.0%} of the sum of their van der Waals radii "
                f"({clash.radius_sum_A:.2f} Å, {radius_set}). At least one of them is misplaced, "
                "so the wall here is unreliable.",
                res,
                clash.to_dict(),
            )
        )
    return out


_CONTENT_TEXT = {
    "water": (
        "water-in-pore",
        "low",
        "water molecule",
        "Ordered water in a pore can be part of the permeation pathway.",
    ),
    "ion": ("ion-in-pore", "low", "ion", "An ion bound in the pore often marks a binding site."),
    "hetero": (
        "hetero-in-pore",
        "medium",
        "hetero group",
        "It may be a blocker, lipid, detergent or ligand: if it belongs there, the "
        "pore is narrower than the protein alone suggests.",
    ),
}


def _check_contents(atoms, radii_A, walls, profile, lining_distance_A) -> list[Finding]:
    out = []
    ok = np.flatnonzero(np.isfinite(profile.radius_A))
    if not len(ok):
        return out
    centres, radius = profile.center_A[ok], profile.radius_A[ok]
    labels = atoms.residue_labels()
    s_all = profile.axis.s_A(atoms.coords_A)
    tree = cKDTree(centres)
    reach = float(radius.max()) + lining_distance_A + float(radii_A.max())
    for kind, (code, severity, noun, meaning) in _CONTENT_TEXT.items():
        rows = np.flatnonzero(atoms.kind == kind)
        if not len(rows):
            continue
        # cheap filter on the nearest sphere centre, then the exact union-of-spheres test
        dist, _ = tree.query(atoms.coords_A[rows])
        rows = rows[dist <= reach]
        if not len(rows):
            continue
        counted = kind in walls
        # not counted: centre inside a sphere grown by the lining distance; counted as
        # walls: the atom lines the pore like any wall atom
        own = radii_A[rows, None] if counted else 0.0
        d = np.linalg.norm(atoms.coords_A[rows, None, :] - centres[None], axis=2)
        inside = (d - own <= radius[None] + lining_distance_A).any(1)
        if not inside.any():
            continue
        found = tuple(dict.fromkeys(labels[rows[inside]].tolist()))
        s_in = s_all[rows[inside]]
        how = (
            "They are counted as pore walls, so the radius there is measured past them."
            if counted
            else f"They are not counted as pore walls (count them with walls including "
            f"'{kind}', or --keep-{'hetero' if kind == 'hetero' else kind + 's'})."
        )
        out.append(
            Finding(
                severity,
                code,
                f"{len(found)} {noun}{'s' if len(found) != 1 else ''} inside the pore at s = "
                f"{s_in.min():.1f} to {s_in.max():.1f} Å ({', '.join(found[:6])}"
                f"{' ...' if len(found) > 6 else ''}). {meaning} {how}",
                found,
                {"counted_as_walls": counted, "s_A": sorted(set(np.round(s_in, 2).tolist()))},
            )
        )
    return out


def _check_hydrogens(atoms, radius_set) -> list[Finding]:
    poly = atoms.kind == "polymer"
    h = atoms.is_hydrogen & poly
    if not h.any():
        return [
            Finding(
                "info",
                "hydrogens-absent",
                f"The model has no hydrogens. The radius set ({radius_set}) gives radii of "
                "explicit atoms, so without hydrogens the pore looks wider than it would with "
                "them (by up to several tenths of an Å next to CH2 and CH3 groups). Add hydrogens "
                "before comparing with all-atom simulations; the sensitivity table shows the "
                "radius set's effect.",
            )
        ]
    res_with_h = _residue_groups(atoms, h)
    all_res = _residue_groups(atoms, poly & ~atoms.is_hydrogen)
    lacking = [
        lab
        for lab in all_res
        if lab not in res_with_h and str(atoms.resname[all_res[lab][0]]) != "PRO"
    ]
    if len(lacking) > 0.1 * len(all_res):
        return [
            Finding(
                "medium",
                "hydrogens-partial",
                f"Only some residues carry hydrogens ({len(all_res) - len(lacking)} of "
                f"{len(all_res)}): the profile mixes walls with and without hydrogens. Add "
                "hydrogens everywhere or leave them all out (--no-hydrogens).",
                tuple(lacking[:20]),
                {"residues_without_hydrogens": len(lacking)},
            )
        ]
    return [
        Finding(
            "info",
            "hydrogens-present",
            f"The model has hydrogens ({int(h.sum())} of {int(poly.sum())} polymer atoms) and the "
            f"profile counts them with the {radius_set} radii; a profile of the same model "
            "without hydrogens is wider. The sensitivity table shows both.",
        )
    ]


# ----------------------------------------------------------------------------- verdict


def classify(min_radius_A: float, ion: Ion) -> str:
    """``"hydrated"``, ``"dehydrated"`` or ``"closed"`` for a narrowest radius and an ion."""
    if not np.isfinite(min_radius_A):
        return "hydrated"
    if min_radius_A >= ion.hydrated_radius_A:
        return "hydrated"
    if min_radius_A >= ion.crystal_radius_A:
        return "dehydrated"
    return "closed"


def borderline_margin_A(min_radius_A: float, ion: Ion) -> float:  # noqa: N802 (unit suffix)
    """Distance (Å) from the narrowest radius to the nearer of the ion's two radii."""
    return float(
        min(abs(min_radius_A - ion.crystal_radius_A), abs(min_radius_A - ion.hydrated_radius_A))
    )


def _verdict_text(verdict, ion, r_min, s_min, robust, rows) -> str:
    where = f"the narrowest point (radius {r_min:.2f} Å at s = {s_min:.1f} Å)"
    text = {
        "hydrated": f"{where} admits a {ion.symbol} ion with its hydration shell (hydrated "
        f"radius {ion.hydrated_radius_A:.2f} Å, Nightingale 1959).",
        "dehydrated": f"{where} admits a bare {ion.symbol} ion (crystal radius "
        f"{ion.crystal_radius_A:.2f} Å, Shannon 1976, CN 6) but not the hydrated "
        f"ion ({ion.hydrated_radius_A:.2f} Å): the ion would have to shed water "
        "here.",
        "closed": f"{where} is narrower than the crystal radius of {ion.symbol} "
        f"({ion.crystal_radius_A:.2f} Å, Shannon 1976, CN 6): in this model the "
        "pore cannot pass the ion (a closed gate, or a model packed too tightly).",
    }[verdict]
    text = text[0].upper() + text[1:]
    margin = borderline_margin_A(r_min, ion)
    if margin < BORDERLINE_A:
        text += (
            f" This is borderline: the narrowest radius is within {margin:.2f} Å of the "
            "ion's radius, less than the thermal motion of the wall atoms (B = 20 Å² "
            "means 0.5 Å RMS), so a flexing pore may well decide otherwise."
        )
    verdicts = {r.verdict for r in rows if r.verdict}
    if robust:
        text += " The verdict is the same with every radius set and with hydrogens in and out."
    else:
        text += (
            " The verdict changes with the radius set or hydrogens ("
            + ", ".join(sorted(verdicts))
            + "): treat it as uncertain."
        )
    return text


def _sensitivity(walls_atoms, axis, main, ion, hydrogens, rset, profile_kw):
    rows = []
    has_h = bool(walls_atoms.is_hydrogen.any())
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
                    "main profile" if prof is main else "",
                )
            )
    return tuple(rows)


# ----------------------------------------------------------------------------- main entry


def check_model(
    atoms: Atoms,
    *,
    axis: PoreAxis | None = None,
    ion: str = "K",
    radii: str | RadiusSet = "bondi",
    walls: Iterable[str] = ("polymer",),
    hydrogens: bool = True,
    step_A: float = 0.2,
    margin_A: float = 2.0,
    max_radius_A: float = 20.0,
    lining_distance_A: float = LINING_DISTANCE_A,
    near_distance_A: float = NEAR_DISTANCE_A,
    constriction_radius_A: float = CONSTRICTION_RADIUS_A,
    clash_fraction: float = CLASH_FRACTION,
    b_factor_sigmas: float = B_FACTOR_SIGMAS,
    symmetry_tolerance_A: float = SYMMETRY_TOLERANCE_A,
    warn: bool = True,
) -> QualityReport:
    """Readiness report of a channel model around its pore.

    Parameters
    ----------
    atoms : Atoms
        The model, ideally read with waters, ions and hetero groups kept
        (``read_structure(path, waters=True, ions=True, hetero=True)``) so that
        they can be found inside the pore.
    axis : PoreAxis, optional
        Pore axis; default :func:`poreprobe.find_pore_axis` on the wall atoms.
    ion : str
        Ion for the permeation verdict (``"K"``, ``"Na"``, ``"Cl-"``, ...; see
        :data:`poreprobe.ions.IONS`).
    radii : str or RadiusSet
        Radius set of the main profile (default ``"bondi"``).
    walls : iterable of str
        Atom kinds counted as pore walls: ``"polymer"`` (required) plus any of
        ``"hetero"``, ``"ion"``, ``"water"``.
    hydrogens : bool
        Count hydrogens (when present) in the main profile.
    step_A, margin_A, max_radius_A : float
        Profile settings (see :func:`poreprobe.radius_profile`).
    lining_distance_A, constriction_radius_A : float
        Lining settings (see :func:`poreprobe.lining.pore_lining`).
    near_distance_A : float
        Residues within this distance of the profile spheres are checked (Å).
    clash_fraction : float
        Clash threshold as a fraction of the radius sum (0.1-1).
    b_factor_sigmas : float
        B-factor outlier threshold in robust standard deviations (> 0).
    symmetry_tolerance_A : float
        Largest per-residue deviation from the symmetric consensus not reported (Å).
    warn : bool
        Emit one :class:`QualityWarning` when high-severity findings exist.

    Returns
    -------
    QualityReport

    Raises
    ------
    InputError
        Bad settings, an unknown ion or kind, or a model without polymer atoms.
    PoreNotFoundError
        If the main profile finds no enclosed pore.
    """
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    ion_rec = get_ion(ion)
    rset = get_radius_set(radii)
    walls = tuple(
        dict.fromkeys(str(w).lower() for w in ([walls] if isinstance(walls, str) else walls))
    )
    for w in walls:
        if w not in KINDS:
            raise InputError(f"walls must be kinds among {', '.join(KINDS)}; got {w!r}")
    if "polymer" not in walls:
        raise InputError(f"walls must include 'polymer', got {walls}")
    near = check_positive(near_distance_A, "near_distance_A")
    lining_d = check_positive(lining_distance_A, "lining_distance_A", allow_zero=True)
    if near < lining_d:
        raise InputError(f"near_distance_A ({near}) must be >= lining_distance_A ({lining_d})")
    sigmas = check_positive(b_factor_sigmas, "b_factor_sigmas")
    sym_tol = check_positive(symmetry_tolerance_A, "symmetry_tolerance_A")
    check_range(clash_fraction, "clash_fraction", 0.1, 1.0)
    poly = atoms.kind == "polymer"
    if not poly.any():
        raise InputError(f"{atoms.source or 'the model'} holds no polymer atoms to check")

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", QualityWarning)
        radii_all = atom_radii_A(atoms, rset)
    for w in caught:  # re-emit the radius fallbacks once, from here
        warnings.warn(str(w.message), QualityWarning, stacklevel=2)
    wall_mask = np.isin(atoms.kind, walls)
    if not hydrogens:
        wall_mask &= ~atoms.is_hydrogen
    walls_atoms = atoms.subset(wall_mask)
    radii_walls = radii_all[wall_mask]
    if axis is None:
        axis = find_pore_axis(walls_atoms, radii_A=radii_walls)
    profile_kw = {"step_A": step_A, "margin_A": margin_A, "max_radius_A": max_radius_A}
    main = radius_profile(walls_atoms, axis, radii_A=radii_walls, **profile_kw)
    main = replace(main, radius_set=rset.name)
    profile_kw["s_range_A"] = (float(main.s_A[0]), float(main.s_A[-1]))
    lining = pore_lining(
        walls_atoms,
        main,
        radii_A=radii_walls,
        lining_distance_A=lining_d,
        constriction_radius_A=constriction_radius_A,
    )
    region = _region(atoms, radii_all, main, lining, near)
    residues = _residue_groups(atoms, poly)
    sym = subunit_deviation(atoms.subset(poly))

    findings: list[Finding] = []
    findings += _check_completeness(atoms, residues, region)
    findings += _check_occupancy(atoms, residues, region, atoms.altloc_policy)
    findings += _check_b_factors(atoms, residues, region, sigmas)
    findings += _check_chain_breaks(atoms, residues, region)
    findings += _check_symmetry(sym, region, sym_tol)
    findings += _check_clashes(atoms, radii_all, region, clash_fraction, rset.name)
    findings += _check_contents(atoms, radii_all, walls, main, lining_d)
    findings += _check_hydrogens(atoms, rset.name)
    if len(np.unique(atoms.chain[poly])) == 1:
        findings.append(
            Finding(
                "info",
                "single-chain",
                "The model has one polymer chain. If the channel is an oligomer, build the "
                "biological assembly first: a single subunit does not enclose the pore.",
            )
        )

    sensitivity = _sensitivity(
        atoms.subset(np.isin(atoms.kind, walls)), axis, main, ion_rec, hydrogens, rset, profile_kw
    )
    verdict_code = classify(main.min_radius_A, ion_rec)
    robust = all(r.verdict == verdict_code for r in sensitivity if r.verdict is not None)
    verdict = PermeationVerdict(
        ion=ion_rec.symbol,
        crystal_radius_A=ion_rec.crystal_radius_A,
        hydrated_radius_A=ion_rec.hydrated_radius_A,
        min_radius_A=float(main.min_radius_A),
        min_s_A=float(main.min_s_A),
        verdict=verdict_code,
        message=_verdict_text(
            verdict_code, ion_rec, main.min_radius_A, main.min_s_A, robust, sensitivity
        ),
        robust=robust,
        margin_A=borderline_margin_A(main.min_radius_A, ion_rec),
    )
    if not robust:
        findings.append(
            Finding(
                "medium",
                "verdict-depends-on-settings",
                f"The permeation verdict for {ion_rec.symbol} changes with the radius set or with "
                "hydrogens (see the sensitivity table): the narrowest point is too close to the "
                "ion's radius for this model to decide.",
                (),
                {r.radius_set + "/H " + r.hydrogens: r.verdict for r in sensitivity},
            )
        )

    report = QualityReport(
        findings=_sorted(findings),
        lining=lining,
        profile=main,
        verdict=verdict,
        sensitivity=sensitivity,
        symmetry=sym,
        walls=walls,
        hydrogens=bool(hydrogens),
        model_has_hydrogens=bool((atoms.is_hydrogen & np.isin(atoms.kind, walls)).any()),
        settings={
            "lining_distance_A": lining_d,
            "near_distance_A": near,
            "constriction_radius_A": float(constriction_radius_A),
            "clash_fraction": float(clash_fraction),
            "b_factor_sigmas": sigmas,
            "symmetry_tolerance_A": sym_tol,
            "step_A": float(step_A),
            "margin_A": float(margin_A),
            "max_radius_A": float(max_radius_A),
        },
        notes=tuple(atoms.notes),
        source=atoms.source,
    )
    high = report.counts()["high"]
    if warn and high:
        codes = sorted({f.code for f in report.findings if f.severity == "high"})
        warnings.warn(
            f"{atoms.source or 'model'}: {high} high-severity finding"
            f"{'s' if high != 1 else ''} near the pore ({', '.join(codes)})",
            QualityWarning,
            stacklevel=2,
        )
    return report
