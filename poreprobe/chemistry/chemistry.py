"""The chemistry of a pore along its axis: rings, per-level profiles, potential, flags.

:func:`pore_chemistry` takes a model, its radius profile and (optionally) its lining
and returns a :class:`PoreChemistry`:

* **rings** of equivalent lining residues (:mod:`poreprobe.chemistry.rings`), each
  with its level ``s_A``, residue, count, the face it turns to the pore, its net
  charge at the pH (:mod:`poreprobe.chemistry.titration`) and its hydropathy
  (:mod:`poreprobe.chemistry.hydropathy`);
* **per-level profiles** on the profile's planes: ``charge_e`` (sum of the charges of
  the residues lining the plane), ``hydropathy`` (mean scale value of the residues
  lining the plane; a residue that lines it with backbone atoms only counts with the
  glycine value, the backbone's own, our choice) and the polar share of the lining
  atoms, each also smoothed by a running mean over ``smoothing_window_A`` (default
  5 Å, our choice: about one turn of an α helix, which rises 5.4 Å per turn);
* the screened **potential** on the centre line and a chosen ion's energy there
  (:mod:`poreprobe.chemistry.potential`; a crude continuum estimate);
* **dewetting flags** (:mod:`poreprobe.chemistry.dewetting`).

All of it is an estimate from a model; charges are Henderson-Hasselbalch averages of
unperturbed pKa values, not the charge states of this protein.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from poreprobe._validate import check_positive
from poreprobe._version import __version__
from poreprobe.bench.ions import get_ion
from poreprobe.chemistry.dewetting import (
    DEWETTING_LENGTH_A,
    DEWETTING_RADIUS_A,
    POLAR_FRACTION,
    DewettingFlag,
    dewetting_flags,
    polar_fraction_per_plane,
)
from poreprobe.chemistry.dewetting import (
    SOURCE as DEWETTING_SOURCE,
)
from poreprobe.chemistry.hydropathy import DEFAULT_SCALE, get_scale, smooth_profile
from poreprobe.chemistry.potential import (
    DEFAULT_CONC_MM,
    DEFAULT_DIELECTRIC,
    DEFAULT_ELECTROLYTE,
    MIN_DISTANCE_A,
    AxialPotential,
    debye_length_nm,
    ion_energy,
    ionic_strength_M,
    screened_potential_mV,
)
from poreprobe.chemistry.rings import (
    RING_TOLERANCE_A,
    Ring,
    find_rings,
    residue_contacts,
)
from poreprobe.chemistry.titration import (
    DEFAULT_PH,
    DEFAULT_PKA_TABLE,
    TitratableSites,
    titratable_sites,
)
from poreprobe.errors import InputError
from poreprobe.geometry.lining import LINING_DISTANCE_A, PoreLining, lining_contacts
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.io.radii import RADIUS_SETS, RadiusSet, atom_radii_A
from poreprobe.io.structure import Atoms

SMOOTHING_WINDOW_A = 5.0
CAVEAT = (
    "model-based estimates: charges are Henderson-Hasselbalch averages with unperturbed "
    "pKa values, not this protein's charge states; the potential is a crude continuum "
    "estimate, not a Poisson-Boltzmann solution"
)


@dataclass(frozen=True)
class LevelProfiles:
    """Chemistry per plane of the radius profile.

    Attributes
    ----------
    s_A : ndarray of shape (n_planes,)
    charge_e, charge_smoothed_e : ndarray
        Net charge of the residues lining each plane (e; NaN where nothing lines it),
        and its running mean.
    hydropathy, hydropathy_smoothed : ndarray
        Mean scale value of the lining residues, and its running mean.
    polar_fraction : ndarray
        Share of N/O among the heavy atoms lining the plane.
    n_residues : ndarray of int
        Residues lining each plane.
    smoothing_window_A : float
    """

    s_A: np.ndarray
    charge_e: np.ndarray
    charge_smoothed_e: np.ndarray
    hydropathy: np.ndarray
    hydropathy_smoothed: np.ndarray
    polar_fraction: np.ndarray
    n_residues: np.ndarray
    smoothing_window_A: float

    def __post_init__(self):
        for name in (
            "s_A",
            "charge_e",
            "charge_smoothed_e",
            "hydropathy",
            "hydropathy_smoothed",
            "polar_fraction",
            "n_residues",
        ):
            getattr(self, name).setflags(write=False)

    def to_dict(self) -> dict:
        return {
            "smoothing_window_A": self.smoothing_window_A,
            "s_A": self.s_A,
            "charge_e": self.charge_e,
            "charge_smoothed_e": self.charge_smoothed_e,
            "hydropathy": self.hydropathy,
            "hydropathy_smoothed": self.hydropathy_smoothed,
            "polar_fraction": self.polar_fraction,
            "n_residues": self.n_residues,
        }


@dataclass(frozen=True)
class PoreChemistry:
    """Rings, per-level profiles, the screened potential and dewetting flags of a pore.

    Attributes
    ----------
    rings : tuple of Ring
        Entry to exit (increasing s).
    levels : LevelProfiles
    potential : AxialPotential
    dewetting : tuple of DewettingFlag
    sites : TitratableSites
        Every titratable group of the model with its charge.
    pH : float
    pka_table, pka_source : str
    charge_states : dict
        The user's fixed charges.
    hydropathy_scale : str
    hydropathy_unit, hydropathy_source : str
    hydropathy_sign : float
        +1 if larger scale values are more hydrophobic, -1 otherwise.
    settings : dict
        Ring tolerance, lining distance, dewetting thresholds.
    source, version : str
    """

    rings: tuple[Ring, ...]
    levels: LevelProfiles
    potential: AxialPotential
    dewetting: tuple[DewettingFlag, ...]
    sites: TitratableSites
    pH: float
    pka_table: str
    pka_source: str
    charge_states: dict
    hydropathy_scale: str
    hydropathy_unit: str
    hydropathy_source: str
    hydropathy_sign: float
    settings: dict
    source: str = ""
    version: str = field(default=__version__)

    def ring_lines(self) -> list[str]:
        """One line per ring, entry to exit."""
        return [f"  {r.text}" for r in self.rings] or ["  none"]

    def report_lines(self) -> list[str]:
        """Human-readable summary: rings, potential extreme, dewetting flags."""
        pot = self.potential
        best = pot.extreme()
        lines = [
            f"pore chemistry at pH {self.pH:g} (pKa: {self.pka_table}; hydropathy: "
            f"{self.hydropathy_scale}) - {CAVEAT}",
            "rings of lining residues, entry to exit (s, residue, face, net charge, hydropathy):",
            *self.ring_lines(),
        ]
        if best["s_A"] is not None:
            lines.append(
                f"screened potential (dielectric {pot.dielectric:g}, I = "
                f"{pot.ionic_strength_M:g} M, Debye length {pot.debye_length_nm:.2f} nm): "
                f"lowest {pot.ion} energy {best['energy_kT']:+.2f} kT "
                f"({best['potential_mV']:+.1f} mV) at s = {best['s_A']:.1f} Å"
            )
        lines.append(f"  note: {pot.caveat}")
        lines.append(
            f"possibly dewetted (radius <= {self.settings['dewetting_radius_A']:g} Å over >= "
            f"{self.settings['dewetting_length_A']:g} Å, hydrophobic lining; a flag, not a "
            "verdict):"
        )
        lines += [f"  {f.text}" for f in self.dewetting] or ["  none"]
        return lines

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "source": self.source,
            "caveat": CAVEAT,
            "pH": self.pH,
            "pka_table": self.pka_table,
            "pka_source": self.pka_source,
            "charge_states": dict(self.charge_states),
            "hydropathy_scale": {
                "name": self.hydropathy_scale,
                "unit": self.hydropathy_unit,
                "hydrophobic_sign": self.hydropathy_sign,
                "source": self.hydropathy_source,
            },
            "settings": dict(self.settings),
            "rings": [r.to_dict() for r in self.rings],
            "levels": self.levels.to_dict(),
            "potential": self.potential.to_dict(),
            "dewetting": {
                "rule": "enclosed planes with radius <= dewetting_radius_A and at most "
                "polar_fraction N/O among the lining heavy atoms, in runs at least "
                "dewetting_length_A long; a flag for the user's judgement, not a verdict",
                "source": DEWETTING_SOURCE,
                "flags": [f.to_dict() for f in self.dewetting],
            },
            "titratable_sites": self.sites.summary(),
        }


@dataclass(frozen=True)
class LiningContacts:
    """The (plane, atom) lining contacts alone, as :class:`PoreLining` holds them."""

    plane_index: np.ndarray
    atom_index: np.ndarray
    gap_A: np.ndarray
    contact_residue: np.ndarray
    lining_distance_A: float


#: Largest van der Waals radius assumed when preselecting atoms near the pore (Å); no
#: element of the radius sets in use comes near it (common practice).
_RADIUS_BOUND_A = 4.0


def lining_near_pore(
    atoms: Atoms,
    profile: RadiusProfile,
    radii_A=None,
    lining_distance_A=LINING_DISTANCE_A,
    *,
    radii: str | RadiusSet | None = None,
) -> LiningContacts:
    """Lining contacts as :func:`poreprobe.geometry.lining.pore_lining` defines them, fast.

    Only atoms that can reach a profile sphere (inside the cylinder around the axis that
    holds every sphere, widened by the lining distance and a bound on atom radii, and
    within the planes' s range) are searched, so a large model costs little more than
    its pore. Radii: ``radii_A`` (per atom) if given, else the set ``radii``, else the
    profile's named set, looked up for the preselected atoms only.
    """
    distance = check_positive(lining_distance_A, "lining_distance_A", allow_zero=True)
    if radii_A is not None:
        radii_A = np.asarray(radii_A, dtype=float)
        if radii_A.shape != (len(atoms),):
            raise InputError(f"radii_A must have {len(atoms)} values, got {radii_A.shape}")
    elif radii is None:
        if profile.radius_set not in RADIUS_SETS:
            raise InputError(
                f"the profile used radius set {profile.radius_set!r}; pass its radii "
                "(radii= or radii_A=) or the lining"
            )
        radii = profile.radius_set
    radius = np.asarray(profile.radius_A, dtype=float)
    ok = np.isfinite(radius)
    empty = np.empty(0, dtype=np.int64)
    none = LiningContacts(empty, empty, np.empty(0), np.empty(0, dtype=str), distance)
    if not ok.any() or len(atoms) == 0:
        return none
    point, direction = profile.axis.point_A, profile.axis.direction
    c_rel = np.asarray(profile.center_A, dtype=float)[ok] - point
    c_s = c_rel @ direction
    offset = np.linalg.norm(c_rel - c_s[:, None] * direction, axis=1)
    bound = float(radii_A.max()) if radii_A is not None else _RADIUS_BOUND_A
    slack = distance + bound
    reach = float((offset + radius[ok]).max()) + slack
    rel = atoms.coords_A - point
    s_atom = rel @ direction
    radial2 = np.einsum("ij,ij->i", rel, rel) - s_atom**2
    s_lo = float(c_s.min()) - float(radius[ok].max()) - slack
    s_hi = float(c_s.max()) + float(radius[ok].max()) + slack
    near = np.flatnonzero((radial2 <= reach**2) & (s_atom >= s_lo) & (s_atom <= s_hi))
    if near.size == 0:
        return none
    near_atoms = atoms.subset(near)
    near_radii = radii_A[near] if radii_A is not None else atom_radii_A(near_atoms, radii)
    plane, local, gap = lining_contacts(
        near_atoms.coords_A, near_radii, profile.center_A, radius, distance
    )
    ulocal, local_of = np.unique(local, return_inverse=True)
    labels = near_atoms.subset(ulocal).residue_labels().astype(str)[local_of]
    return LiningContacts(plane, near[local], gap, labels, distance)


def centre_line_A(profile: RadiusProfile) -> np.ndarray:
    """Profile sphere centres, or the axis point at s where a plane is open (Å)."""
    s = np.asarray(profile.s_A, dtype=float)
    line = profile.axis.point_A[None, :] + s[:, None] * profile.axis.direction[None, :]
    centre = np.asarray(profile.center_A, dtype=float)
    ok = np.isfinite(centre).all(axis=1)
    line[ok] = centre[ok]
    return line


def pore_chemistry(
    atoms: Atoms,
    profile: RadiusProfile,
    lining: PoreLining | None = None,
    *,
    radii_A: np.ndarray | None = None,
    radii: str | RadiusSet | None = None,
    pH: float = DEFAULT_PH,
    pka_table: str = DEFAULT_PKA_TABLE,
    charge_states: Mapping[str, float] | None = None,
    hydropathy_scale: str = DEFAULT_SCALE,
    smoothing_window_A: float = SMOOTHING_WINDOW_A,
    ring_tolerance_A: float = RING_TOLERANCE_A,
    lining_distance_A: float = LINING_DISTANCE_A,
    dielectric: float = DEFAULT_DIELECTRIC,
    electrolyte: str = DEFAULT_ELECTROLYTE,
    conc_mM: float = DEFAULT_CONC_MM,
    ion: str = "K",
    partial_charges_e: np.ndarray | None = None,
    dewetting_radius_A: float = DEWETTING_RADIUS_A,
    dewetting_length_A: float = DEWETTING_LENGTH_A,
    polar_fraction: float = POLAR_FRACTION,
) -> PoreChemistry:
    """Rings, per-level chemistry, screened potential and dewetting flags of a pore.

    Parameters
    ----------
    atoms : Atoms
        The atoms the profile was computed from (same order).
    profile : RadiusProfile
    lining : PoreLining, optional
        From :func:`poreprobe.geometry.lining.pore_lining` on the same atoms; computed
        here (with ``radii_A`` or the profile's radius set) when not given.
    radii_A : ndarray of shape (n,), optional
        Per-atom radii of the profile, needed only to compute the lining.
    radii : str or RadiusSet, optional
        The profile's radius set instead (looked up for the atoms near the pore only);
        default the profile's named set.
    pH : float
        0 to 14 (default 7.0).
    pka_table : {"grimsley2009", "thurlkill2006"}
    charge_states : mapping, optional
        Fixed charges (e) by ``"HIS"``, ``"GLU71"`` or ``"A:GLU71"``.
    hydropathy_scale : {"kyte-doolittle", "wimley-white"}
    smoothing_window_A : float
        Running-mean window of the per-level profiles (Å, > 0; default 5).
    ring_tolerance_A : float
        Largest level gap inside a ring (Å; default 3).
    lining_distance_A : float
        Lining distance when the lining is computed here (Å; default 1).
    dielectric : float
        Effective relative permittivity of the potential (default 40).
    electrolyte, conc_mM
        Bath for the Debye-Hückel screening (default KCl, 150 mM).
    ion : str
        Ion whose energy is reported (default K).
    partial_charges_e : ndarray of shape (n,), optional
        Per-atom partial charges (e) to use instead of the formal charges of the
        titratable groups.
    dewetting_radius_A, dewetting_length_A, polar_fraction : float
        The dewetting rule (:mod:`poreprobe.chemistry.dewetting`).

    Returns
    -------
    PoreChemistry

    Examples
    --------
    >>> import poreprobe
    >>> from poreprobe.geometry.synthetic import hourglass
    >>> atoms, _, _ = hourglass()
    >>> axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    >>> prof = poreprobe.radius_profile(atoms, axis, step_A=0.5)
    >>> chem = pore_chemistry(atoms, prof)
    >>> chem.potential.charges
    'formal'
    """
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    if not isinstance(profile, RadiusProfile):
        raise InputError(f"profile must be a RadiusProfile, got {type(profile).__name__}")
    window = check_positive(smoothing_window_A, "smoothing_window_A")
    scale = get_scale(hydropathy_scale)
    ion_rec = get_ion(ion)
    ionic = ionic_strength_M(electrolyte, conc_mM)
    if lining is None:
        lining = lining_near_pore(atoms, profile, radii_A, lining_distance_A, radii=radii)
    elif not isinstance(lining, PoreLining | LiningContacts):
        raise InputError(f"lining must be a PoreLining, got {type(lining).__name__}")
    if len(lining.atom_index) and int(np.max(lining.atom_index)) >= len(atoms):
        raise InputError("the lining refers to more atoms than were given; pass the same atoms")
    sites = titratable_sites(atoms, pH=pH, pka_table=pka_table, charge_states=charge_states)
    charge_of = sites.charge_of()

    s = np.asarray(profile.s_A, dtype=float)
    n_planes = len(s)
    contacts = residue_contacts(atoms, lining, profile.radius_A)
    rings = find_rings(
        contacts,
        s,
        ring_tolerance_A=ring_tolerance_A,
        charge_of=charge_of,
        hydropathy_of=scale.values,
    )

    # per-level profiles
    res_charge = np.array([charge_of.get(lab, 0.0) for lab in contacts.label.tolist()])
    res_hydro = np.array([scale.values.get(r, np.nan) for r in contacts.resname.tolist()])
    glycine = scale.values["GLY"]
    pair_res = contacts.pair_residue
    pair_plane = contacts.pair_plane
    pair_hydro = (
        np.where(contacts.pair_side_chain, res_hydro[pair_res], glycine)
        if len(pair_res)
        else np.empty(0)
    )
    n_res = np.bincount(pair_plane, minlength=n_planes)
    charge = np.bincount(pair_plane, weights=res_charge[pair_res], minlength=n_planes)
    ok_h = np.isfinite(pair_hydro)
    h_sum = np.bincount(pair_plane[ok_h], weights=pair_hydro[ok_h], minlength=n_planes)
    h_n = np.bincount(pair_plane[ok_h], minlength=n_planes)
    with np.errstate(invalid="ignore", divide="ignore"):
        hydro = h_sum / h_n
    hydro[h_n == 0] = np.nan
    charge = np.where(n_res > 0, charge, np.nan)
    polar_frac, n_polar, n_heavy = polar_fraction_per_plane(
        atoms, lining.plane_index, lining.atom_index, n_planes
    )
    levels = LevelProfiles(
        s_A=s.copy(),
        charge_e=charge,
        charge_smoothed_e=smooth_profile(s, charge, window),
        hydropathy=hydro,
        hydropathy_smoothed=smooth_profile(s, hydro, window),
        polar_fraction=polar_frac,
        n_residues=n_res.astype(np.int64),
        smoothing_window_A=window,
    )

    # potential on the centre line
    if partial_charges_e is not None:
        q = np.asarray(partial_charges_e, dtype=float).reshape(-1)
        if q.shape != (len(atoms),):
            raise InputError(f"partial_charges_e must have {len(atoms)} values, got {q.shape}")
        positions, kind = atoms.coords_A, "partial"
    else:
        q, positions, kind = np.asarray(sites.charge_e), sites.position_A, "formal"
    lam_nm = debye_length_nm(ionic)
    phi = screened_potential_mV(
        centre_line_A(profile), positions, q, dielectric=dielectric, debye_length_A=10 * lam_nm
    )
    e_kj, e_kt = ion_energy(phi, ion_rec.charge)
    potential = AxialPotential(
        s_A=s.copy(),
        potential_mV=phi,
        energy_kJ_per_mol=e_kj,
        energy_kT=e_kt,
        ion=ion_rec.symbol,
        ion_charge=int(ion_rec.charge),
        dielectric=float(dielectric),
        ionic_strength_M=ionic,
        debye_length_nm=lam_nm,
        electrolyte=str(electrolyte),
        conc_mM=float(conc_mM),
        charges=kind,
        n_charges=int(np.count_nonzero(q)),
        net_charge_e=float(q.sum()),
        min_distance_A=MIN_DISTANCE_A,
    )

    # dewetting flags
    plane_labels: list[list[str]] = [[] for _ in range(n_planes)]
    for p, r in zip(pair_plane.tolist(), pair_res.tolist(), strict=True):
        plane_labels[p].append(contacts.label[r])
    flags = dewetting_flags(
        s,
        profile.radius_A,
        polar_frac,
        plane_labels,
        radius_threshold_A=dewetting_radius_A,
        length_A=dewetting_length_A,
        max_polar_fraction=polar_fraction,
        plane_polar_counts=(n_polar, n_heavy),
    )
    return PoreChemistry(
        rings=rings,
        levels=levels,
        potential=potential,
        dewetting=flags,
        sites=sites,
        pH=sites.pH,
        pka_table=sites.pka_table,
        pka_source=sites.pka_source,
        charge_states=dict(charge_states or {}),
        hydropathy_scale=scale.name,
        hydropathy_unit=scale.unit,
        hydropathy_source=scale.source,
        hydropathy_sign=scale.hydrophobic_sign,
        settings={
            "ring_tolerance_A": float(ring_tolerance_A),
            "lining_distance_A": float(lining.lining_distance_A),
            "smoothing_window_A": window,
            "dewetting_radius_A": float(dewetting_radius_A),
            "dewetting_length_A": float(dewetting_length_A),
            "polar_fraction": float(polar_fraction),
        },
        source=atoms.source,
    )
