"""A screened Coulomb potential on the pore centre line: a crude continuum estimate.

Model
-----
Point charges q_j (e) at x_j in a uniform medium of effective relative permittivity
ε_eff, screened by the bath's mobile ions (Debye-Hückel):

    φ(x) = Σ_j q_j e exp(-κ d_j) / (4 π ε0 ε_eff d_j),   d_j = |x - x_j|

and the energy of an ion of valence z there is ``U = z e φ`` (reported in kJ/mol
and in units of k_B T at 25 °C). The screening constant comes from the bath's
ionic strength I (mol/L) with water's permittivity (Debye-Hückel):

    κ² = 2 N_A e² (1000 I) / (ε0 ε_w k_B T),   λ_D = 1/κ,

ε_w = 78.4 at 25 °C (common practice; value from memory), giving λ_D ≈ 0.96 nm at
0.1 M. Distances shorter than ``min_distance_A`` (1 Å) are raised to it, so a
charge that sits on the line does not give an infinite value.

Effective permittivity
----------------------
Default ``ε_eff = 40``: a charge on a water-filled pore's wall acts on the axis
through water (78.4) and protein (2 to 4), and effective permittivities of 20 to 80
are what continuum studies find for solvent-exposed charge pairs in proteins
(Warshel, Sharma, Kato and Parson 2006, Biochim. Biophys. Acta 1764:1647; citation and
range from memory). The potential scales as 1/ε_eff: halve it and the potential doubles.
Give your own with ``dielectric``.

What this is not
----------------
Not a Poisson-Boltzmann solution. It ignores the membrane's low permittivity (which
focuses the field in the pore), the desolvation (Born) penalty an ion pays in a
narrow pore, the pore's own dielectric boundary and any charge regulation. For
quantitative work, solve the linearised or full Poisson-Boltzmann equation on the
model with its membrane (APBS with a membrane slab, for example).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from poreprobe._validate import as_coords_A, check_choice, check_positive, check_range
from poreprobe._version import __version__
from poreprobe.bench.electrolyte import CONDUCTIVITY_TABLES, MAX_CONC_MM
from poreprobe.errors import InputError

DEFAULT_DIELECTRIC = 40.0
WATER_DIELECTRIC_25C = 78.4
TEMPERATURE_K = 298.15
MIN_DISTANCE_A = 1.0
DEFAULT_ELECTROLYTE = "KCl"
DEFAULT_CONC_MM = 150.0

#: Valences (cation, anion) of the bath electrolytes that poreprobe tabulates.
_VALENCES = {"KCl": (1, -1), "NaCl": (1, -1)}

#: k_B T at 25 °C in kJ/mol (R T, CODATA constants).
KT_KJ_PER_MOL = constants.R * TEMPERATURE_K / 1e3

CAVEAT = (
    "crude continuum estimate: screened Coulomb sum of point charges in a uniform "
    "effective dielectric, not a Poisson-Boltzmann solution; ignores the membrane, the "
    "dielectric boundary of the pore and the ion's desolvation; for quantitative work "
    "solve the Poisson-Boltzmann equation on the model with its membrane (e.g. APBS)"
)


def ionic_strength_M(electrolyte: str = DEFAULT_ELECTROLYTE, conc_mM: float = DEFAULT_CONC_MM):
    """Ionic strength (mol/L) of a bath electrolyte, ``I = ½ Σ c_i z_i²``.

    Parameters
    ----------
    electrolyte : {"KCl", "NaCl"}
        The electrolytes of :mod:`poreprobe.bench.electrolyte`.
    conc_mM : float
        Concentration (mmol/L, > 0, at most 1000).

    Examples
    --------
    >>> ionic_strength_M("KCl", 150)
    0.15
    """
    name = check_choice(electrolyte, "electrolyte", CONDUCTIVITY_TABLES)
    conc = check_positive(conc_mM, "conc_mM")
    if conc > MAX_CONC_MM:
        raise InputError(f"conc_mM must be at most {MAX_CONC_MM:g} mM, got {conc_mM!r}")
    zp, zm = _VALENCES[name]
    c = conc / 1000.0
    n_p, n_m = abs(zm), abs(zp)  # ions per formula unit
    return 0.5 * (n_p * c * zp**2 + n_m * c * zm**2)


def debye_length_nm(
    ionic_strength: float,
    *,
    temperature_K: float = TEMPERATURE_K,
    solvent_dielectric: float = WATER_DIELECTRIC_25C,
) -> float:
    """Debye screening length (nm) of a bath of ionic strength ``ionic_strength`` (mol/L).

    ``λ_D = sqrt(ε0 ε_w k_B T / (2 N_A e² 1000 I))`` with CODATA constants from
    :mod:`scipy.constants`.

    Examples
    --------
    >>> round(debye_length_nm(0.1), 3)
    0.961
    """
    ionic = check_positive(ionic_strength, "ionic_strength")
    temp = check_positive(temperature_K, "temperature_K")
    eps = check_positive(solvent_dielectric, "solvent_dielectric")
    c = constants
    kappa2 = 2 * c.N_A * c.e**2 * 1000.0 * ionic / (c.epsilon_0 * eps * c.k * temp)
    return float(1e9 / np.sqrt(kappa2))


def screened_potential_mV(
    points_A,
    charge_positions_A,
    charges_e,
    *,
    dielectric: float = DEFAULT_DIELECTRIC,
    debye_length_A: float | None = None,
    min_distance_A: float = MIN_DISTANCE_A,
) -> np.ndarray:
    """Screened Coulomb potential (mV) of point charges at points.

    Parameters
    ----------
    points_A : ndarray of shape (n, 3)
        Where to evaluate (Å); rows with NaN give NaN.
    charge_positions_A : ndarray of shape (m, 3)
    charges_e : ndarray of shape (m,)
        Charges in units of the elementary charge.
    dielectric : float
        Effective relative permittivity (>= 1).
    debye_length_A : float, optional
        Screening length (Å); None for no screening.
    min_distance_A : float
        Distances below this are raised to it (Å, >= 0).

    Returns
    -------
    ndarray of shape (n,)
        ``Σ q e exp(-d/λ) / (4 π ε0 ε d)`` in mV.
    """
    pts = np.asarray(points_A, dtype=float)
    if pts.ndim != 2 or pts.shape[1] != 3:
        raise InputError(f"points_A must have shape (n, 3), got {pts.shape}")
    pos = as_coords_A(charge_positions_A, "charge_positions_A") if len(charges_e) else None
    q = np.asarray(charges_e, dtype=float).reshape(-1)
    if pos is not None and pos.shape[0] != q.shape[0]:
        raise InputError(f"{pos.shape[0]} charge positions but {q.shape[0]} charges")
    if not np.isfinite(q).all():
        raise InputError("charges_e must be finite")
    eps = check_range(dielectric, "dielectric", 1.0, 1000.0)
    dmin = check_positive(min_distance_A, "min_distance_A", allow_zero=True)
    lam = None if debye_length_A is None else check_positive(debye_length_A, "debye_length_A")
    out = np.full(len(pts), np.nan)
    ok = np.isfinite(pts).all(axis=1)
    if pos is None or not ok.any():
        out[ok] = 0.0
        return out
    # e / (4 π ε0 ε · 1 Å) in volts
    scale_V = constants.e / (4 * np.pi * constants.epsilon_0 * eps * 1e-10)
    # pairwise distances in blocks of points, so the work arrays stay small; cdist and
    # einsum, not BLAS: these products are too small for threads, which only cost time
    # on a busy machine (a tenfold slowdown was measured with two threads under load)
    from scipy.spatial.distance import cdist

    good = pts[ok]
    total = np.empty(len(good))
    block = max(1, 4_000_000 // max(len(q), 1))
    for start in range(0, len(good), block):
        d = cdist(good[start : start + block], pos)
        if dmin > 0:
            np.maximum(d, dmin, out=d)
        if lam is not None:
            w = np.exp(d * (-1.0 / lam))
            w /= d
        else:
            w = np.reciprocal(d, out=d)
        total[start : start + block] = np.einsum("ij,j->i", w, q)
    out[ok] = total * scale_V * 1e3
    return out


@dataclass(frozen=True)
class AxialPotential:
    """Screened potential and an ion's energy along the pore centre line.

    Attributes
    ----------
    s_A : ndarray of shape (n,)
    potential_mV : ndarray of shape (n,)
    energy_kJ_per_mol, energy_kT : ndarray of shape (n,)
        ``z e φ`` for the ion, per mole and in k_B T at 25 °C.
    ion : str
    ion_charge : int
    dielectric : float
    ionic_strength_M : float
    debye_length_nm : float
    electrolyte : str
    conc_mM : float
    charges : str
        ``"formal"`` (titratable groups at the pH) or ``"partial"`` (per-atom charges
        given by the user).
    n_charges : int
    net_charge_e : float
    min_distance_A : float
    caveat : str
    version : str
    """

    s_A: np.ndarray
    potential_mV: np.ndarray
    energy_kJ_per_mol: np.ndarray
    energy_kT: np.ndarray
    ion: str
    ion_charge: int
    dielectric: float
    ionic_strength_M: float
    debye_length_nm: float
    electrolyte: str
    conc_mM: float
    charges: str
    n_charges: int
    net_charge_e: float
    min_distance_A: float = MIN_DISTANCE_A
    caveat: str = CAVEAT
    version: str = field(default=__version__)

    def __post_init__(self):
        for name in ("s_A", "potential_mV", "energy_kJ_per_mol", "energy_kT"):
            getattr(self, name).setflags(write=False)

    def extreme(self) -> dict:
        """Position and value of the most favourable (lowest) ion energy."""
        e = self.energy_kT
        if not np.isfinite(e).any():
            return {"s_A": None, "energy_kT": None, "potential_mV": None}
        k = int(np.nanargmin(e))
        return {
            "s_A": float(self.s_A[k]),
            "energy_kT": float(e[k]),
            "potential_mV": float(self.potential_mV[k]),
        }

    def to_dict(self) -> dict:
        return {
            "caveat": self.caveat,
            "model": "screened Coulomb (Debye-Hueckel) sum of point charges, uniform "
            "effective dielectric",
            "charges": self.charges,
            "n_charges": self.n_charges,
            "net_charge_e": self.net_charge_e,
            "dielectric": self.dielectric,
            "solvent_dielectric": WATER_DIELECTRIC_25C,
            "temperature_K": TEMPERATURE_K,
            "electrolyte": self.electrolyte,
            "conc_mM": self.conc_mM,
            "ionic_strength_M": self.ionic_strength_M,
            "debye_length_nm": self.debye_length_nm,
            "min_distance_A": self.min_distance_A,
            "ion": self.ion,
            "ion_charge": self.ion_charge,
            "most_favourable": self.extreme(),
            "s_A": "levels.s_A",
            "kT_in_kJ_per_mol": KT_KJ_PER_MOL,
            "potential_mV": self.potential_mV,
            "energy_kT": self.energy_kT,
            "version": self.version,
        }


def ion_energy(potential_mV, ion_charge: int) -> tuple[np.ndarray, np.ndarray]:
    """Energy ``z e φ`` of an ion: (kJ/mol, k_B T at 25 °C)."""
    phi_V = np.asarray(potential_mV, dtype=float) * 1e-3
    joule = ion_charge * constants.e * phi_V
    return joule * constants.N_A / 1e3, joule / (constants.k * TEMPERATURE_K)
