"""Many models at once: one summary row per file, on any backend.

Each file is read, its pore axis found and its radius profile computed exactly
as ``poreprobe profile`` does for one file (same options for every file), and,
when probe radii are given, the capture radius of each from the probe-size scan
(:func:`poreprobe.geometry.probes.probe_scan`, as ``poreprobe scan`` does), and, with
``check=True``, the number of findings per severity and the permeation verdict
of the readiness report (:func:`poreprobe.checks.quality.check_model`, as
``poreprobe check`` gives them with the same reading options). The
files are mapped one task each onto a backend of :mod:`poreprobe.scale.parallel`
(serial, a local process pool, or a dask cluster). A file that cannot be read
or profiled becomes a row with its error; it never stops the batch.
"""

from __future__ import annotations

import glob
import os
import warnings
from dataclasses import dataclass, field, replace
from functools import partial

from poreprobe._validate import check_choice, check_int, check_positive
from poreprobe._version import __version__
from poreprobe.errors import InputError, PoreNotFoundError, PoreprobeError, QualityWarning
from poreprobe.geometry.axis import find_pore_axis
from poreprobe.geometry.profile import radius_profile
from poreprobe.io.export import to_csv
from poreprobe.io.radii import DEFAULT_RADIUS_SET, RadiusSet, atom_radii_A, get_radius_set
from poreprobe.io.structure import read_structure

_GLOB_CHARS = frozenset("*?[")


@dataclass(frozen=True)
class BatchRow:
    """The summary of one file.

    Attributes
    ----------
    path : str
        The file as given.
    n_atoms : int
        Atoms profiled (0 when the file failed).
    min_radius_A, min_s_A : float
        Narrowest radius (Å) and its position along the axis (Å); NaN on failure.
    axis_method : str
        How the axis was found (``""`` on failure).
    min_residues : tuple of str
        Residues lining the narrowest point.
    pore_found : bool or None
        Whether the model encloses a pore (:mod:`poreprobe.geometry.pore_presence`);
        without one the narrowest radius is NaN (null) and no scan or check is run.
        None when the file failed or the axis was given by the user (not tested).
    assembly : str
        The biological assembly used (``"1 (built)"``, ``"deposited"``; see
        :mod:`poreprobe.io.assembly`).
    capture_radius_A : tuple of float
        Capture radius (Å, area-equivalent) for each of the summary's
        ``capture_probe_radii_A``; NaN where the scan failed for this file.
    findings : tuple of int
        With ``check``: findings per severity (high, medium, low, info); empty
        otherwise or when the check failed for this file.
    verdict : str
        With ``check``: ``"hydrated"``, ``"dehydrated"`` or ``"closed"`` for the ion.
    warnings : tuple of str
        Warnings raised while reading and profiling this file.
    error : str
        ``""`` for a profiled file, else the error (type and message).
    """

    path: str
    n_atoms: int = 0
    min_radius_A: float = float("nan")
    min_s_A: float = float("nan")
    axis_method: str = ""
    min_residues: tuple[str, ...] = ()
    pore_found: bool | None = None
    assembly: str = ""
    capture_radius_A: tuple[float, ...] = ()
    findings: tuple[int, ...] = ()
    verdict: str = ""
    warnings: tuple[str, ...] = ()
    error: str = ""

    @property
    def ok(self) -> bool:
        return not self.error

    def to_dict(self) -> dict:
        return {
            "path": self.path,
            "ok": self.ok,
            "n_atoms": self.n_atoms,
            "min_radius_A": self.min_radius_A,
            "min_s_A": self.min_s_A,
            "axis_method": self.axis_method,
            "min_residues": list(self.min_residues),
            "pore_found": self.pore_found,
            "assembly": self.assembly or None,
            "capture_radius_A": list(self.capture_radius_A),
            "findings": (
                dict(zip(_severities(), self.findings, strict=True)) if self.findings else None
            ),
            "verdict": self.verdict or None,
            "warnings": list(self.warnings),
            "error": self.error,
        }


