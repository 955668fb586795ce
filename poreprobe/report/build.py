"""Everything a shared report shows, computed once: :func:`build_report` -> :class:`ReportData`.

The report gathers results poreprobe already computes elsewhere: the readiness
check (profile, lining, constrictions, findings, permeation verdict), the
probe-size scan and its capture curve, the match of a bench current when
bench numbers are given, the series-resistance breakdown and, with
``ensemble``, the coordinate-error bands. :func:`report_from_results` takes
results the caller already has (the demo); :func:`build_report` computes them
from a structure file. Every warning raised on the way is recorded and shown.
"""

from __future__ import annotations

import datetime
import hashlib
import os
import platform
import sys
import warnings
from dataclasses import dataclass, field
from importlib import metadata

from poreprobe._version import __version__
from poreprobe.errors import InputError

#: Libraries whose versions the provenance lists.
LIBRARIES = ("numpy", "scipy", "gemmi", "MDAnalysis", "matplotlib", "scikit-image", "jinja2")


@dataclass(frozen=True)
class Provenance:
    """What was run on what: file, checksum, versions, time and command line."""

    source: str
    sha256: str
    size_bytes: int
    created_utc: str
    command_line: str
    poreprobe_version: str
    python_version: str
    platform: str
    libraries: tuple[tuple[str, str], ...]
    settings: tuple[tuple[str, str], ...] = ()

    def to_dict(self) -> dict:
        return {
            "source": self.source,
            "sha256": self.sha256,
            "size_bytes": self.size_bytes,
            "created_utc": self.created_utc,
            "command_line": self.command_line,
            "poreprobe_version": self.poreprobe_version,
            "python_version": self.python_version,
            "platform": self.platform,
            "libraries": dict(self.libraries),
            "settings": dict(self.settings),
        }


