"""How sure is the number: radius profiles of perturbed copies of one model.

:func:`profile_ensemble` builds ``n_members`` copies of a model, each atom
displaced by an independent isotropic Gaussian with its own per-direction
coordinate error (from its B-factor, one uniform value, or the resolution; see
:mod:`poreprobe.scale.coordinate_error`), profiles every copy on the model's
own plane grid and along the model's own axis, and returns the bands
(median and 5-95 % range) in a :class:`~poreprobe.scale.ensemble_result.ProfileEnsemble`.
Optionally each member also gets a probe-size scan (capture radius and stop
level per probe, largest passing probe), a permeation verdict for an ion and a
match of a bench capture radius.

Members are independent and seeded: member ``k`` draws from
``numpy.random.default_rng([seed, k])``, so the same seed repeats every member,
another seed changes them, and a member is the same on every backend and for
any split into tasks. The members run on the backends of trajectories
(``"serial"``, ``"multiprocessing"``, ``"dask"`` or a backend object), in blocks
of members per task (a few per worker), with the atoms shipped to each worker
once (:func:`poreprobe.scale.parallel.run_blocks`).

The axis is the model's, kept fixed: the band is the uncertainty of the radius
about that axis, not of the axis itself (which the members would shift by
about the coordinate error divided by the number of atoms that define it).
"""

from __future__ import annotations

import contextlib
import math
import warnings
from dataclasses import dataclass

import numpy as np

from poreprobe._validate import check_int, check_positive
from poreprobe.errors import InputError, PoreNotFoundError
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.profile import radius_profile
from poreprobe.io.radii import DEFAULT_RADIUS_SET, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms
from poreprobe.scale.coordinate_error import (
    ERROR_SOURCES,
    RESOLUTION_FRACTION,
    coordinate_sigma_A,
    perturbed_atoms,
    perturbed_coords_A,
)
from poreprobe.scale.ensemble_result import Band, ProfileEnsemble, band_rows

__all__ = [
    "ERROR_SOURCES",
    "Band",
    "ProfileEnsemble",
    "coordinate_sigma_A",
    "perturbed_atoms",
    "profile_ensemble",
]

MAX_MEMBERS = 10_000
#: Tasks per worker: coarse enough that shipping and scheduling cost little,
#: fine enough that one slow block does not leave a worker idle for long.
BLOCKS_PER_WORKER = 2


@dataclass(frozen=True)
class _Job:
    """What every block of members needs; shipped to each worker once."""

    atoms: Atoms
    radii_A: np.ndarray
    sigma_A: np.ndarray
    axis: PoreAxis
    seed: int
    step_A: float
    max_radius_A: float
    s_range_A: tuple[float, float]
    n_planes: int
    probe_radii_A: np.ndarray | None
    scan_options: dict
    match: tuple[float, float] | None
    radius_set: str


def _member_block(job: _Job, members) -> dict:
    """Profiles (and scans) of the members in ``members``; one task's work."""
    members = list(members)
    n, p = len(members), job.n_planes
    out = {
        "radius_A": np.full((n, p), np.nan),
        "min_radius_A": np.full(n, np.nan),
        "min_s_A": np.full(n, np.nan),
    }
    n_p = 0 if job.probe_radii_A is None else len(job.probe_radii_A)
    if n_p:
        out.update(
            capture_radius_A=np.full((n, n_p), np.nan),
            stop_s_A=np.full((n, n_p), np.nan),
            passes=np.zeros((n, n_p), dtype=bool),
            best_probe_A=np.full(n, np.nan),
            intervals_A=[()] * n,
        )
    for row, k in enumerate(members):
        atoms = job.atoms.with_coords(
            perturbed_coords_A(job.atoms.coords_A, job.sigma_A, job.seed, k)
        )
        with contextlib.suppress(PoreNotFoundError):  # every plane open: the row stays NaN
            prof = radius_profile(
                atoms,
                job.axis,
                radii_A=job.radii_A,
                step_A=job.step_A,
                max_radius_A=job.max_radius_A,
                s_range_A=job.s_range_A,
            )
            if prof.s_A.shape != (p,):  # pragma: no cover - the grid is fixed
                raise RuntimeError("plane grid changed between ensemble members")
            out["radius_A"][row] = prof.radius_A
            out["min_radius_A"][row] = prof.min_radius_A
            out["min_s_A"][row] = prof.min_s_A
        if n_p:
            _scan_member(job, atoms, out, row)
    return out


