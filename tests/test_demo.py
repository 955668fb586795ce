import json
import os
import subprocess
import sys

import numpy as np
import pytest

import poreprobe
from poreprobe.cli.main import main
from poreprobe.demo.run import DEMO_FILES, demo_path

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
K_CRYSTAL_RADIUS_A = 1.38  # Shannon 1976, Acta Cryst. A32:751, K+ CN 6
K_HYDRATED_RADIUS_A = 3.31  # Nightingale 1959, J. Phys. Chem. 63:1381


@pytest.fixture(scope="module")
def demo_out(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    assert main(["demo", "--out", str(out), "--quiet"]) == 0
    return out


def test_demo_writes_its_outputs(demo_out):
    summary = json.loads((demo_out / "summary.json").read_text())
    for name in summary["files"]:
        assert (demo_out / name).stat().st_size > 0, name
    for name in (
        "profile.json",
        "scan_channel.json",
        "scan_widened.json",
        "match.json",
        "resistance.json",
        "check.json",
        "check_closed.json",
        "compare.json",
        "trajectory.json",
        "profile.png",
        "report.html",
        "capture.png",
        "overlay.png",
    ):
        assert name in summary["files"]
    assert "invented" in summary["note"] and "not measurements" in summary["note"]


def test_demo_results_are_consistent(demo_out):
    summary = json.loads((demo_out / "summary.json").read_text())
    cap = summary["capture_radius_at_middle_probe_A"]
    stop = summary["stop_s_at_middle_probe_A"]
    # the widened-entrance mutant lets a middle-sized probe in much deeper (s grows from
    # the entry); in the channel it is caught in the mouth. (Its capture radius there is
    # not a monotonic signal: at the mouth the swept section is wide.)
    assert stop["widened"] > stop["channel"] + 10.0
    assert cap["widened"] > 0.5
    # the closed state is narrower than a bare K+ ion anywhere along its pore
    assert summary["closed_min_radius_A"] < K_CRYSTAL_RADIUS_A
    assert summary["closed_verdict"] == "closed"
    # the open channel admits a bare but not a hydrated K+; its narrowest radius lies
    # within the 0.25 Å borderline band above the crystal radius, so the verdict says so
    assert K_CRYSTAL_RADIUS_A <= summary["min_radius_A"] < K_HYDRATED_RADIUS_A
    assert summary["verdict"] == (
        "borderline" if summary["min_radius_A"] < K_CRYSTAL_RADIUS_A + 0.25 else "dehydrated"
    )
    profile = json.loads((demo_out / "profile.json").read_text())
    assert profile["min_radius_A"] == pytest.approx(summary["min_radius_A"])
    assert profile["axis"]["method"] == "symmetry C4"
    match = json.loads((demo_out / "match.json").read_text())
    assert match["capture_radius_A"] == pytest.approx(summary["measured_capture_radius_A"])
    resistance = json.loads((demo_out / "resistance.json").read_text())
    shares = [seg["share_percent"] for seg in resistance["segments"]]
    assert sum(shares) == pytest.approx(100.0)


def test_demo_models_are_clean(demo_out):
    report = json.loads((demo_out / "check.json").read_text())
    codes = {f["code"] for f in report["findings"]}
    assert codes == {"hydrogens-absent"}


def test_build_reproduces_committed_files_byte_for_byte():
    result = subprocess.run(
        [sys.executable, os.path.join(ROOT, "structures_demo", "build.py"), "--check"],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert result.returncode == 0, result.stdout + result.stderr


def test_demo_files_are_found_and_readable():
    for name in DEMO_FILES:
        assert os.path.isfile(demo_path(name))
    atoms = poreprobe.read_structure(demo_path("demo_channel"))
    assert len(atoms) == 2220
    assert sorted(set(atoms.chain)) == ["A", "B", "C", "D"]
    same = poreprobe.read_structure(demo_path("demo_channel", "pdb"))
    np.testing.assert_allclose(same.coords_A, atoms.coords_A, atol=1e-9)
    traj = poreprobe.io.structure.open_universe(
        demo_path("demo_channel", "pdb"), demo_path("demo_breathing")
    )
    assert len(traj.trajectory) == 50


def test_bad_demo_name():
    with pytest.raises(poreprobe.InputError, match="demo files are"):
        demo_path("demo_other")
    with pytest.raises(poreprobe.InputError, match="demo_breathing is .xtc"):
        demo_path("demo_breathing", "pdb")


def test_bundled_files_are_the_builder_models():
    # the committed files are what poreprobe.demo.channels builds, to file precision
    from poreprobe.demo import channels as demo_channels

    for name, variant in (
        ("demo_channel", "open"),
        ("demo_widened", "widened"),
        ("demo_closed", "closed"),
    ):
        built = demo_channels.demo_channel(variant)
        read = poreprobe.read_structure(demo_path(name))
        np.testing.assert_allclose(read.coords_A, built.coords_A, atol=5e-4 + 1e-9)
        np.testing.assert_allclose(read.b_factor, built.b_factor, atol=5e-3)


def test_demo_report_has_its_band(demo_out):
    summary = json.loads((demo_out / "summary.json").read_text())
    text = (demo_out / "report.html").read_text(encoding="utf-8")
    assert summary["ensemble_members"] == 8
    band = summary["ensemble_min_radius_A"]
    assert band["p5"] <= band["median"] <= band["p95"] and band["n"] == 8
    assert 'id="figure-ensemble"' in text and "8 perturbed copies" in text
    # displacing the atoms narrows the narrowest point on average (a minimum over atoms):
    # the model's "dehydrated" verdict becomes "closed" or "borderline" (README says so)
    assert band["median"] < summary["min_radius_A"]
    shares = summary["ensemble_verdict_shares"]
    assert shares["closed"] + shares["borderline"] == 1.0
    assert "invented" in text and "Model-based estimates" in text