def file_sha256(path) -> str:
    """Hex SHA-256 of a file's bytes."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    return digest.hexdigest()


def provenance_of(path, *, command_line: str | None = None, settings=None) -> Provenance:
    """Provenance of a run on the file at ``path`` (now, this interpreter)."""
    path = os.fspath(path)
    if not os.path.isfile(path):
        raise InputError(f"no such file: {path}")
    versions = []
    for name in LIBRARIES:
        try:
            versions.append((name, metadata.version(name)))
        except metadata.PackageNotFoundError:
            versions.append((name, "not installed"))
    if command_line is None:
        command_line = " ".join(["poreprobe", *sys.argv[1:]])
    return Provenance(
        source=os.path.basename(path),
        sha256=file_sha256(path),
        size_bytes=os.path.getsize(path),
        created_utc=datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M:%S UTC"),
        command_line=command_line,
        poreprobe_version=__version__,
        python_version=platform.python_version(),
        platform=platform.platform(terse=True),
        libraries=tuple(versions),
        settings=tuple((str(k), str(v)) for k, v in dict(settings or {}).items()),
    )


@dataclass(frozen=True)
class ReportData:
    """The results one report shows (JSON-ready dictionaries, plus the result objects).

    Attributes
    ----------
    provenance : Provenance
    check : QualityReport
        Profile, lining, constrictions, findings and the permeation verdict.
    scan : ProbeScan or None
    match : dict or None
        The layout of ``poreprobe match --json`` (bench numbers and the match).
    resistance : SeriesResistance or None
    ensemble : ProfileEnsemble or None
    warnings : tuple of str
        Every warning raised while the results were computed, once each.
    title : str
    """

    provenance: Provenance
    check: object
    scan: object | None = None
    match: dict | None = None
    resistance: object | None = None
    ensemble: object | None = None
    warnings: tuple[str, ...] = ()
    title: str = ""
    extra_notes: tuple[str, ...] = field(default_factory=tuple)


def report_from_results(
    provenance: Provenance,
    check,
    *,
    scan=None,
    match: dict | None = None,
    resistance=None,
    ensemble=None,
    warnings_seen=(),
    title: str | None = None,
    notes=(),
) -> ReportData:
    """A :class:`ReportData` from results computed elsewhere (e.g. by the demo)."""
    if not isinstance(provenance, Provenance):
        raise InputError(f"provenance must be a Provenance, got {type(provenance).__name__}")
    if not hasattr(check, "profile") or not hasattr(check, "verdict"):
        raise InputError("check must be a QualityReport (from check_model)")
    seen = list(dict.fromkeys(str(w) for w in warnings_seen))
    if ensemble is not None:
        seen += [w for w in ensemble.warnings if w not in seen]
    return ReportData(
        provenance=provenance,
        check=check,
        scan=scan,
        match=match,
        resistance=resistance,
        ensemble=ensemble,
        warnings=tuple(seen),
        title=title or f"Pore report: {provenance.source}",
        extra_notes=tuple(notes),
    )


def build_report(
    path,
    *,
    entry: str | None = None,
    select: str | None = None,
    radii: str = "bondi",
    ion: str = "K",
    probe_radii_A=None,
    bench: dict | None = None,
    electrolyte: str = "KCl",
    conc_mM: float = 150.0,
    ensemble: int = 0,
    ensemble_options: dict | None = None,
    command_line: str | None = None,
    quiet: bool = True,
    atoms=None,
    axis=None,
    walls=("polymer",),
    hydrogens: bool = True,
    scan_options: dict | None = None,
) -> ReportData:
    """Compute everything the report of one structure shows.

    Parameters
    ----------
    path : str or os.PathLike
        The channel model.
    entry, select : str, optional
        Entry selection (orients the axis; probes enter there) and atom selection.
    radii : str
        Radius set.
    ion : str
        Ion for the permeation verdict and the bench match.
    probe_radii_A : array_like, optional
        Probes of the scan (default 0.5 to 6 Å by 0.25).
    bench : dict, optional
        ``current_pA`` and ``conc_mM`` (and optionally ``current_sd_pA``,
        ``temperature_C``): a diffusion-limited current to match.
    electrolyte, conc_mM
        Bath of the resistance breakdown.
    ensemble : int
        Members of the coordinate-error ensemble (0: none).
    ensemble_options : dict, optional
        More keywords of :func:`poreprobe.scale.ensemble.profile_ensemble`.
    command_line : str, optional
        Recorded in the provenance (default: this process's arguments).
    quiet : bool
        No progress bars.
    atoms : Atoms, optional
        The model as read already (waters, ions and hetero groups kept, as for
        :func:`poreprobe.checks.quality.check_model`); default: read ``path``.
    axis : PoreAxis, optional
        The pore axis (default: found on the wall atoms, oriented by ``entry``).
    walls : tuple of str
        Atom kinds that count as pore walls.
    hydrogens : bool
        Count hydrogens in the walls.
    scan_options : dict, optional
        ``spacing_A``, ``from_end``, ``pore_radius_A`` of the probe scan.

    Returns
    -------
    ReportData
    """
    import numpy as np

    from poreprobe.bench.conductance import series_resistance
    from poreprobe.checks.quality import check_model
    from poreprobe.geometry.axis import find_pore_axis
    from poreprobe.geometry.probes import DEFAULT_PROBE_RADII_A, probe_scan
    from poreprobe.io.radii import atom_radii_A, get_radius_set
    from poreprobe.io.structure import read_structure

    rset = get_radius_set(radii)
    settings = {"radius set": rset.name, "ion": ion, "entry": entry or "(none)"}
    provenance = provenance_of(path, command_line=command_line, settings=settings)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        everything = (
            read_structure(path, waters=True, ions=True, hetero=True, selection=select)
            if atoms is None
            else atoms
        )
        mask = np.isin(everything.kind, tuple(walls))
        if not hydrogens:
            mask &= ~everything.is_hydrogen
        wall_atoms = everything.subset(mask)
        if axis is None:
            axis = find_pore_axis(wall_atoms, entry=entry, radii_A=atom_radii_A(wall_atoms, rset))
        check = check_model(
            everything,
            axis=axis,
            ion=ion,
            radii=rset,
            walls=tuple(walls),
            hydrogens=hydrogens,
            warn=False,
        )
        probes = DEFAULT_PROBE_RADII_A if probe_radii_A is None else probe_radii_A
        scan = probe_scan(
            wall_atoms,
            axis,
            probe_radii_A=probes,
            radii=rset,
            quiet=quiet,
            **dict(scan_options or {}),
        )
        walls = wall_atoms
        match = None if not bench else bench_match(scan, bench, ion)
        resistance = series_resistance(
            check.profile, atoms=walls, electrolyte=electrolyte, conc_mM=conc_mM
        )
        ens = None
        if ensemble:
            from poreprobe.scale.ensemble import profile_ensemble

            ens = profile_ensemble(
                walls,
                axis,
                n_members=ensemble,
                radii=rset,
                ion=ion,
                quiet=quiet,
                **dict(ensemble_options or {}),
            )
    return report_from_results(
        provenance,
        check,
        scan=scan,
        match=match,
        resistance=resistance,
        ensemble=ens,
        warnings_seen=[w.message for w in caught],
        notes=tuple(walls.notes),
    )


def bench_match(scan, bench: dict, ion: str) -> dict:
    """The ``poreprobe match --json`` layout for a bench current matched against ``scan``."""
    from poreprobe.bench.capture import estimate_capture_radius
    from poreprobe.bench.match import match_scan
    from poreprobe.bench.viscosity import diffusion_coefficient

    try:
        current = float(bench["current_pA"])
        conc = float(bench["conc_mM"])
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError("bench numbers need current_pA and conc_mM") from exc
    diffusion = diffusion_coefficient(ion, temperature_C=float(bench.get("temperature_C", 25.0)))
    est = estimate_capture_radius(
        current,
        conc,
        diffusion.diffusion_m2_per_s,
        current_sd_pA=float(bench.get("current_sd_pA", 0.0)),
    )
    match = match_scan(scan, est.capture_radius_A, est.capture_radius_sd_A, ion=ion)
    return {
        "note": "bench numbers as given; model estimates",
        "capture_radius_A": est.capture_radius_A,
        "capture_radius_sd_A": est.capture_radius_sd_A,
        "diffusion_m2_s": diffusion.diffusion_m2_per_s,
        "probe_radius_A_best": match.best_probe_radius_A,
        "probe_radius_A_intervals": [list(iv) for iv in match.intervals_A],
        "capture": est.to_dict(),
        "diffusion": diffusion.to_dict(),
        "match": match.to_dict(),
    }