def _scan_member(job: _Job, atoms: Atoms, out: dict, row: int) -> None:
    from poreprobe.geometry.probes import probe_scan

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # per-member scan notes would repeat every member
        try:
            scan = probe_scan(
                atoms,
                job.axis,
                probe_radii_A=job.probe_radii_A,
                radii_A=job.radii_A,
                **job.scan_options,
                error_estimate=False,  # one capture radius per model: no second grid
            )
        except PoreNotFoundError:
            return
        out["capture_radius_A"][row] = scan.capture_radius_A
        out["stop_s_A"][row] = scan.stop_s_A
        out["passes"][row] = scan.passes
        if job.match is not None:
            from poreprobe.bench.match import match_scan

            try:
                m = match_scan(scan, *job.match)
            except (InputError, PoreNotFoundError):
                return
            out["best_probe_A"][row] = m.best_probe_radius_A
            out["intervals_A"][row] = tuple(tuple(map(float, iv)) for iv in m.intervals_A)


def _merge(parts: list[dict]) -> dict:
    merged = {}
    for key in parts[0]:
        if key == "intervals_A":
            merged[key] = tuple(iv for part in parts for iv in part[key])
        else:
            merged[key] = np.concatenate([part[key] for part in parts], axis=0)
    return merged


def _grid_range_A(s_A: np.ndarray, step_A: float) -> tuple[float, float]:
    """A range whose planes are exactly ``s_A`` (a quarter step inside the end planes)."""
    lo, hi = float(s_A[0]), float(s_A[-1])
    return lo + 0.25 * step_A, max(hi - 0.25 * step_A, lo + 0.5 * step_A)


def _error_rule(source: str, coordinate_error_A, resolution_A) -> str:
    if source == "bfactor":
        return "sigma = sqrt(B / 8 pi^2) per direction (B = 8 pi^2 <u^2>, Willis & Pryor 1975)"
    if source == "uniform":
        return f"sigma = {coordinate_error_A:g} Å per direction for every atom"
    return (
        f"RMS 3-D error {RESOLUTION_FRACTION:g} x resolution {resolution_A:g} Å "
        "(rule of thumb, from memory), sigma = that / sqrt(3) per direction"
    )


