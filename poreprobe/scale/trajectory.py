"""Pore radius profiles over the frames of a trajectory (or the models of a multi-model file).

:class:`PoreProfileAnalysis` is an MDAnalysis ``AnalysisBase``: it runs frame by
frame on an ``AtomGroup`` and opts in to MDAnalysis's parallel analysis (2.8+),
so ``run(backend="serial" | "multiprocessing" | "dask", n_workers=...)`` works,
and so does ``run(backend=DaskClientBackend(client), unsupported_backend=True)``
on an existing ``dask.distributed`` cluster (see :mod:`poreprobe.scale.parallel`).

Per frame it records the radius profile on **one common s grid**, fixed before
the run from a reference frame, so rows from different workers line up:

``axis_mode="fixed"`` (default)
    The pore axis is found once, on the reference frame. Each frame is first
    superposed on the reference frame by a least-squares rigid fit of the
    alignment atoms (unweighted RMSD fit, MDAnalysis ``rotation_matrix``), then
    profiled along that axis, in the reference frame's coordinates.
``axis_mode="per-frame"``
    The axis is found again on every frame with the same options (the frame is
    not moved). Its direction is flipped where needed to point the same way as
    the reference frame's axis, so that s keeps its sense; s = 0 is where the
    atoms' centroid projects onto the frame's axis.

Each frame's profile is exactly :func:`poreprobe.radius_profile` on that frame's
atoms (after the fit, in fixed mode) with ``s_range_A`` set to the common grid.
With ``capture_probe_radius_A``, each frame also gets the capture radius of
that probe from the probe-size scan (:func:`poreprobe.geometry.probes.probe_scan` on the
same atoms and axis; see that module for the definitions). Only per-frame
numbers are kept, never the frames' coordinates. Summaries
(mean, sample SD and percentiles of the radius at each level, the same for the
minimum radius, and the frames where the pore closes below a threshold) are
computed once, after the per-frame results of all workers are merged, into a
:class:`~poreprobe.scale.trajectory_profiles.TrajectoryProfiles`.
"""

from __future__ import annotations

import contextlib
import os
import warnings
from dataclasses import replace

import numpy as np
from MDAnalysis.analysis.base import AnalysisBase
from MDAnalysis.analysis.results import ResultsGroup

from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.geometry.axis import PoreAxis, find_pore_axis
from poreprobe.geometry.profile import radius_profile
from poreprobe.io.cleaning import cleaned_indices, select_in_universe
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import Atoms, atoms_from_atomgroup
from poreprobe.scale.defaults import (
    AXIS_MODES,
    DEFAULT_PERCENTILES,
    default_closing_threshold,
)
from poreprobe.scale.frame_grid import check_percentiles as _check_percentiles
from poreprobe.scale.frame_grid import check_s_range as _check_range
from poreprobe.scale.frame_grid import grid_range_A as _grid_range_A
from poreprobe.scale.trajectory_profiles import TrajectoryProfiles, nan_percentiles, nan_sd

#: Per-frame results keys and how the parts of a parallel run are merged.
_AGGREGATORS = {
    "radius_A": ResultsGroup.ndarray_vstack,
    "min_radius_A": ResultsGroup.ndarray_hstack,
    "min_s_A": ResultsGroup.ndarray_hstack,
    "fit_rmsd_A": ResultsGroup.ndarray_hstack,
    "capture_radius_A": ResultsGroup.ndarray_hstack,
    "axis_point_A": ResultsGroup.ndarray_vstack,
    "axis_direction": ResultsGroup.ndarray_vstack,
}


