"""Is this model ready? A readiness report for the residues around the pore.

:func:`check_model` profiles the pore, finds the lining residues
(:mod:`poreprobe.geometry.lining`) and checks the model where it matters for the pore.
Every finding has a severity (``high``, ``medium``, ``low``, ``info``), a code, a
plain-language consequence and the residues concerned.

Scope and checks: see :mod:`poreprobe.checks.model_checks`.

Permeation verdict
------------------
See :mod:`poreprobe.checks.verdict`.

Everything here is an estimate from a model, not a measurement.
"""

from __future__ import annotations

import warnings
from collections.abc import Iterable
from dataclasses import dataclass, field, replace

import numpy as np

from poreprobe._validate import check_positive, check_range
from poreprobe._version import __version__
from poreprobe.bench.ions import get_ion
from poreprobe.checks.hydrogens import hydrogen_coverage
from poreprobe.checks.model_checks import (  # noqa: F401 (SEVERITIES and thresholds re-exported)
    B_FACTOR_SIGMAS,
    NEAR_DISTANCE_A,
    SEVERITIES,
    SYMMETRY_TOLERANCE_A,
    Finding,
    check_b_factors,
    check_chain_breaks,
    check_clashes,
    check_completeness,
    check_contents,
    check_hydrogens,
    check_occupancy,
    check_symmetry,
    pore_region,
    residue_groups,
    sorted_findings,
)
from poreprobe.checks.verdict import (
    PermeationVerdict,
    SensitivityRow,
    borderline_margin_A,
    classify,
    sensitivity_rows,
    verdict_text,
)
from poreprobe.errors import InputError, QualityWarning
from poreprobe.geometry.axis import PoreAxis, find_pore_axis
from poreprobe.geometry.clashes import CLASH_FRACTION
from poreprobe.geometry.lining import (
    CONSTRICTION_RADIUS_A,
    LINING_DISTANCE_A,
    PoreLining,
    pore_lining,
)
from poreprobe.geometry.profile import RadiusProfile, radius_profile
from poreprobe.geometry.symmetry import SubunitDeviation, subunit_deviation
from poreprobe.io.radii import RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import KINDS, Atoms


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
    hydrogen_coverage : str
        ``"none"``, ``"partial"`` or ``"full"`` (:mod:`poreprobe.checks.hydrogens`).
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
    hydrogen_coverage: str = ""

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
            "hydrogen_coverage": self.hydrogen_coverage,
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
        kind = "partial hydrogens" if self.hydrogen_coverage == "partial" else "hydrogens"
        return f"{kind} counted" if self.hydrogens else f"{kind} left out"

    def report_lines(self) -> list[str]:
        """The human-readable report, findings sorted by severity."""
        prof = self.profile
        lines = [
            f"poreprobe {self.version}: readiness report for {self.source} "
            "(model-based estimates, not measurements)",
            f"radius set {prof.radius_set}; {self._hydrogen_text()}; walls: "
            f"{', '.join(self.walls)}; axis {prof.axis.method}",
            f"narrowest: {prof.narrowest_text()}",
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
        :data:`poreprobe.bench.ions.IONS`).
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
        Lining settings (see :func:`poreprobe.geometry.lining.pore_lining`).
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
    region = pore_region(atoms, radii_all, main, lining, near)
    residues = residue_groups(atoms, poly)
    sym = subunit_deviation(atoms.subset(poly))

    findings: list[Finding] = []
    findings += check_completeness(atoms, residues, region)
    findings += check_occupancy(atoms, residues, region, atoms.altloc_policy)
    findings += check_b_factors(atoms, residues, region, sigmas)
    findings += check_chain_breaks(atoms, residues, region)
    findings += check_symmetry(sym, region, sym_tol)
    findings += check_clashes(atoms, radii_all, region, clash_fraction, rset.name)
    findings += check_contents(atoms, radii_all, walls, main, lining_d)
    findings += check_hydrogens(atoms, rset.name)
    if len(np.unique(atoms.chain[poly])) == 1:
        findings.append(
            Finding(
                "info",
                "single-chain",
                "The model has one polymer chain. If the channel is an oligomer, build the "
                "biological assembly first: a single subunit does not enclose the pore.",
            )
        )

    sensitivity = sensitivity_rows(
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
        message=verdict_text(
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
        findings=sorted_findings(findings),
        lining=lining,
        profile=main,
        verdict=verdict,
        sensitivity=sensitivity,
        symmetry=sym,
        walls=walls,
        hydrogens=bool(hydrogens),
        model_has_hydrogens=bool((atoms.is_hydrogen & np.isin(atoms.kind, walls)).any()),
        hydrogen_coverage=hydrogen_coverage(atoms.subset(np.isin(atoms.kind, walls))).status,
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
