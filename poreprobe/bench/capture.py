"""Diffusion-limited capture radius implied by a measured single-channel current.

Model
-----
When the current through an open channel no longer grows with voltage, ions are
taken up as fast as diffusion brings them to the pore mouth. Treat the mouth as a
perfect absorber of radius a on an insulating (reflecting) membrane in a bath of
concentration c. The steady diffusive flux is

    J = g · D · a · c        (mol s⁻¹)

with the geometry factor g = 2π for a hemisphere on the wall (half of
Smoluchowski's 4π for a sphere in open solution; the default) or g = 4 for a flat
disk in the wall (Berg and Purcell 1977, Biophys. J. 20:193). The current is
I = |z| F J, so the **capture radius** implied by a diffusion-limited current is

    r_c = I / (g · |z| · F · D · c)

Units: I in A (1 pA = 1e-12 A), c in mol m⁻³ (1 mM = 1 mol m⁻³), D in m² s⁻¹,
r_c in m (1 Å = 1e-10 m). F is the Faraday constant from ``scipy.constants``
(CODATA). r_c is a model estimate, not a measured size: it assumes steady-state,
purely diffusive access from one side and no electrostatic focusing.

Uncertainty
-----------
Inputs carry standard uncertainties (SD, or SEM for the uncertainty of a mean).
They are propagated to first order (relative variances add:
``(σ_r/r)² = (σ_I/I)² + (σ_c/c)² + (σ_D/D)²``) and by Monte Carlo with a fixed
seed (independent normal draws; draws with a non-positive I, c or D are
rejected and counted). Both are reported; a warning says when they disagree.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, QualityWarning

#: Geometry factor g in J = g D a c, by absorber shape.
GEOMETRY_FACTORS: dict[str, float] = {"hemisphere": 2.0 * math.pi, "disk": 4.0}
DEFAULT_GEOMETRY = "hemisphere"
DEFAULT_MC_SAMPLES = 100_000
DEFAULT_SEED = 0
#: Relative difference between first-order and Monte Carlo SDs that triggers a warning.
SD_DISAGREEMENT_WARN = 0.10

FARADAY_C_PER_MOL = constants.physical_constants["Faraday constant"][0]


# --- units -----------------------------------------------------------------------------


def pA_to_A(current_pA):
    """Picoampere to ampere."""
    return np.asarray(current_pA, dtype=float) * constants.pico


def A_to_pA(current_A):
    """Ampere to picoampere."""
    return np.asarray(current_A, dtype=float) / constants.pico


def mM_to_mol_per_m3(conc_mM):
    """Millimolar (mmol L⁻¹) to mol m⁻³: 1 mM = 1e-3 mol / 1e-3 m³ = 1 mol m⁻³."""
    return np.asarray(conc_mM, dtype=float) * (constants.milli / constants.liter)


def mol_per_m3_to_mM(conc_mol_per_m3):
    """mol m⁻³ to millimolar."""
    return np.asarray(conc_mol_per_m3, dtype=float) / (constants.milli / constants.liter)


def angstrom_to_m(length_A):
    """Ångström to metre."""
    return np.asarray(length_A, dtype=float) * constants.angstrom


def m_to_angstrom(length_m):
    """Metre to Ångström."""
    return np.asarray(length_m, dtype=float) / constants.angstrom


# --- the formula -----------------------------------------------------------------------


def geometry_factor(geometry: str = DEFAULT_GEOMETRY) -> float:
    """g for ``"hemisphere"`` (2π) or ``"disk"`` (4)."""
    return GEOMETRY_FACTORS[check_choice(geometry, "geometry", GEOMETRY_FACTORS)]


def _check_charge(charge) -> int:
    z = check_int(charge, "charge")
    if z == 0:
        raise InputError("charge must be a non-zero whole number, got 0")
    return z


def diffusion_limited_current_pA(
    radius_A: float,
    diffusion_m2_per_s: float,
    conc_mM: float,
    *,
    charge: int = 1,
    geometry: str = DEFAULT_GEOMETRY,
) -> float:
    """Current (pA) carried by diffusion-limited capture at an absorber of radius ``radius_A``.

    ``I = g |z| F D a c``; the inverse of :func:`capture_radius_from_current_A`.
    """
    a = check_positive(radius_A, "radius_A")
    d = check_positive(diffusion_m2_per_s, "diffusion_m2_per_s")
    c = check_positive(conc_mM, "conc_mM")
    z = _check_charge(charge)
    current_A = (
        geometry_factor(geometry)
        * abs(z)
        * FARADAY_C_PER_MOL
        * d
        * angstrom_to_m(a)
        * mM_to_mol_per_m3(c)
    )
    return float(A_to_pA(current_A))


def capture_radius_from_current_A(
    current_pA: float,
    diffusion_m2_per_s: float,
    conc_mM: float,
    *,
    charge: int = 1,
    geometry: str = DEFAULT_GEOMETRY,
) -> float:
    """Capture radius (Å) implied by a diffusion-limited current: ``I / (g |z| F D c)``.

    Parameters
    ----------
    current_pA : float
        Diffusion-limited single-channel current magnitude (pA, > 0).
    diffusion_m2_per_s : float
        Diffusion coefficient of the permeant ion in the bath (m² s⁻¹, > 0).
    conc_mM : float
        Bath concentration of the permeant ion on the entry side (mM, > 0).
    charge : int
        Ion valence z (its sign does not matter).
    geometry : {"hemisphere", "disk"}
        Absorber shape (g = 2π or 4).
    """
    i = check_positive(current_pA, "current_pA")
    d = check_positive(diffusion_m2_per_s, "diffusion_m2_per_s")
    c = check_positive(conc_mM, "conc_mM")
    z = _check_charge(charge)
    radius_m = pA_to_A(i) / (
        geometry_factor(geometry) * abs(z) * FARADAY_C_PER_MOL * d * mM_to_mol_per_m3(c)
    )
    return float(m_to_angstrom(radius_m))


# --- with uncertainties ----------------------------------------------------------------


@dataclass(frozen=True)
class CaptureRadiusEstimate:
    """Capture radius from a current, with first-order and Monte Carlo uncertainties.

    Attributes
    ----------
    capture_radius_A : float
        r_c from the central values.
    capture_radius_sd_A : float
        First-order (analytic) standard uncertainty of r_c.
    capture_radius_mc_mean_A, capture_radius_mc_sd_A : float
        Mean and SD of the Monte Carlo draws of r_c.
    capture_radius_mc_interval_A : tuple of float
        2.5 and 97.5 percentiles of the draws (a 95 % interval).
    capture_radius_mc_halfwidth68_A : float
        Half the distance between the 16th and 84th percentiles of the draws: equals
        the SD for a normal spread, but unlike the SD it is not inflated by the rare
        draws of a near-zero concentration or D when uncertainties are large.
    capture_rate_per_s : float
        Ions captured per second, ``I / (|z| e)``.
    variance_shares : dict
        Share of the first-order variance from the current, the concentration and
        D (sums to 1; all 0 when no uncertainty was given).
    current_pA, current_sd_pA, conc_mM, conc_sd_mM : float
        Inputs (pA, mM) and their standard uncertainties.
    current_uncertainty : str
        ``"sd"`` or ``"sem"``: what the current's uncertainty stands for.
    diffusion_m2_per_s, diffusion_sd_m2_per_s : float
    charge : int
    geometry : str
    geometry_factor : float
    mc_samples, mc_rejected, seed : int
        Monte Carlo draws, draws rejected for a non-positive input, RNG seed.
    version : str
    """

    capture_radius_A: float
    capture_radius_sd_A: float
    capture_radius_mc_mean_A: float
    capture_radius_mc_sd_A: float
    capture_radius_mc_interval_A: tuple[float, float]
    capture_radius_mc_halfwidth68_A: float
    capture_rate_per_s: float
    variance_shares: dict
    current_pA: float
    current_sd_pA: float
    current_uncertainty: str
    conc_mM: float
    conc_sd_mM: float
    diffusion_m2_per_s: float
    diffusion_sd_m2_per_s: float
    charge: int
    geometry: str
    geometry_factor: float
    mc_samples: int
    mc_rejected: int
    seed: int
    version: str = field(default=__version__)

    @property
    def sd_relative_difference(self) -> float:
        """(MC SD - first-order SD) / first-order SD; 0 when both are 0."""
        if self.capture_radius_sd_A == 0:
            return 0.0 if self.capture_radius_mc_sd_A == 0 else math.inf
        return (self.capture_radius_mc_sd_A - self.capture_radius_sd_A) / self.capture_radius_sd_A

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "model": "diffusion-limited capture, r_c = I / (g |z| F D c); a model estimate",
            "capture_radius_A": self.capture_radius_A,
            "capture_radius_sd_A": self.capture_radius_sd_A,
            "capture_radius_mc_mean_A": self.capture_radius_mc_mean_A,
            "capture_radius_mc_sd_A": self.capture_radius_mc_sd_A,
            "capture_radius_mc_interval_A": list(self.capture_radius_mc_interval_A),
            "capture_radius_mc_halfwidth68_A": self.capture_radius_mc_halfwidth68_A,
            "sd_relative_difference": self.sd_relative_difference,
            "capture_rate_per_s": self.capture_rate_per_s,
            "variance_shares": dict(self.variance_shares),
            "current_pA": self.current_pA,
            "current_sd_pA": self.current_sd_pA,
            "current_uncertainty": self.current_uncertainty,
            "conc_mM": self.conc_mM,
            "conc_sd_mM": self.conc_sd_mM,
            "diffusion_m2_per_s": self.diffusion_m2_per_s,
            "diffusion_sd_m2_per_s": self.diffusion_sd_m2_per_s,
            "charge": self.charge,
            "geometry": self.geometry,
            "geometry_factor": self.geometry_factor,
            "mc_samples": self.mc_samples,
            "mc_rejected": self.mc_rejected,
            "seed": self.seed,
        }


def estimate_capture_radius(
    current_pA: float,
    conc_mM: float,
    diffusion_m2_per_s: float,
    *,
    current_sd_pA: float = 0.0,
    conc_sd_mM: float = 0.0,
    diffusion_sd_m2_per_s: float = 0.0,
    charge: int = 1,
    geometry: str = DEFAULT_GEOMETRY,
    current_uncertainty: str = "sd",
    mc_samples: int = DEFAULT_MC_SAMPLES,
    seed: int = DEFAULT_SEED,
) -> CaptureRadiusEstimate:
    """Capture radius implied by a diffusion-limited current, with its uncertainty.

    Parameters
    ----------
    current_pA, current_sd_pA : float
        Current magnitude (pA, > 0) and its standard uncertainty (pA, >= 0).
    conc_mM, conc_sd_mM : float
        Bath concentration of the permeant ion (mM, > 0) and its uncertainty.
    diffusion_m2_per_s, diffusion_sd_m2_per_s : float
        Diffusion coefficient (m² s⁻¹, > 0) and its uncertainty, e.g. from
        :func:`poreprobe.bench.viscosity.diffusion_coefficient`.
    charge : int
        Ion valence.
    geometry : {"hemisphere", "disk"}
    current_uncertainty : {"sd", "sem"}
        What ``current_sd_pA`` is: the SD of single measurements or the SEM.
    mc_samples : int
        Monte Carlo draws (1,000 to 10,000,000).
    seed : int
        Seed of the Monte Carlo generator (fixed by default: results repeat).

    Returns
    -------
    CaptureRadiusEstimate

    Warns
    -----
    QualityWarning
        When more than 0.1 % of draws had a non-positive input, or the first-order
        and Monte Carlo SDs differ by more than 10 % (large relative uncertainties).
    """
    r = capture_radius_from_current_A(
        current_pA, diffusion_m2_per_s, conc_mM, charge=charge, geometry=geometry
    )
    z = _check_charge(charge)
    geometry = check_choice(geometry, "geometry", GEOMETRY_FACTORS)
    kind = check_choice(current_uncertainty, "current_uncertainty", ("sd", "sem"))
    means = np.array([float(current_pA), float(conc_mM), float(diffusion_m2_per_s)])
    sds = np.array(
        [
            check_positive(current_sd_pA, "current_sd_pA", allow_zero=True),
            check_positive(conc_sd_mM, "conc_sd_mM", allow_zero=True),
            check_positive(diffusion_sd_m2_per_s, "diffusion_sd_m2_per_s", allow_zero=True),
        ]
    )
    n = check_int(mc_samples, "mc_samples", minimum=1000)
    if n > 10_000_000:
        raise InputError(f"mc_samples must be <= 10000000, got {n}")
    seed = check_int(seed, "seed", minimum=0)

    rel_var = (sds / means) ** 2
    sd_first = r * math.sqrt(rel_var.sum())
    total = rel_var.sum()
    shares = rel_var / total if total > 0 else np.zeros(3)

    rng = np.random.default_rng(seed)
    draws = means + sds * rng.standard_normal((n, 3))
    ok = (draws > 0).all(axis=1)
    rejected = int(n - ok.sum())
    # r scales as I / (D c): reuse the central value instead of recomputing constants.
    r_draws = r * (draws[ok, 0] / means[0]) * (means[1] / draws[ok, 1]) * (means[2] / draws[ok, 2])
    if r_draws.size < 2:
        raise InputError(
            "the input uncertainties are so large that almost every Monte Carlo "
            "draw has a non-positive current, concentration or D"
        )
    # Identical draws (no uncertainty given) have exactly zero spread.
    mc_sd = float(r_draws.std(ddof=1)) if np.ptp(r_draws) > 0 else 0.0
    lo, p16, p84, hi = np.percentile(r_draws, [2.5, 16.0, 84.0, 97.5])
    result = CaptureRadiusEstimate(
        capture_radius_A=r,
        capture_radius_sd_A=sd_first,
        capture_radius_mc_mean_A=float(r_draws.mean()),
        capture_radius_mc_sd_A=mc_sd,
        capture_radius_mc_interval_A=(float(lo), float(hi)),
        capture_radius_mc_halfwidth68_A=float(p84 - p16) / 2 if mc_sd > 0 else 0.0,
        capture_rate_per_s=float(pA_to_A(means[0]) / (abs(z) * constants.e)),
        variance_shares={
            "current": float(shares[0]),
            "concentration": float(shares[1]),
            "diffusion": float(shares[2]),
        },
        current_pA=float(means[0]),
        current_sd_pA=float(sds[0]),
        current_uncertainty=kind,
        conc_mM=float(means[1]),
        conc_sd_mM=float(sds[1]),
        diffusion_m2_per_s=float(means[2]),
        diffusion_sd_m2_per_s=float(sds[2]),
        charge=z,
        geometry=geometry,
        geometry_factor=geometry_factor(geometry),
        mc_samples=n,
        mc_rejected=rejected,
        seed=seed,
    )
    if rejected > 0.001 * n:
        warnings.warn(
            f"{rejected} of {n} Monte Carlo draws had a non-positive current, "
            "concentration or D and were rejected: the input uncertainties are large",
            QualityWarning,
            stacklevel=2,
        )
    if sd_first > 0 and abs(result.sd_relative_difference) > SD_DISAGREEMENT_WARN:
        warnings.warn(
            f"first-order SD {sd_first:.3g} Å and Monte Carlo SD {mc_sd:.3g} Å differ "
            f"by {100 * result.sd_relative_difference:+.0f} %: the relative "
            "uncertainties are too large for the linear approximation; prefer the "
            "Monte Carlo interval",
            QualityWarning,
            stacklevel=2,
        )
    return result