class PoreProfileAnalysis(AnalysisBase):
    """Radius profile of a pore in every frame of a trajectory.

    Parameters
    ----------
    atomgroup : MDAnalysis.core.groups.AtomGroup
        The atoms that line and surround the pore (e.g. ``u.select_atoms("protein")``).
        Read at the current positions of each frame.
    axis_mode : {"fixed", "per-frame"}
        Axis fixed on the reference frame after a rigid fit on ``align_selection``
        (default), or found again on every frame. See the module docstring.
    reference_frame : int
        0-based trajectory frame that fixes the axis, the s grid and (fixed mode)
        the alignment target.
    align_selection : str, optional
        MDAnalysis selection, on the whole Universe, of the atoms used for the
        fit in fixed mode (at least 3). Default: the atoms of ``atomgroup``.
    step_A : float
        Plane spacing along the axis (Å, > 0).
    margin_A : float
        Extension of the grid beyond the reference frame's atoms (Å, >= 0).
    max_radius_A : float
        Planes wider than this (Å) are open bulk and recorded as NaN.
    s_range_A : (float, float), optional
        Explicit (low, high) grid range in Å, instead of the reference extent.
    radii : str or RadiusSet
        Van der Waals radius set (default ``"bondi"``: Bondi 1964, Table I).
    axis_method, axis_point_A, axis_direction, axis_selections, entry
        Passed to :func:`poreprobe.find_pore_axis` (as ``method``, ``point_A``,
        ``direction``, ``selections``, ``entry``).
    closed_below_A : float, optional
        A frame counts as closed when its minimum radius is below this (Å).
        Default: the crystal radius of K+ (Shannon 1976, CN 6; 1.38 Å) less the
        0.25 Å borderline band of the permeation verdict, 1.13 Å. Frames from this
        value up to 0.5 Å above it (K+ crystal radius +- 0.25 Å by default) are
        counted as borderline.
    percentiles : sequence of float
        Percentile levels (0-100) reported per plane and for the minimum radius.
    capture_probe_radius_A : float, optional
        Also compute, per frame, the capture radius for a probe of this radius
        (Å) with the probe-size scan. Costs about one more profile per frame.
    capture_from_end : {"low", "high"}
        End of the axis (in s) where probes enter; ``"low"`` is the ``entry``
        end when ``entry`` is given.
    capture_spacing_A, capture_pore_radius_A : float
        Grid spacing of the scan, and the radius around the axis it searches (Å).
    verbose : bool
        MDAnalysis's own progress bar (serial runs only).

    Attributes
    ----------
    s_A : ndarray of shape (n_planes,)
        The common plane grid (Å).
    reference_axis : PoreAxis
        The axis found on the reference frame.
    results.radius_A : ndarray of shape (n_frames, n_planes)
        Profile radius per frame and plane (Å); NaN where the plane is open.
    results.min_radius_A, results.min_s_A : ndarray of shape (n_frames,)
        Narrowest radius and its position per frame (NaN if every plane is open).
    results.capture_radius_A : ndarray of shape (n_frames,)
        Capture radius (Å, area-equivalent variant) for ``capture_probe_radius_A``;
        NaN when not asked for or when the scan finds no enclosed section.
    results.fit_rmsd_A : ndarray of shape (n_frames,)
        RMSD of the alignment atoms after the fit (fixed mode; NaN otherwise).
    results.axis_point_A, results.axis_direction : ndarray of shape (n_frames, 3)
        The axis used, in each frame's own (unfitted) coordinates.
    results.mean_radius_A, results.sd_radius_A : ndarray of shape (n_planes,)
        Mean and sample SD (ddof = 1) over frames of the enclosed planes.
    results.percentile_radius_A : ndarray of shape (n_percentiles, n_planes)
    results.n_enclosed : ndarray of int, shape (n_planes,)
        Frames in which each plane is enclosed (not NaN).
    results.min_radius_mean_A, results.min_radius_sd_A : float
    results.min_radius_percentiles_A : ndarray of shape (n_percentiles,)
    results.capture_mean_A, results.capture_sd_A : float
    results.capture_percentiles_A : ndarray of shape (n_percentiles,)
        Statistics of the capture radius over frames (NaN when not asked for).
    results.closed : ndarray of bool, shape (n_frames,)
        Minimum radius below ``closed_below_A``.
    results.closed_frames : ndarray of int
        Trajectory frame numbers of the closed frames.

    Notes
    -----
    Parallel runs: the analysis object is copied to each worker, which fills the
    per-frame rows of its block of frames; MDAnalysis then stacks the blocks in
    frame order (``ndarray_vstack`` / ``ndarray_hstack``) and calls
    ``_conclude`` once. Every backend therefore gives the same arrays.
    On a remote dask cluster the workers must see the topology and trajectory
    files under the same paths (shared file system) and have poreprobe installed.

    Examples
    --------
    >>> ana = PoreProfileAnalysis(u.select_atoms("protein"), step_A=0.25)  # doctest: +SKIP
    >>> ana.run(backend="multiprocessing", n_workers=2)                     # doctest: +SKIP
    >>> ana.results.min_radius_A                                            # doctest: +SKIP
    """

    _analysis_algorithm_is_parallelizable = True

    @classmethod
    def get_supported_backends(cls):
        return ("serial", "multiprocessing", "dask")

    def __init__(
        self,
        atomgroup,
        *,
        axis_mode: str = "fixed",
        reference_frame: int = 0,
        align_selection: str | None = None,
        step_A: float = 0.25,
        margin_A: float = 2.0,
        max_radius_A: float = 20.0,
        s_range_A: tuple[float, float] | None = None,
        radii: str | RadiusSet = DEFAULT_RADIUS_SET,
        axis_method: str = "auto",
        axis_point_A=None,
        axis_direction=None,
        axis_selections: tuple[str, str] | None = None,
        entry: str | None = None,
        closed_below_A: float | None = None,
        percentiles=DEFAULT_PERCENTILES,
        capture_probe_radius_A: float | None = None,
        capture_from_end: str = "low",
        capture_spacing_A: float = 0.5,
        capture_pore_radius_A: float = 15.0,
        verbose: bool = False,
    ):
        if not hasattr(atomgroup, "universe") or not hasattr(atomgroup, "positions"):
            raise InputError(
                f"atomgroup must be an MDAnalysis AtomGroup, got {type(atomgroup).__name__}"
            )
        if len(atomgroup) < 2:
            raise InputError(f"atomgroup must hold at least 2 atoms, got {len(atomgroup)}")
        super().__init__(atomgroup.universe.trajectory, verbose=verbose)
        self.atomgroup = atomgroup
        self.axis_mode = check_choice(axis_mode, "axis_mode", AXIS_MODES)
        n_traj = len(atomgroup.universe.trajectory)
        self.reference_frame = check_int(reference_frame, "reference_frame", minimum=0)
        if self.reference_frame >= n_traj:
            raise InputError(
                f"reference_frame must be between 0 and {n_traj - 1}, got {reference_frame}"
            )
        self.step_A = check_positive(step_A, "step_A")
        self.margin_A = check_positive(margin_A, "margin_A", allow_zero=True)
        self.max_radius_A = check_positive(max_radius_A, "max_radius_A")
        self.closed_below_A = (
            default_closing_threshold()
            if closed_below_A is None
            else check_positive(closed_below_A, "closed_below_A", allow_zero=True)
        )
        self.percentiles = _check_percentiles(percentiles)
        self.capture_probe_radius_A = (
            None
            if capture_probe_radius_A is None
            else check_positive(capture_probe_radius_A, "capture_probe_radius_A")
        )
        self._capture_options = {
            "from_end": check_choice(capture_from_end, "capture_from_end", ("low", "high")),
            "spacing_A": check_positive(capture_spacing_A, "capture_spacing_A"),
            "pore_radius_A": check_positive(capture_pore_radius_A, "capture_pore_radius_A"),
        }
        self.radius_set = get_radius_set(radii)
        self._axis_options = {
            "method": axis_method,
            "point_A": axis_point_A,
            "direction": axis_direction,
            "selections": axis_selections,
            "entry": entry,
        }
        self._frame_bar = None

        traj = atomgroup.universe.trajectory
        here = traj.ts.frame
        if not _has_time_step(traj):
            warnings.warn(
                f"{_source_name(atomgroup)} gives no time step: frame times are "
                "reported as frame number x 1 ps",
                QualityWarning,
                stacklevel=2,
            )
        try:
            traj[self.reference_frame]
            self._template = atoms_from_atomgroup(atomgroup, source=_source_name(atomgroup))
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always")
                self._radii_A = atom_radii_A(self._template, self.radius_set)
            for w in caught:
                warnings.warn(w.message, w.category, stacklevel=2)
            self._align = None
            if self.axis_mode == "fixed":
                self._align = (
                    atomgroup
                    if align_selection is None
                    else select_in_universe(atomgroup.universe, align_selection)
                )
                if len(self._align) < 3:
                    raise InputError(
                        f"align_selection must match at least 3 atoms, got {len(self._align)}"
                    )
                self._align_ref_A = np.array(self._align.positions, dtype=np.float64)
            self.align_selection = align_selection
            ref_atoms = self._template
            self.reference_axis = find_pore_axis(
                ref_atoms, radii_A=self._radii_A, **self._axis_options
            )
            self._s_range_A = (
                _check_range(s_range_A)
                if s_range_A is not None
                else _grid_range_A(
                    self.reference_axis.s_A(ref_atoms.coords_A), self.step_A, self.margin_A
                )
            )
            # the reference frame's profile checks every option once and fixes the grid
            try:
                self.s_A = self._profile(ref_atoms, self.reference_axis).s_A
            except PoreNotFoundError:
                lo, hi = self._s_range_A
                self.s_A = (
                    np.arange(np.floor(lo / self.step_A), np.ceil(hi / self.step_A) + 1)
                    * self.step_A
                )
        finally:
            traj[here]

    # -- per-frame work -----------------------------------------------------

    def _profile(self, atoms: Atoms, axis: PoreAxis):
        return radius_profile(
            atoms,
            axis,
            radii_A=self._radii_A,
            step_A=self.step_A,
            max_radius_A=self.max_radius_A,
            s_range_A=self._s_range_A,
        )

    def frame_atoms_and_axis(self) -> tuple[Atoms, PoreAxis, PoreAxis, float]:
        """The current frame's atoms and axis as the profile sees them.

        Returns
        -------
        atoms : Atoms
            The frame's atoms, moved onto the reference frame in fixed mode.
        axis : PoreAxis
            The axis the profile uses, in the coordinates of ``atoms``.
        frame_axis : PoreAxis
            The same axis in the frame's own (unfitted) coordinates.
        fit_rmsd_A : float
            RMSD of the alignment atoms after the fit (NaN in per-frame mode).
        """
        positions = np.asarray(self.atomgroup.positions, dtype=np.float64)
        if not np.isfinite(positions).all():  # one line naming the atom and the frame
            from poreprobe.io.sanity import check_coordinates

            frame = self.atomgroup.universe.trajectory.ts.frame
            where = f"{self._template.source or 'trajectory'}, frame {frame}"
            check_coordinates(replace(self._template, coords_A=positions), where)
        atoms = self._template.with_coords(positions)
        if self.axis_mode == "per-frame":
            axis = find_pore_axis(atoms, radii_A=self._radii_A, **self._axis_options)
            if axis.direction @ self.reference_axis.direction < 0:
                axis = axis.flipped("same sense as the reference frame")
            return atoms, axis, axis, float("nan")
        from MDAnalysis.analysis.align import rotation_matrix

        mobile = np.array(self._align.positions, dtype=np.float64)
        mob_centre = mobile.mean(0)
        ref_centre = self._align_ref_A.mean(0)
        rot, rmsd = rotation_matrix(mobile - mob_centre, self._align_ref_A - ref_centre)
        rot = np.asarray(rot, dtype=np.float64)
        moved = (atoms.coords_A - mob_centre) @ rot.T + ref_centre
        ref = self.reference_axis
        frame_axis = PoreAxis(
            (ref.point_A - ref_centre) @ rot + mob_centre,
            ref.direction @ rot,
            ref.method,
            ref.n_fold,
            ref.symmetry_rmsd_A,
            ref.oriented_by,
        )
        return atoms.with_coords(moved), ref, frame_axis, float(rmsd)

    def _compute(self, indexed_frames, verbose=None, *, progressbar_kwargs=None):
        """One block of frames; returns its frames, times and results (a ``BlockResult``).

        Not the analysis object itself: a worker would otherwise send the whole
        object, ``Universe`` included, back with every block; and one analysis
        object shipped once to a worker serves all of that worker's blocks.
        """
        from MDAnalysis.analysis.results import Results

        from poreprobe.scale.parallel import BlockResult

        # the missing-time-step warning was given once in __init__; not again per block
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", message=_NO_DT_MESSAGE)
            super()._compute(indexed_frames, verbose, progressbar_kwargs=progressbar_kwargs)
        return BlockResult(
            frames=np.array(self.frames),
            times=np.array(self.times),
            results=Results(**self.results),
        )

    def _prepare(self):
        n, p = self.n_frames, len(self.s_A)
        self.results.radius_A = np.full((n, p), np.nan)
        for key in ("min_radius_A", "min_s_A", "fit_rmsd_A", "capture_radius_A"):
            self.results[key] = np.full(n, np.nan)
        self.results.axis_point_A = np.full((n, 3), np.nan)
        self.results.axis_direction = np.full((n, 3), np.nan)

    def _single_frame(self):
        i = self._frame_index
        atoms, axis, frame_axis, rmsd = self.frame_atoms_and_axis()
        self.results.fit_rmsd_A[i] = rmsd
        self.results.axis_point_A[i] = frame_axis.point_A
        self.results.axis_direction[i] = frame_axis.direction
        try:
            prof = self._profile(atoms, axis)
        except PoreNotFoundError:
            prof = None  # every plane open in this frame: the row stays NaN
        if prof is not None:
            if prof.s_A.shape != self.s_A.shape:  # pragma: no cover - grid is fixed
                raise RuntimeError("plane grid changed between frames")
            self.results.radius_A[i] = prof.radius_A
            self.results.min_radius_A[i] = prof.min_radius_A
            self.results.min_s_A[i] = prof.min_s_A
        if self.capture_probe_radius_A is not None:
            self.results.capture_radius_A[i] = self._capture_radius_A(atoms, axis)
        if self._frame_bar is not None:
            self._frame_bar.update(1)

    def _capture_radius_A(self, atoms: Atoms, axis: PoreAxis) -> float:
        """Capture radius of the chosen probe in this frame (NaN if no enclosed section)."""
        from poreprobe.geometry.probes import capture_radius_at, probe_scan

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")  # per-frame scan notes would repeat every frame
            try:
                scan = probe_scan(
                    atoms,
                    axis,
                    probe_radii_A=[self.capture_probe_radius_A],
                    radii_A=self._radii_A,
                    **self._capture_options,
                    error_estimate=False,  # one capture radius per model: no second grid
                )
            except PoreNotFoundError:
                return float("nan")
        return float(capture_radius_at(scan, self.capture_probe_radius_A))

    def _get_aggregator(self) -> ResultsGroup:
        return ResultsGroup(lookup=dict(_AGGREGATORS))

    def _conclude(self):
        radius = self.results.radius_A
        min_r = self.results.min_radius_A
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN planes, one frame
            self.results.mean_radius_A = (
                np.nanmean(radius, axis=0) if len(radius) else np.full(len(self.s_A), np.nan)
            )
            self.results.sd_radius_A = nan_sd(radius)
            self.results.percentile_radius_A = nan_percentiles(radius, self.percentiles)
            self.results.min_radius_mean_A = (
                float(np.nanmean(min_r)) if len(min_r) else float("nan")
            )
            self.results.min_radius_sd_A = float(nan_sd(min_r[:, None])[0])
            self.results.min_radius_percentiles_A = nan_percentiles(
                min_r[:, None], self.percentiles
            )[:, 0]
            capture = self.results.capture_radius_A
            self.results.capture_mean_A = (
                float(np.nanmean(capture)) if len(capture) else float("nan")
            )
            self.results.capture_sd_A = float(nan_sd(capture[:, None])[0])
            self.results.capture_percentiles_A = nan_percentiles(
                capture[:, None], self.percentiles
            )[:, 0]
        self.results.n_enclosed = np.isfinite(radius).sum(axis=0)
        self.results.closed = np.isfinite(min_r) & (min_r < self.closed_below_A)
        self.results.closed_frames = np.asarray(self.frames)[self.results.closed]
        from poreprobe.bench.ions import BORDERLINE_BAND_A

        upper = self.closed_below_A + 2 * BORDERLINE_BAND_A
        borderline = np.isfinite(min_r) & (min_r >= self.closed_below_A) & (min_r < upper)
        self.results.borderline_frames = np.asarray(self.frames)[borderline]
        self.results.s_A = self.s_A

    # -- results ------------------------------------------------------------

    def summary(self) -> TrajectoryProfiles:
        """The run's results as a frozen :class:`TrajectoryProfiles`.

        The arrays are shared with ``results`` (no copy) and become read-only.
        """
        if "closed" not in self.results:
            raise InputError("run() the analysis before asking for its summary")
        r = self.results
        traj = self.atomgroup.universe.trajectory
        return TrajectoryProfiles(
            frames=np.asarray(self.frames, dtype=np.int64),
            times_ps=np.asarray(self.times, dtype=np.float64),
            s_A=np.asarray(self.s_A),
            radius_A=np.asarray(r.radius_A),
            min_radius_A=np.asarray(r.min_radius_A),
            min_s_A=np.asarray(r.min_s_A),
            capture_radius_A=(
                np.asarray(r.capture_radius_A) if self.capture_probe_radius_A is not None else None
            ),
            capture_mean_A=r.capture_mean_A,
            capture_sd_A=r.capture_sd_A,
            capture_percentiles_A=np.asarray(r.capture_percentiles_A),
            capture_probe_radius_A=self.capture_probe_radius_A,
            fit_rmsd_A=np.asarray(r.fit_rmsd_A),
            axis_point_A=np.asarray(r.axis_point_A),
            axis_direction=np.asarray(r.axis_direction),
            mean_radius_A=np.asarray(r.mean_radius_A),
            sd_radius_A=np.asarray(r.sd_radius_A),
            percentiles=self.percentiles,
            percentile_radius_A=np.asarray(r.percentile_radius_A),
            n_enclosed=np.asarray(r.n_enclosed),
            min_radius_mean_A=r.min_radius_mean_A,
            min_radius_sd_A=r.min_radius_sd_A,
            min_radius_percentiles_A=np.asarray(r.min_radius_percentiles_A),
            closed_below_A=self.closed_below_A,
            closed_frames=np.asarray(r.closed_frames, dtype=np.int64),
            borderline_frames=np.asarray(r.borderline_frames, dtype=np.int64),
            reference_axis=self.reference_axis,
            axis_mode=self.axis_mode,
            reference_frame=self.reference_frame,
            align_selection=self.align_selection if self.axis_mode == "fixed" else None,
            radius_set=self.radius_set.name,
            step_A=self.step_A,
            max_radius_A=self.max_radius_A,
            n_atoms=len(self.atomgroup),
            source=_source_name(self.atomgroup),
            trajectory=os.path.basename(str(getattr(traj, "filename", "") or "")),
        )


