"""How far each atom may be off: per-atom coordinate error, and perturbed copies of a model.

Definitions (stated once, used everywhere)
------------------------------------------
``sigma_A`` is the standard deviation of an atom's position **along one
Cartesian direction** (Å). A perturbed copy moves every atom by an independent
isotropic Gaussian displacement with that standard deviation on each of x, y
and z, so the mean-square length of the displacement is ``3 sigma**2`` and its
RMS length ``sqrt(3) sigma``.

Where ``sigma_A`` comes from (``source``):

``"bfactor"`` (default)
    The isotropic displacement parameter of crystallography,
    ``B = 8 pi**2 <u**2>``, where ``<u**2>`` (``U_iso``) is the mean-square
    displacement **along one direction** (Willis and Pryor 1975, *Thermal
    Vibrations in Crystallography*, Cambridge University Press; the common
    crystallographic definition). So ``sigma_A = sqrt(B / (8 pi**2))``: B = 20 Å²
    gives 0.50 Å per direction, 0.87 Å RMS in 3-D. Atoms with B <= 0 or no B
    are not moved, with a warning.
``"uniform"``
    One value for every atom: ``coordinate_error_A`` (Å, per direction).
``"resolution"``
    For models whose B-factors are missing or carry no positional meaning
    (many cryo-EM models, models with one B for every atom): an RMS 3-D
    coordinate error of ``RESOLUTION_FRACTION x resolution`` (0.15 x d), so
    ``sigma_A = 0.15 d / sqrt(3)`` per direction. The rule is a rough rule of
    thumb recalled from memory (well-refined models are commonly said to be
    accurate to about 0.1-0.2 of the resolution), not a published formula; we
    take the middle. The Cruickshank diffraction-precision indicator
    (Cruickshank 1999, Acta Cryst. D55:583) would be better for crystal
    structures, but it needs the count of reflections, completeness and
    R-free, which a model file often lacks and poreprobe does not read; it is
    not implemented.

Every number derived from these copies is a model-based estimate of how much
the answer moves within the model's own stated coordinate error; it is not an
error bar on the true structure.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe.errors import InputError, QualityWarning
from poreprobe.io.structure import Atoms

ERROR_SOURCES = ("bfactor", "uniform", "resolution")
#: B = 8 pi^2 <u^2> (Willis and Pryor 1975): <u^2> per direction is B times this.
B_TO_MSD = 1.0 / (8.0 * math.pi**2)
#: RMS 3-D coordinate error as a fraction of the resolution (rule of thumb, from memory).
RESOLUTION_FRACTION = 0.15


def sigma_from_b_factor_A(b_factor) -> np.ndarray:
    """Per-direction RMS displacement (Å) from B-factors (Å²): ``sqrt(B / (8 pi**2))``.

    Negative or non-finite B give 0 (the atom is not moved).

    Examples
    --------
    >>> round(float(sigma_from_b_factor_A([20.0])[0]), 3)
    0.503
    """
    b = np.asarray(b_factor, dtype=np.float64)
    b = np.where(np.isfinite(b) & (b > 0), b, 0.0)
    return np.sqrt(b * B_TO_MSD)


def coordinate_sigma_A(
    atoms: Atoms,
    source: str = "bfactor",
    *,
    coordinate_error_A: float | None = None,
    resolution_A: float | None = None,
) -> np.ndarray:
    """Per-atom coordinate error ``sigma_A`` (Å, along one direction), see the module notes.

    Parameters
    ----------
    atoms : Atoms
    source : {"bfactor", "uniform", "resolution"}
    coordinate_error_A : float, optional
        The per-direction error of every atom (Å, >= 0); needed with ``"uniform"``.
    resolution_A : float, optional
        Resolution of the model (Å, > 0); needed with ``"resolution"``.

    Returns
    -------
    ndarray of shape (n_atoms,)

    Warns
    -----
    QualityWarning
        With ``"bfactor"``: atoms with B <= 0 (or missing), which are not moved;
        every atom with the same B (a B-factor that says nothing about the atom).

    Raises
    ------
    InputError
        Unknown source, or the value it needs missing or out of range.
    """
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    source = check_choice(source, "source", ERROR_SOURCES)
    n = len(atoms)
    if source == "uniform":
        if coordinate_error_A is None:
            raise InputError("source 'uniform' needs coordinate_error_A (Å per direction)")
        value = check_positive(coordinate_error_A, "coordinate_error_A", allow_zero=True)
        return np.full(n, value)
    if source == "resolution":
        if resolution_A is None:
            raise InputError("source 'resolution' needs resolution_A (Å)")
        d = check_positive(resolution_A, "resolution_A")
        return np.full(n, RESOLUTION_FRACTION * d / math.sqrt(3.0))
    b = np.asarray(atoms.b_factor, dtype=np.float64)
    missing = ~(np.isfinite(b) & (b > 0))
    if missing.all():
        warnings.warn(
            f"no atom of {atoms.source or 'the model'} has a B-factor above 0: the ensemble "
            "members equal the model (use a uniform or resolution-based coordinate error)",
            QualityWarning,
            stacklevel=2,
        )
    elif missing.any():
        warnings.warn(
            f"{int(missing.sum())} of {n} atoms have B <= 0 or no B-factor: they are not "
            "moved in the ensemble",
            QualityWarning,
            stacklevel=2,
        )
    if n > 1 and not missing.any() and np.ptp(b) == 0:
        warnings.warn(
            f"every atom has B = {b[0]:g} Å²: the B-factors may not describe positional "
            "error (consider a resolution-based coordinate error)",
            QualityWarning,
            stacklevel=2,
        )
    return sigma_from_b_factor_A(b)


def member_rng(seed: int, member: int) -> np.random.Generator:
    """The random generator of ensemble member ``member``: ``default_rng([seed, member])``.

    Each member has its own stream (independent of how members are split over
    workers), so a member is the same whichever backend computes it.
    """
    seed = check_int(seed, "seed", minimum=0)
    member = check_int(member, "member", minimum=0)
    return np.random.default_rng([seed, member])


def perturbed_coords_A(coords_A: np.ndarray, sigma_A: np.ndarray, seed: int, member: int):
    """Coordinates of member ``member``: each atom moved by N(0, sigma_A**2) on x, y and z."""
    coords = np.asarray(coords_A, dtype=np.float64)
    sigma = np.asarray(sigma_A, dtype=np.float64)
    if coords.ndim != 2 or coords.shape[1] != 3:
        raise InputError(f"coords_A must have shape (n, 3), got {coords.shape}")
    if sigma.shape != (len(coords),):
        raise InputError(f"sigma_A must have {len(coords)} values, got shape {sigma.shape}")
    if not np.all(np.isfinite(sigma)) or np.any(sigma < 0):
        raise InputError("sigma_A must be finite and >= 0")
    noise = member_rng(seed, member).standard_normal(coords.shape)
    return coords + noise * sigma[:, None]


def perturbed_atoms(atoms: Atoms, sigma_A, seed: int, member: int) -> Atoms:
    """Member ``member`` of the ensemble: ``atoms`` with perturbed coordinates.

    Parameters
    ----------
    atoms : Atoms
    sigma_A : array_like of shape (n_atoms,)
        Per-direction coordinate error (Å), e.g. from :func:`coordinate_sigma_A`.
    seed : int
        Seed of the ensemble (>= 0).
    member : int
        Member number (>= 0); members with different numbers are independent.

    Returns
    -------
    Atoms

    Examples
    --------
    >>> from poreprobe.geometry.synthetic import cylinder
    >>> atoms = cylinder()[0]
    >>> a = perturbed_atoms(atoms, [0.3] * len(atoms), seed=1, member=0)
    >>> b = perturbed_atoms(atoms, [0.3] * len(atoms), seed=1, member=0)
    >>> bool((a.coords_A == b.coords_A).all())
    True
    """
    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    return atoms.with_coords(perturbed_coords_A(atoms.coords_A, sigma_A, seed, member))
