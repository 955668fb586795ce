"""Tests of ``poreprobe batch`` through cli.main."""

from __future__ import annotations

import json

import pytest
from _trajectory_data import RING_Z_A, frame_coords, ring_radii

from poreprobe.cli.main import main
from poreprobe.geometry.synthetic import ring_stack
from poreprobe.io.structure_writer import write_structure


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    folder = tmp_path_factory.mktemp("batch")
    for t in (0, 2):
        stack = ring_stack(ring_radii(t), RING_Z_A, atoms_per_ring=32, chains=4)
        write_structure(stack.with_coords(frame_coords(t)), folder / f"model_{t}.pdb")
    (folder / "model_5.pdb").write_text("HETATM garbage\n")
    return folder


def test_batch_reports_failed_file_and_exit_1(folder, tmp_path, capsys):
    out_csv, out_json = tmp_path / "summary.csv", tmp_path / "summary.json"
    code = main(
        [
            "batch",
            str(folder / "model_*.pdb"),
            "--step-A",
            "0.5",
            "--csv",
            str(out_csv),
            "--json",
            str(out_json),
        ]
    )
    assert code == 1  # one file failed; the others are in the table
    rows = [ln.split(",") for ln in out_csv.read_text().splitlines() if not ln.startswith("#")]
    assert [r[1] for r in rows[1:]] == ["ok", "ok", "failed"]
    assert rows[3][0].endswith("model_5.pdb") and rows[3][-1]
    data = json.loads(out_json.read_text())
    assert data["n_files"] == 3 and data["n_failed"] == 1
    stdout = capsys.readouterr().out
    assert "3 files, 1 failed" in stdout and "FAILED" in stdout


def test_batch_all_good_exit_0(folder, tmp_path):
    out = tmp_path / "s.csv"
    code = main(
        [
            "batch",
            str(folder / "model_0.pdb"),
            str(folder / "model_2.pdb"),
            "--step-A",
            "0.5",
            "--backend",
            "multiprocessing",
            "--workers",
            "2",
            "--csv",
            str(out),
            "--quiet",
        ]
    )
    assert code == 0
    assert out.read_text().count(",ok,") == 2


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--step-A", "-1"], "step_A must be > 0"),
        (["--trajectory", "x.dcd"], "--trajectory and --frame do not apply to batch"),
        (
            ["--backend", "serial", "--scheduler", "tcp://127.0.0.1:9", "--workers", "0"],
            "--workers must be >= 1",
        ),
    ],
)
def test_batch_bad_input_is_one_line(folder, tmp_path, capsys, extra, message):
    out = tmp_path / "never.csv"
    code = main(["batch", str(folder / "model_0.pdb"), "--csv", str(out), *extra])
    err = capsys.readouterr().err
    assert code == 2 and err.startswith("poreprobe: error: ") and message in err
    assert err.count("\n") == 1 and not out.exists()


def test_batch_capture_column(folder, tmp_path, capsys):
    out = tmp_path / "c.csv"
    code = main(
        [
            "batch",
            str(folder / "model_0.pdb"),
            "--step-A",
            "0.5",
            "--probe-radii-A",
            "1.0",
            "--csv",
            str(out),
        ]
    )
    assert code == 0
    rows = [ln.split(",") for ln in out.read_text().splitlines() if not ln.startswith("#")]
    column = rows[0].index("capture_radius_A_p1")
    # waist free radius 4 - 1.70 Å (Bondi 1964 r_C) minus the 1 Å probe (geometry)
    assert float(rows[1][column]) == pytest.approx(1.3, abs=0.01)
    assert "capture 1.30 Å (probe 1 Å)" in capsys.readouterr().out


def test_batch_bad_capture_probes(folder, capsys):
    code = main(["batch", str(folder / "model_0.pdb"), "--probe-radii-A", "2,1"])
    assert code == 2 and "--probe-radii-A must be increasing" in capsys.readouterr().err


def test_batch_check_columns(folder, tmp_path, capsys):
    out = tmp_path / "checked.csv"
    code = main(
        [
            "batch",
            str(folder / "model_0.pdb"),
            "--step-A",
            "0.5",
            "--check",
            "--ion",
            "Na",
            "--csv",
            str(out),
        ]
    )
    assert code == 0
    rows = [ln.split(",") for ln in out.read_text().splitlines() if not ln.startswith("#")]
    verdict = rows[0].index("verdict_Na")
    # narrowest radius 4 - 1.70 = 2.30 Å (geometry, Bondi 1964 r_C) is between the Na+
    # crystal radius 1.02 Å (Shannon 1976) and its hydrated radius 3.58 Å (Nightingale 1959)
    assert rows[1][verdict] == "dehydrated"
    assert "dehydrated for Na" in capsys.readouterr().out
