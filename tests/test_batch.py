"""Tests of poreprobe.scale.batch: one row per file, failures reported, the batch goes on."""

from __future__ import annotations

import numpy as np
import pytest
from _trajectory_data import RING_Z_A, frame_coords, ring_radii

from poreprobe import atom_radii_A, find_pore_axis, radius_profile, read_structure
from poreprobe.errors import InputError
from poreprobe.geometry.synthetic import ring_stack
from poreprobe.io.structure_writer import write_structure
from poreprobe.scale.batch import BatchSummary, batch_csv, expand_paths, profile_files


@pytest.fixture(scope="module")
def models(tmp_path_factory):
    """Three invented models (breathing hourglass frames 0-2) and two bad files."""
    folder = tmp_path_factory.mktemp("models")
    for t in range(3):
        stack = ring_stack(ring_radii(t), RING_Z_A, atoms_per_ring=32, chains=4)
        write_structure(stack.with_coords(frame_coords(t)), folder / f"model_{t}.pdb")
    (folder / "model_1_corrupt.pdb").write_bytes(b"ATOM      1  CA  ALA A\n\x00\xff\xfe junk")
    (folder / "empty.cif").write_text("")
    return folder


def test_batch_goes_past_bad_files(models):
    files = [
        str(models / "model_0.pdb"),
        str(models / "model_1_corrupt.pdb"),
        str(models / "empty.cif"),
        str(models / "missing.pdb"),
        str(models / "model_2.pdb"),
    ]
    summary = profile_files(files, step_A=0.5)
    assert isinstance(summary, BatchSummary)
    assert [row.path for row in summary.rows] == files
    assert [row.ok for row in summary.rows] == [True, False, False, False, True]
    assert summary.n_failed == 3
    errors = [row.error for row in summary.rows]
    assert "cannot read" in errors[1] and "model_1_corrupt.pdb" in errors[1]
    assert "is empty" in errors[2]
    assert "no such file" in errors[3]
    assert np.isnan(summary.rows[1].min_radius_A)


def test_rows_equal_single_structure_profile(models):
    summary = profile_files([str(models / "model_?.pdb")], step_A=0.5)
    assert len(summary.rows) == 3
    for row in summary.rows:
        atoms = read_structure(row.path)
        radii = atom_radii_A(atoms)
        prof = radius_profile(
            atoms, find_pore_axis(atoms, radii_A=radii), radii_A=radii, step_A=0.5
        )
        assert row.min_radius_A == prof.min_radius_A
        assert row.min_s_A == prof.min_s_A
        assert row.n_atoms == len(atoms) == 672
        assert row.axis_method == "symmetry C4"
    # closed form: waist ring radius minus r_C (Bondi 1964, Table I: 1.70 Å); the PDB's
    # 0.001 Å coordinates leave up to ~1e-3 Å
    expected = [ring_radii(t)[RING_Z_A == 0][0] - 1.70 for t in range(3)]
    np.testing.assert_allclose([r.min_radius_A for r in summary.rows], expected, atol=2e-3)


def test_multiprocessing_batch_matches_serial(models):
    files = [str(models / "*.pdb"), str(models / "nothing_*.cif")]
    serial = profile_files(files, step_A=0.5)
    pool = profile_files(files, step_A=0.5, backend="multiprocessing", n_workers=2)
    assert [repr(r) for r in pool.rows] == [repr(r) for r in serial.rows]
    assert serial.rows[-1].error == f"pattern {models / 'nothing_*.cif'} matches no files"


def test_csv_and_dict(models, tmp_path):
    summary = profile_files([str(models / "model_0.pdb"), str(models / "missing.pdb")], step_A=0.5)
    text = batch_csv(summary, tmp_path / "summary.csv")
    assert (tmp_path / "summary.csv").read_text() == text
    rows = [line.split(",") for line in text.splitlines() if not line.startswith("#")]
    assert rows[0][:4] == ["file", "status", "n_atoms", "min_radius_A"]
    assert rows[1][1] == "ok" and rows[2][1] == "failed"
    assert rows[2][3] == ""  # NaN as an empty cell
    data = summary.to_dict()
    assert data["n_failed"] == 1 and data["rows"][1]["error"].startswith("no such file")


def test_expand_paths(models):
    assert expand_paths(str(models / "model_[02].pdb")) == [
        str(models / "model_0.pdb"),
        str(models / "model_2.pdb"),
    ]
    assert expand_paths(["a.pdb", "a.pdb", "b.pdb"]) == ["a.pdb", "b.pdb"]
    with pytest.raises(InputError, match="at least one file"):
        expand_paths([])


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"step_A": -0.5}, "step_A must be > 0"),
        ({"radii": "nonesuch"}, "radii must be one of"),
        ({"backend": "threads"}, "backend must be one of"),
        ({"model": -1}, "model must be >= 0"),
    ],
)
def test_bad_options(models, kwargs, match):
    with pytest.raises(InputError, match=match):
        profile_files([str(models / "model_0.pdb")], **kwargs)


def test_capture_radii_per_file_equal_scan(models, tmp_path):
    from poreprobe.geometry.probes import probe_scan

    files = [str(models / "model_0.pdb"), str(models / "missing.pdb")]
    summary = profile_files(files, step_A=0.5, capture_probe_radii_A=[0.5, 1.0])
    assert summary.capture_probe_radii_A == (0.5, 1.0)
    atoms = read_structure(files[0])
    radii = atom_radii_A(atoms)
    scan = probe_scan(
        atoms, find_pore_axis(atoms, radii_A=radii), probe_radii_A=[0.5, 1.0], radii_A=radii
    )
    assert summary.rows[0].capture_radius_A == tuple(scan.capture_radius_A)
    # closed form: waist free radius 4 - 1.70 Å (Bondi 1964 r_C) minus the probe; the
    # 0.01 Å covers the scalloped wall and the PDB's 0.001 Å coordinates
    np.testing.assert_allclose(summary.rows[0].capture_radius_A, [1.8, 1.3], atol=0.01)
    header = [ln for ln in batch_csv(summary).splitlines() if not ln.startswith("#")][0]
    assert "capture_radius_A_p0.5,capture_radius_A_p1" in header
    with pytest.raises(InputError, match="capture_probe_radii_A"):
        profile_files(files, capture_probe_radii_A=[1.0, 0.5])


def test_check_counts_equal_readiness_report(gramicidin_pdb, models):
    from poreprobe.checks.quality import SEVERITIES, check_model

    summary = profile_files(
        [gramicidin_pdb, str(models / "missing.pdb")], step_A=0.5, check=True, ion="Na"
    )
    row = summary.rows[0]
    everything = read_structure(gramicidin_pdb, waters=True, ions=True, hetero=True)
    report = check_model(everything, ion="Na", step_A=0.5, warn=False)
    assert row.findings == tuple(report.counts()[sev] for sev in SEVERITIES)
    assert row.verdict == report.verdict.verdict
    assert row.min_radius_A == report.profile.min_radius_A
    assert summary.check_ion == "Na" and summary.rows[1].findings == ()
    header = [ln for ln in batch_csv(summary).splitlines() if not ln.startswith("#")][0]
    assert "findings_high,findings_medium,findings_low,findings_info,verdict_Na" in header
    with pytest.raises(InputError, match="unknown ion"):
        profile_files([gramicidin_pdb], check=True, ion="Xe")


def test_no_check_columns_unless_asked(models):
    summary = profile_files([str(models / "model_0.pdb")], step_A=0.5)
    assert summary.rows[0].findings == () and summary.check_ion is None
    assert "findings_" not in batch_csv(summary)
