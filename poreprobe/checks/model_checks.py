"""The individual model checks behind the readiness report (:mod:`poreprobe.checks.quality`).

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
    (:data:`poreprobe.io.residues.STANDARD_HEAVY_ATOMS`, the PDB Chemical Component
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
    consensus (:mod:`poreprobe.geometry.symmetry`) above ``symmetry_tolerance_A``
    (default 1.0 Å, our choice: about the coordinate uncertainty of a model at
    3 Å resolution, recalled from memory).
``steric-clash``
    heavy-atom pairs closer than ``clash_fraction`` of their radius sum
    (:mod:`poreprobe.geometry.clashes`, default 0.75); the 100 closest pairs one by one,
    any further ones in one summary finding.
``water-in-pore``, ``ion-in-pore``, ``hetero-in-pore``
    non-polymer atoms inside the pore: when not counted as walls, the atom's
    centre lies within a profile sphere's radius plus the lining distance; when
    counted as walls, the atom lines the pore like a wall atom.
``hydrogens-absent``, ``hydrogens-present``, ``hydrogens-partial``
    what the hydrogens mean for the radius set.
``single-chain``, ``uniform-b-factors``, ``verdict-depends-on-settings``.

Everything here is an estimate from a model, not a measurement.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

import numpy as np
from scipy.spatial import cKDTree

from poreprobe.geometry.clashes import find_clashes
from poreprobe.geometry.lining import (
    lining_contacts,
)
from poreprobe.geometry.symmetry import SubunitDeviation
from poreprobe.io.residues import missing_heavy_atoms, standard_name
from poreprobe.io.structure import Atoms

SEVERITIES = ("high", "medium", "low", "info")
NEAR_DISTANCE_A = 5.0
B_FACTOR_SIGMAS = 3.0
SYMMETRY_TOLERANCE_A = 1.0
PEPTIDE_BREAK_A = 2.0
CA_BREAK_A = 4.2
TERMINAL_CAPS = frozenset({"ACE", "NME", "NH2", "NMA", "FOR", "ETA"})
MAX_CLASH_FINDINGS = 100


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


# ----------------------------------------------------------------------------- helpers


def sorted_findings(findings: Iterable[Finding]) -> tuple[Finding, ...]:
    rank = {s: k for k, s in enumerate(SEVERITIES)}
    return tuple(sorted(findings, key=lambda f: (rank[f.severity], f.code)))


@dataclass
class PoreRegion:
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


def pore_region(atoms, radii_A, profile, lining, near_distance_A) -> PoreRegion:
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
    return PoreRegion(lines=lines, near=near)


def residue_groups(atoms: Atoms, mask: np.ndarray) -> dict[str, np.ndarray]:
    """Residue label -> row indices (in file order), over the rows in ``mask``."""
    labels = atoms.residue_labels()
    idx = np.flatnonzero(mask)
    out: dict[str, list] = {}
    for i, lab in zip(idx, labels[idx], strict=True):
        out.setdefault(str(lab), []).append(int(i))
    return {k: np.array(v) for k, v in out.items()}


# ----------------------------------------------------------------------------- checks


def check_completeness(atoms, residues, region) -> list[Finding]:
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


def check_occupancy(atoms, residues, region, altloc_policy) -> list[Finding]:
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


def check_b_factors(atoms, residues, region, sigmas) -> list[Finding]:
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


def check_chain_breaks(atoms, residues, region) -> list[Finding]:
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


def check_symmetry(sym: SubunitDeviation | None, region, tolerance) -> list[Finding]:
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


def check_clashes(atoms, radii_A, region, fraction, radius_set) -> list[Finding]:
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


def check_contents(atoms, radii_A, walls, profile, lining_distance_A) -> list[Finding]:
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


def check_hydrogens(atoms, radius_set) -> list[Finding]:
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
    res_with_h = residue_groups(atoms, h)
    all_res = residue_groups(atoms, poly & ~atoms.is_hydrogen)
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
    from poreprobe.checks.hydrogens import hydrogen_coverage

    coverage = hydrogen_coverage(atoms)
    if coverage.status == "partial":
        return [
            Finding(
                "medium",
                "hydrogens-partial",
                f"Only some atom types carry hydrogens ({coverage.describe()}): a profile with "
                "them is neither the heavy-atom nor the all-atom answer. Add all hydrogens or "
                "leave them out (--no-hydrogens).",
                (),
                coverage.to_dict(),
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
