"""Tests of ``poreprobe traj`` through cli.main."""

from __future__ import annotations

import json

import numpy as np
import pytest
from _trajectory_data import write_trajectory

from poreprobe.cli.main import main

pytestmark = pytest.mark.filterwarnings("ignore:Reader has no dt information")


@pytest.fixture(scope="module")
def breathing(tmp_path_factory):
    return write_trajectory(tmp_path_factory.mktemp("breathing"))


def test_traj_writes_json_and_csv(breathing, tmp_path, capsys):
    out_json, out_csv, out_frames = (tmp_path / n for n in ("t.json", "p.csv", "f.csv"))
    code = main(
        [
            "traj",
            breathing[0],
            "--trajectory",
            breathing[1],
            "--step-A",
            "0.5",
            "--json",
            str(out_json),
            "--csv",
            str(out_csv),
            "--frames-csv",
            str(out_frames),
        ]
    )
    assert code == 0
    data = json.loads(out_json.read_text())
    assert data["n_frames"] == 12 and data["radius_set"] == "bondi"
    assert data["closed_frames"] == [2, 10]
    # frame 2: waist ring at 4 - 1.2 Å, minus r_C 1.70 Å (Bondi 1964, Table I)
    assert data["per_frame"]["min_radius_A"][2] == pytest.approx(4 - 1.2 - 1.70, abs=1e-4)
    assert len(data["per_frame"]["radius_A"]) == 12
    planes = [ln for ln in out_csv.read_text().splitlines() if not ln.startswith("#")]
    assert len(planes) == 1 + len(data["s_A"])
    frames = [ln.split(",") for ln in out_frames.read_text().splitlines() if not ln.startswith("#")]
    assert [row[-1] for row in frames[1:]].count("1") == 2
    stdout = capsys.readouterr().out
    assert "closed below 1.13 Å: 2 of 12 frames (2, 10)" in stdout
    assert "borderline (1.13 to 1.63 Å): 4 of 12 frames" in stdout
    assert "model-based estimates" in stdout


def test_traj_multiprocessing_same_json(breathing, tmp_path):
    a, b = tmp_path / "a.json", tmp_path / "b.json"
    common = [
        "traj",
        breathing[0],
        "--trajectory",
        breathing[1],
        "--step-A",
        "0.5",
        "--frame-step",
        "2",
        "--axis-mode",
        "per-frame",
        "--quiet",
    ]
    assert main([*common, "--json", str(a)]) == 0
    assert (
        main(
            [
                *common,
                "--json",
                str(b),
                "--backend",
                "multiprocessing",
                "--workers",
                "2",
                "--parts",
                "3",
            ]
        )
        == 0
    )
    data, other = json.loads(a.read_text()), json.loads(b.read_text())
    # the runs differ only in what was asked (provenance), not in any result
    assert data.pop("provenance")["options"]["backend"] == "serial"
    assert other.pop("provenance")["options"]["backend"] == "multiprocessing"
    assert data == other
    assert data["per_frame"]["frame"] == [0, 2, 4, 6, 8, 10]
    assert np.isnan(np.array(data["per_frame"]["fit_rmsd_A"], dtype=float)).all()


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--step-A", "0"], "step_A must be > 0"),
        (["--select", "resname HOH"], "matches no atoms"),
        (
            ["--backend", "multiprocessing", "--scheduler", "tcp://127.0.0.1:9"],
            "--scheduler needs --backend dask",
        ),
        (["--workers", "0", "--backend", "multiprocessing"], "--workers must be >= 1"),
        (["--percentiles", "101"], "percentiles must be between 0"),
        (["--frame-start", "40"], "no frames selected"),
    ],
)
def test_traj_bad_input_is_one_line(breathing, tmp_path, capsys, extra, message):
    out = tmp_path / "never.json"
    code = main(["traj", breathing[0], "--trajectory", breathing[1], "--json", str(out), *extra])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("poreprobe: error: ") and message in err
    assert err.count("\n") == 1
    assert not out.exists()


def test_traj_missing_file(tmp_path, capsys):
    assert main(["traj", str(tmp_path / "none.pdb")]) == 2
    assert "no such file" in capsys.readouterr().err


def test_traj_takes_the_shared_structure_options(breathing, tmp_path):
    """traj reads its atoms with the same cleaning and selection options as every command."""
    import MDAnalysis as mda

    out = tmp_path / "sel.json"
    selection = "resid 1:6"
    expected = len(mda.Universe(*breathing).select_atoms(f"({selection}) and not name H*"))
    argv = ["traj", breathing[0], "--trajectory", breathing[1], "--step-A", "0.5"]
    argv += ["--frame-stop", "2", "--select", selection, "--no-hydrogens", "--altloc", "first"]
    assert main([*argv, "--json", str(out), "--quiet"]) == 0
    data = json.loads(out.read_text())
    assert data["n_atoms"] == expected and data["n_frames"] == 2


def test_summary_says_occluded_instead_of_a_negative_radius():
    from types import SimpleNamespace

    from poreprobe.cli.traj import summary_lines
    from poreprobe.geometry.axis import PoreAxis

    result = SimpleNamespace(
        reference_axis=PoreAxis([0, 0, 0], [0, 0, 1], "user"),
        min_radius_A=np.array([1.2, 0.0, 0.9]),
        min_s_A=np.array([1.0, 2.0, 3.0]),
        frames=np.array([0, 1, 2]),
        version="x",
        source="m.pdb",
        trajectory="t.xtc",
        n_atoms=10,
        n_frames=3,
        axis_mode="fixed",
        reference_frame=0,
        radius_set="bondi",
        s_A=np.arange(5.0),
        step_A=1.0,
        percentiles=(50,),
        min_radius_percentiles_A=np.array([0.9]),
        min_radius_mean_A=0.7,
        min_radius_sd_A=0.5,
        capture_radius_A=None,
        closed_frames=np.array([1]),
        borderline_frames=np.array([2]),
        closed_below_A=1.33,
    )
    text = "\n".join(summary_lines(result, "serial"))
    assert "narrowest of all: occluded (radius 0) at s = 2.0 Å in frame 1" in text
    assert "occluded in 1 of 3 frames" in text
    assert "-0." not in text