@dataclass(frozen=True)
class BatchSummary:
    """One row per file, in the order the files were given.

    Attributes
    ----------
    rows : tuple of BatchRow
    radius_set : str
    step_A, margin_A, max_radius_A : float
        Profile options used for every file (Å).
    capture_probe_radii_A : tuple of float
        Probe radii (Å) whose capture radius each row gives (empty: none asked for).
    check_ion : str or None
        Ion of the readiness check's verdict (None: no check).
    version : str
    """

    rows: tuple[BatchRow, ...]
    radius_set: str
    step_A: float
    margin_A: float
    max_radius_A: float
    capture_probe_radii_A: tuple[float, ...] = ()
    check_ion: str | None = None
    version: str = field(default=__version__)

    @property
    def n_failed(self) -> int:
        return sum(not row.ok for row in self.rows)

    def to_dict(self) -> dict:
        return {
            "version": self.version,
            "kind": "radius profiles of many models (model-based estimates)",
            "radius_set": self.radius_set,
            "step_A": self.step_A,
            "margin_A": self.margin_A,
            "max_radius_A": self.max_radius_A,
            "capture_probe_radii_A": list(self.capture_probe_radii_A),
            "check_ion": self.check_ion,
            "n_files": len(self.rows),
            "n_failed": self.n_failed,
            "rows": [row.to_dict() for row in self.rows],
        }


@dataclass(frozen=True)
class _FileOptions:
    read: dict
    axis: dict
    radius_set: RadiusSet
    step_A: float
    margin_A: float
    max_radius_A: float
    capture_probe_radii_A: tuple[float, ...] = ()
    scan: dict = field(default_factory=dict)
    check_ion: str | None = None


def expand_paths(files) -> list[str]:
    """Turn file names and glob patterns into a list of paths, in the given order.

    A pattern (with ``*``, ``?`` or ``[``) is expanded and sorted; one that
    matches nothing is kept as it is, so that the batch reports it. Repeated
    paths are kept once.

    Raises
    ------
    InputError
        If ``files`` is empty.
    """
    if isinstance(files, str | os.PathLike):
        files = [files]
    paths: list[str] = []
    for item in files:
        item = os.fspath(item)
        if _GLOB_CHARS & set(item):
            matches = sorted(glob.glob(item, recursive=True))
            paths.extend(matches or [item])
        else:
            paths.append(item)
    paths = list(dict.fromkeys(paths))
    if not paths:
        raise InputError("files must name at least one file or pattern")
    return paths


def _error_text(exc: BaseException) -> str:
    message = str(exc).splitlines()[0] if str(exc) else ""
    if isinstance(exc, PoreprobeError):
        return message or type(exc).__name__
    return f"{type(exc).__name__}: {message}" if message else type(exc).__name__