_NO_DT_MESSAGE = "Reader has no dt information"


def _has_time_step(trajectory) -> bool:
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        _ = trajectory.ts.dt
    return not any(_NO_DT_MESSAGE in str(w.message) for w in caught)


def _source_name(atomgroup) -> str:
    name = getattr(atomgroup.universe, "filename", None)
    return os.path.basename(str(name)) if name else "Universe"


def profile_trajectory(
    topology,
    trajectory=None,
    *,
    selection: str | None = None,
    altloc: str = "occupancy",
    hydrogens: bool = True,
    waters: bool = False,
    ions: bool = False,
    hetero: bool = False,
    start: int | None = None,
    stop: int | None = None,
    step: int | None = None,
    backend="serial",
    n_workers: int | None = 1,
    scheduler: str | None = None,
    n_parts: int | None = None,
    quiet: bool = True,
    **options,
) -> TrajectoryProfiles:
    """Open a trajectory, run :class:`PoreProfileAnalysis` on a backend, return the summary.

    Parameters
    ----------
    topology : str or os.PathLike
        Topology or multi-model coordinate file (anything MDAnalysis reads).
    trajectory : str or os.PathLike, optional
        Trajectory file (DCD, XTC, TRR, multi-model PDB, ...).
    selection : str, optional
        MDAnalysis selection of the pore atoms, applied after cleaning (default:
        every polymer atom).
    altloc, hydrogens, waters, ions, hetero
        Alternate-location policy and atom kinds kept, as for
        :func:`poreprobe.io.structure.read_structure` (default: polymer atoms
        with hydrogens), judged on the first frame.
    start, stop, step : int, optional
        Frames to analyse (as for MDAnalysis ``run``).
    backend : {"serial", "multiprocessing", "dask"} or BackendBase
        ``"dask"`` connects to ``scheduler`` if given, else starts a local
        cluster of ``n_workers`` processes (see :func:`poreprobe.scale.parallel.open_backend`).
        A backend object (e.g. :class:`poreprobe.scale.parallel.DaskClientBackend`)
        is used as it is.
    n_workers : int, optional
        Local worker processes (default 1); with ``scheduler``, the workers to
        plan for (None: all the workers the scheduler knows).
    scheduler : str, optional
        Address of a running dask scheduler, e.g. ``"tcp://10.0.0.5:8786"``.
    n_parts : int, optional
        Blocks of frames to split the run into (default 4 per worker, at most
        one per frame).
    quiet : bool
        No progress bar.
    **options
        Keyword options of :class:`PoreProfileAnalysis`.

    Returns
    -------
    TrajectoryProfiles
    """
    from MDAnalysis.analysis.backends import BackendBase, BackendSerial

    from poreprobe.io.structure import open_universe
    from poreprobe.scale.parallel import open_backend

    topology = os.fspath(topology)
    if not os.path.isfile(topology):
        raise InputError(f"no such file: {topology}")
    if trajectory is not None:
        trajectory = os.fspath(trajectory)
        if not os.path.isfile(trajectory):
            raise InputError(f"no such file: {trajectory}")
    # absolute paths: workers of a cluster may run in another working directory
    topology = os.path.abspath(topology)
    trajectory = os.path.abspath(trajectory) if trajectory is not None else None
    if n_workers is not None:
        n_workers = check_int(n_workers, "n_workers", minimum=1)
    universe = open_universe(topology, trajectory)
    if not _has_time_step(universe.trajectory):
        # say it once here; a time step of 1 ps keeps workers from repeating it
        warnings.warn(
            f"{os.path.basename(topology)} gives no time step: frame times are "
            "reported as frame number x 1 ps",
            QualityWarning,
            stacklevel=2,
        )
        import MDAnalysis

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            universe = MDAnalysis.Universe(*[f for f in (topology, trajectory) if f], dt=1.0)
    traj = universe.trajectory
    for name, value in (("start", start), ("stop", stop), ("step", step)):
        if value is not None:
            check_int(value, name, minimum=1 if name == "step" else 0)
    frames = range(*slice(start, stop, step).indices(len(traj)))
    if len(frames) == 0:
        raise InputError(
            f"no frames selected (start={start}, stop={stop}, step={step}, "
            f"{len(traj)} frames in the trajectory)"
        )
    first = atoms_from_atomgroup(universe.atoms, source=os.path.basename(topology))
    atomgroup = universe.atoms[
        cleaned_indices(
            first,
            altloc=altloc,
            hydrogens=hydrogens,
            waters=waters,
            ions=ions,
            hetero=hetero,
            selection=selection,
        )
    ]
    analysis = PoreProfileAnalysis(atomgroup, **options)
    if isinstance(backend, BackendBase):
        context = contextlib.nullcontext(backend)
    else:
        context = open_backend(
            backend, n_workers=n_workers, scheduler=scheduler, quiet=quiet, desc="frame blocks"
        )
    from poreprobe.io.sanity import frame_read_errors

    with frame_read_errors(trajectory or topology), context as executor:
        if isinstance(executor, BackendSerial):  # a bar that advances frame by frame
            from poreprobe._progress import progress

            bar = progress(total=len(frames), desc="frames", quiet=quiet)
            analysis._frame_bar = bar
            try:
                analysis.run(start=start, stop=stop, step=step)
            finally:
                analysis._frame_bar = None
                bar.close()
        else:
            parts = n_parts if n_parts is not None else 4 * executor.n_workers
            parts = min(check_int(parts, "n_parts", minimum=1), len(frames))
            with warnings.catch_warnings():
                warnings.filterwarnings("ignore", message="Analysis not making use of all")
                warnings.filterwarnings("ignore", message=_NO_DT_MESSAGE)  # when serialised
                analysis.run(
                    start=start,
                    stop=stop,
                    step=step,
                    backend=executor,
                    n_parts=parts,
                    unsupported_backend=True,
                )
    result = analysis.summary()
    return replace(
        result,
        source=os.path.basename(topology),
        trajectory=os.path.basename(trajectory) if trajectory else "",
    )