def profile_ensemble(
    atoms: Atoms,
    axis: PoreAxis,
    *,
    n_members: int = 32,
    source: str = "bfactor",
    coordinate_error_A: float | None = None,
    resolution_A: float | None = None,
    sigma_A=None,
    seed: int = 0,
    radii=DEFAULT_RADIUS_SET,
    radii_A=None,
    step_A: float = 0.2,
    margin_A: float = 2.0,
    max_radius_A: float = 20.0,
    probe_radii_A=None,
    scan_options: dict | None = None,
    ion: str | None = None,
    match_capture_radius_A: float | None = None,
    match_sd_A: float | None = None,
    backend="serial",
    n_workers: int | None = 1,
    scheduler: str | None = None,
    n_blocks: int | None = None,
    quiet: bool = True,
) -> ProfileEnsemble:
    """Bands of the radius profile (and probe scan) over perturbed copies of one model.

    Parameters
    ----------
    atoms : Atoms
        The model.
    axis : PoreAxis
        Its pore axis (kept for every member).
    n_members : int
        Perturbed copies (1 to 10,000).
    source : {"bfactor", "uniform", "resolution"}
        Where the per-atom coordinate error comes from (module
        :mod:`poreprobe.scale.coordinate_error`).
    coordinate_error_A, resolution_A : float, optional
        The value ``"uniform"`` and ``"resolution"`` need (Å).
    sigma_A : array_like of shape (n_atoms,), optional
        Explicit per-direction errors (Å); overrides ``source``.
    seed : int
        Seed of the ensemble (>= 0).
    radii, radii_A
        Radius set or explicit per-atom radii (Å), as for :func:`poreprobe.radius_profile`.
    step_A, margin_A, max_radius_A : float
        Profile options (Å); the model's grid is shared by every member.
    probe_radii_A : array_like, optional
        Also scan these probes per member (Å; about one probe-size scan per
        member, far slower than a profile).
    scan_options : dict, optional
        ``spacing_A``, ``from_end``, ``pore_radius_A`` of the scan.
    ion : str, optional
        Also give each member's permeation verdict for this ion (``"K"``, ...).
    match_capture_radius_A, match_sd_A : float, optional
        A bench capture radius and its SD (Å) to match against each member's
        scan (needs ``probe_radii_A``).
    backend : {"serial", "multiprocessing", "dask"} or BackendBase
    n_workers : int, optional
    scheduler : str, optional
        As for :func:`poreprobe.scale.trajectory.profile_trajectory`.
    n_blocks : int, optional
        Tasks the members are split into (default 2 per worker; members in
        contiguous blocks).
    quiet : bool
        No progress bar.

    Returns
    -------
    ProfileEnsemble

    Raises
    ------
    InputError
        Bad counts, sources, radii or options.
    PoreNotFoundError
        When the unperturbed model has no enclosed plane.
    """
    from MDAnalysis.analysis.backends import BackendBase, BackendSerial

    from poreprobe.checks.verdict import classify
    from poreprobe.scale.parallel import block_slices, open_backend, run_blocks

    if not isinstance(atoms, Atoms):
        raise InputError(f"atoms must be an Atoms table, got {type(atoms).__name__}")
    if not isinstance(axis, PoreAxis):
        raise InputError(f"axis must be a PoreAxis, got {type(axis).__name__}")
    n_members = check_int(n_members, "n_members", minimum=1)
    if n_members > MAX_MEMBERS:
        raise InputError(f"n_members must be at most {MAX_MEMBERS}, got {n_members}")
    seed = check_int(seed, "seed", minimum=0)
    step_A = check_positive(step_A, "step_A")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        if sigma_A is None:
            sigma = coordinate_sigma_A(
                atoms, source, coordinate_error_A=coordinate_error_A, resolution_A=resolution_A
            )
            rule = _error_rule(source, coordinate_error_A, resolution_A)
        else:
            sigma = np.asarray(sigma_A, dtype=np.float64)
            if sigma.shape != (len(atoms),) or not np.all(np.isfinite(sigma)) or (sigma < 0).any():
                raise InputError(f"sigma_A must be {len(atoms)} finite values >= 0 (Å)")
            source, rule = "given", "per-atom values given by the caller"
        if radii_A is None:
            rset = get_radius_set(radii)
            radii_A = atom_radii_A(atoms, rset)
            radius_set = rset.name
        else:
            radii_A = np.asarray(radii_A, dtype=np.float64)
            radius_set = "per-atom array"
    notes = tuple(dict.fromkeys(str(w.message) for w in caught))
    for text in notes:
        warnings.warn(text, caught[0].category, stacklevel=2)
    model = radius_profile(
        atoms, axis, radii_A=radii_A, step_A=step_A, margin_A=margin_A, max_radius_A=max_radius_A
    )
    probes = None
    if probe_radii_A is not None:
        probes = np.asarray(probe_radii_A, dtype=np.float64).reshape(-1)
        if probes.size == 0 or not np.all(np.isfinite(probes)) or (probes <= 0).any():
            raise InputError("probe_radii_A must be positive radii in Å")
    match = None
    if match_capture_radius_A is not None:
        if probes is None:
            raise InputError("a match of a bench capture radius needs probe_radii_A")
        sd = 0.0 if match_sd_A is None else match_sd_A
        match = (
            check_positive(match_capture_radius_A, "match_capture_radius_A"),
            check_positive(sd, "match_sd_A", allow_zero=True),
        )
    ion_obj = None
    if ion is not None:
        from poreprobe.bench.ions import get_ion

        ion_obj = get_ion(ion)
    job = _Job(
        atoms=atoms,
        radii_A=radii_A,
        sigma_A=sigma,
        axis=axis,
        seed=seed,
        step_A=step_A,
        max_radius_A=model.max_radius_A,
        s_range_A=_grid_range_A(model.s_A, step_A),
        n_planes=len(model.s_A),
        probe_radii_A=probes,
        scan_options=dict(scan_options or {}),
        match=match,
        radius_set=radius_set,
    )
    if isinstance(backend, BackendBase):
        context = contextlib.nullcontext(backend)
        backend_name = type(backend).__name__
    else:
        context = open_backend(
            backend, n_workers=n_workers, scheduler=scheduler, quiet=quiet, desc="member blocks"
        )
        backend_name = str(backend)
    with context as executor:
        workers = max(int(getattr(executor, "n_workers", 1) or 1), 1)
        if n_blocks is not None:
            count = check_int(n_blocks, "n_blocks", minimum=1)
        elif isinstance(executor, BackendSerial):
            count = n_members  # nothing to ship: one member per step of the progress bar
        else:
            count = BLOCKS_PER_WORKER * workers
        blocks = block_slices(n_members, count)
        parts = run_blocks(executor, _member_block, job, blocks, desc="ensemble members")
    merged = _merge(parts)
    return _result(job, model, merged, rule, source, notes, ion_obj, classify, backend_name)