def profile_file(path: str, options: _FileOptions) -> BatchRow:
    """Profile one file; any error becomes the row's ``error`` (never raised)."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            if _GLOB_CHARS & set(path) and not os.path.exists(path):
                raise InputError(f"pattern {path} matches no files")
            atoms = read_structure(path, **options.read)
            radii_A = atom_radii_A(atoms, options.radius_set)
            axis = find_pore_axis(atoms, radii_A=radii_A, **options.axis)
            prof = radius_profile(
                atoms,
                axis,
                radii_A=radii_A,
                step_A=options.step_A,
                margin_A=options.margin_A,
                max_radius_A=options.max_radius_A,
            )
            from poreprobe.geometry.pore_presence import applies_to, pore_presence

            found = (
                pore_presence(prof, atoms.coords_A, radii_A).pore_found
                if applies_to(axis)
                else None
            )
            if found is not False:
                capture = _capture_radii_A(atoms, axis, radii_A, options)
                findings, verdict = _check(path, axis, options)
            else:
                capture = tuple(float("nan") for _ in options.capture_probe_radii_A or ())
                findings, verdict = (), "no pore"
        except Exception as exc:  # a failed file is reported, never fatal to the batch
            return BatchRow(
                path=path,
                error=_error_text(exc),
                warnings=tuple(dict.fromkeys(str(w.message) for w in caught)),
            )
    return BatchRow(
        path=path,
        n_atoms=len(atoms),
        min_radius_A=prof.min_radius_A if found is not False else float("nan"),
        min_s_A=prof.min_s_A if found is not False else float("nan"),
        axis_method=axis.method,
        min_residues=prof.min_residues if found is not False else (),
        pore_found=found,
        assembly=(
            ""
            if atoms.assembly is None
            else atoms.assembly.used + (" (built)" if atoms.assembly.built else "")
        ),
        capture_radius_A=capture,
        findings=findings,
        verdict=verdict,
        warnings=tuple(dict.fromkeys(str(w.message) for w in caught)),
    )


def _capture_radii_A(atoms, axis, radii_A, options: _FileOptions) -> tuple[float, ...]:
    """Capture radius per chosen probe (NaN for all when the scan finds no enclosed section)."""
    if not options.capture_probe_radii_A:
        return ()
    from poreprobe.geometry.probes import probe_scan

    try:
        scan = probe_scan(
            atoms,
            axis,
            probe_radii_A=options.capture_probe_radii_A,
            radii_A=radii_A,
            **options.scan,
            error_estimate=False,  # one capture radius per model: no second grid
        )
    except PoreNotFoundError as exc:
        warnings.warn(f"capture radius: {exc}", QualityWarning, stacklevel=2)
        return tuple(float("nan") for _ in options.capture_probe_radii_A)
    return tuple(float(v) for v in scan.capture_radius_A)


def _check(path: str, axis, options: _FileOptions) -> tuple[tuple[int, ...], str]:
    """Findings per severity and the verdict, as ``poreprobe check`` reports them."""
    if options.check_ion is None:
        return (), ""
    from poreprobe.checks.quality import check_model

    read = options.read
    kept = {"hetero": read["hetero"], "ion": read["ions"], "water": read["waters"]}
    walls = ("polymer",) + tuple(kind for kind, keep in kept.items() if keep)
    try:
        everything = read_structure(
            path, **{**read, "hydrogens": True, "waters": True, "ions": True, "hetero": True}
        )
        report = check_model(
            everything,
            axis=axis,
            ion=options.check_ion,
            radii=options.radius_set,
            walls=walls,
            hydrogens=read["hydrogens"],
            step_A=options.step_A,
            margin_A=options.margin_A,
            max_radius_A=options.max_radius_A,
            warn=False,
        )
    except PoreprobeError as exc:
        warnings.warn(f"check: {exc}", QualityWarning, stacklevel=2)
        return (), ""
    counts = report.counts()
    return tuple(counts[sev] for sev in _severities()), report.verdict.verdict


def _severities() -> tuple[str, ...]:
    from poreprobe.checks.quality import SEVERITIES

    return SEVERITIES


def profile_files(
    files,
    *,
    backend="serial",
    n_workers: int | None = 1,
    scheduler: str | None = None,
    quiet: bool = True,
    radii: str | RadiusSet = DEFAULT_RADIUS_SET,
    radii_file=None,
    step_A: float = 0.2,
    margin_A: float = 2.0,
    max_radius_A: float = 20.0,
    model: int = 0,
    altloc: str = "occupancy",
    hydrogens: bool = True,
    waters: bool = False,
    ions: bool = False,
    hetero: bool = False,
    selection: str | None = None,
    assembly: str = "auto",
    axis_method: str = "auto",
    axis_point_A=None,
    axis_direction=None,
    axis_selections: tuple[str, str] | None = None,
    entry: str | None = None,
    capture_probe_radii_A=None,
    capture_from_end: str = "low",
    capture_spacing_A: float = 0.5,
    capture_pore_radius_A: float = 15.0,
    check: bool = False,
    ion: str = "K",
) -> BatchSummary:
    """Profile many structure files and summarise each in one row.

    Parameters
    ----------
    files : str, path or sequence of them
        File names and glob patterns (``"models/*.cif"``), see :func:`expand_paths`.
    backend : {"serial", "multiprocessing", "dask"} or BackendBase
        Where the files are profiled (one task per file); ``"dask"`` uses the
        scheduler at ``scheduler`` or starts a local cluster (see
        :func:`poreprobe.scale.parallel.open_backend`). A backend object, e.g.
        :class:`poreprobe.scale.parallel.DaskClientBackend`, is used as it is.
    n_workers : int, optional
        Local worker processes (default 1); with ``scheduler``, the workers to
        plan for (None: all the workers the scheduler knows).
    scheduler : str, optional
        Address of a running dask scheduler.
    quiet : bool
        No progress bar.
    radii, radii_file
        Radius set and optional TOML overrides (see :func:`poreprobe.get_radius_set`).
    step_A, margin_A, max_radius_A : float
        Profile options (Å), as in :func:`poreprobe.radius_profile`.
    model, altloc, hydrogens, waters, ions, hetero, selection, assembly
        Reading and cleaning options of :func:`poreprobe.read_structure`.
    axis_method, axis_point_A, axis_direction, axis_selections, entry
        Axis options of :func:`poreprobe.find_pore_axis`.
    capture_probe_radii_A : sequence of float, optional
        Probe radii (Å, increasing) whose capture radius to report per file.
    capture_from_end, capture_spacing_A, capture_pore_radius_A
        Scan options (``from_end``, ``spacing_A``, ``pore_radius_A`` of
        :func:`poreprobe.geometry.probes.probe_scan`).
    check : bool
        Also run the readiness check of each file (about three more profiles per
        file) and report its findings per severity and permeation verdict.
    ion : str
        Ion of the verdict (``"K"``, ``"Na"``, ``"Cl-"``, ...; :data:`poreprobe.bench.ions.IONS`).

    Returns
    -------
    BatchSummary
        One row per file, failed files included with their error.
    """
    from MDAnalysis.analysis.backends import BackendBase

    from poreprobe.scale.parallel import open_backend

    paths = expand_paths(files)
    options = _FileOptions(
        read={
            "model": check_int(model, "model", minimum=0),
            "altloc": altloc,
            "hydrogens": hydrogens,
            "waters": waters,
            "ions": ions,
            "hetero": hetero,
            "selection": selection,
            "assembly": assembly,
        },
        axis={
            "method": axis_method,
            "point_A": axis_point_A,
            "direction": axis_direction,
            "selections": axis_selections,
            "entry": entry,
        },
        radius_set=get_radius_set(radii, radii_file),
        step_A=check_positive(step_A, "step_A"),
        margin_A=check_positive(margin_A, "margin_A", allow_zero=True),
        max_radius_A=check_positive(max_radius_A, "max_radius_A"),
        capture_probe_radii_A=_check_probes(capture_probe_radii_A),
        scan={
            "from_end": check_choice(capture_from_end, "capture_from_end", ("low", "high")),
            "spacing_A": check_positive(capture_spacing_A, "capture_spacing_A"),
            "pore_radius_A": check_positive(capture_pore_radius_A, "capture_pore_radius_A"),
        },
        check_ion=_check_ion(ion) if check else None,
    )
    task = partial(profile_file, options=options)
    # absolute paths for the tasks (workers may run elsewhere); rows keep the names given
    tasks = [os.path.abspath(p) for p in paths]
    if isinstance(backend, BackendBase):
        rows = backend.apply(task, tasks)
    else:
        with open_backend(
            backend, n_workers=n_workers, scheduler=scheduler, quiet=quiet, desc="files"
        ) as executor:
            rows = executor.apply(task, tasks)
    rows = [replace(row, path=given) for row, given in zip(rows, paths, strict=True)]
    return BatchSummary(
        rows=tuple(rows),
        radius_set=options.radius_set.name,
        step_A=options.step_A,
        margin_A=options.margin_A,
        max_radius_A=options.max_radius_A,
        capture_probe_radii_A=options.capture_probe_radii_A,
        check_ion=options.check_ion,
    )


def _check_ion(ion: str) -> str:
    from poreprobe.bench.ions import get_ion

    get_ion(ion)  # unknown ions are refused here, not in every file's row
    return ion


def _check_probes(probe_radii_A) -> tuple[float, ...]:
    if probe_radii_A is None:
        return ()
    from poreprobe.geometry.reach import check_levels

    probes = check_levels(probe_radii_A, "capture_probe_radii_A")
    if len(probes) == 0 or probes[0] <= 0:
        raise InputError(f"capture_probe_radii_A must be > 0, got {probe_radii_A!r}")
    return tuple(float(p) for p in probes)


def batch_csv(summary: BatchSummary, path=None) -> str:
    """CSV, one row per file: narrowest radius, its position, capture radii, findings, error."""
    probes = summary.capture_probe_radii_A
    checked = summary.check_ion is not None
    check_header = (
        (*(f"findings_{sev}" for sev in _severities()), f"verdict_{summary.check_ion}")
        if checked
        else ()
    )
    header = (
        "file",
        "status",
        "n_atoms",
        "min_radius_A",
        "min_s_A",
        "pore_found",
        *(f"capture_radius_A_p{p:g}" for p in probes),
        *check_header,
        "axis_method",
        "narrowest_lined_by",
        "warnings",
        "error",
    )

    def check_cells(row):
        if not checked:
            return ()
        return (*(row.findings or ("",) * 4), row.verdict)

    rows = (
        (
            row.path,
            "ok" if row.ok else "failed",
            row.n_atoms,
            float(row.min_radius_A),
            float(row.min_s_A),
            "" if row.pore_found is None else str(row.pore_found).lower(),
            *(row.capture_radius_A if row.ok else (float("nan"),) * len(probes)),
            *check_cells(row),
            row.axis_method,
            " ".join(row.min_residues[:8]),
            len(row.warnings),
            row.error,
        )
        for row in summary.rows
    )
    comments = (
        f"poreprobe {summary.version} batch summary: {len(summary.rows)} files, "
        f"{summary.n_failed} failed",
        f"radius set: {summary.radius_set}; model-based estimates; lengths in Å; "
        f"plane step {summary.step_A:g} Å",
    )
    return to_csv(header, rows, path, comments)