def _result(job, model, merged, rule, source, notes, ion_obj, classify, backend_name):
    n = len(merged["min_radius_A"])
    extra: dict = {}
    if job.probe_radii_A is not None:
        cap, stop, passes = merged["capture_radius_A"], merged["stop_s_A"], merged["passes"]
        largest = np.array(
            [job.probe_radii_A[row].max() if row.any() else math.nan for row in passes]
        )
        extra.update(
            probe_radius_A=job.probe_radii_A.copy(),
            member_capture_radius_A=cap,
            member_stop_s_A=stop,
            member_passes=passes,
            capture_bands=tuple(Band.of(cap[:, j]) for j in range(cap.shape[1])),
            stop_bands=tuple(Band.of(stop[:, j]) for j in range(stop.shape[1])),
            member_largest_passing_A=largest,
            largest_passing=Band.of(largest),
        )
        if job.match is not None:
            ivs = merged["intervals_A"]
            lows = [min(iv[0] for iv in m) if m else math.nan for m in ivs]
            highs = [max(iv[1] for iv in m) if m else math.nan for m in ivs]
            extra.update(
                match_capture_radius_A=job.match[0],
                match_sd_A=job.match[1],
                member_best_probe_A=merged["best_probe_A"],
                member_intervals_A=ivs,
                best_probe=Band.of(merged["best_probe_A"]),
                interval_low=Band.of(lows),
                interval_high=Band.of(highs),
            )
    if ion_obj is not None:
        from poreprobe.checks.verdict import VERDICTS

        verdicts = tuple(classify(float(r), ion_obj) for r in merged["min_radius_A"])
        extra.update(
            ion=ion_obj.symbol,
            member_verdict=verdicts,
            verdict_shares={v: verdicts.count(v) / n for v in VERDICTS},
            model_verdict=classify(model.min_radius_A, ion_obj),
        )
    return ProfileEnsemble(
        n_members=n,
        seed=job.seed,
        error_source=source,
        error_rule=rule,
        sigma_median_A=float(np.median(job.sigma_A)),
        sigma_max_A=float(job.sigma_A.max()),
        model_min_radius_A=model.min_radius_A,
        model_min_s_A=model.min_s_A,
        s_A=np.array(model.s_A),
        model_radius_A=np.array(model.radius_A),
        member_radius_A=merged["radius_A"],
        radius_band_A=band_rows(merged["radius_A"]),
        member_min_radius_A=merged["min_radius_A"],
        member_min_s_A=merged["min_s_A"],
        min_radius=Band.of(merged["min_radius_A"]),
        min_s=Band.of(merged["min_s_A"]),
        radius_set=job.radius_set,
        axis_method=job.axis.method,
        step_A=job.step_A,
        n_atoms=len(job.atoms),
        backend=backend_name,
        warnings=notes,
        source=job.atoms.source,
        **extra,
    )
