"""The --ensemble options of profile, scan and check: text, JSON and one-line errors."""

from __future__ import annotations

import json
import os

import pytest

from poreprobe.cli.main import main
from poreprobe.demo.run import ENTRY, demo_path


@pytest.fixture(scope="module")
def channel():
    return demo_path("demo_channel")


def test_profile_ensemble_text_and_json(channel, tmp_path, capsys):
    out = tmp_path / "p.json"
    code = main(
        [
            "profile",
            channel,
            "--entry",
            ENTRY,
            "--no-chemistry",
            "--ensemble",
            "4",
            "--seed",
            "2",
            "--json",
            str(out),
        ]
    )
    assert code == 0
    text = capsys.readouterr().out
    narrowest = next(line for line in text.splitlines() if line.startswith("narrowest:"))
    assert "ensemble of 4" in narrowest and "[" in narrowest
    assert "model-based estimates" in text
    data = json.loads(out.read_text())
    ens = data["ensemble"]
    assert ens["n_members"] == 4 and ens["seed"] == 2 and ens["error_source"] == "bfactor"
    assert len(ens["members"]["min_radius_A"]) == 4
    assert len(ens["members"]["radius_A"][0]) == len(data["profile"]["s_A"])
    lo, hi = ens["summary"]["min_radius_A"]["p5"], ens["summary"]["min_radius_A"]["p95"]
    assert lo <= ens["summary"]["min_radius_A"]["median"] <= hi
    assert "caveat" in ens and "warnings" in data


def test_profile_ensemble_repeats_with_the_seed(channel, tmp_path):
    runs = []
    for name in ("a", "b"):
        out = tmp_path / f"{name}.json"
        assert (
            main(
                [
                    "profile",
                    channel,
                    "--no-chemistry",
                    "--ensemble",
                    "2",
                    "--quiet",
                    "--json",
                    str(out),
                ]
            )
            == 0
        )
        runs.append(json.loads(out.read_text())["ensemble"]["members"]["min_radius_A"])
    assert runs[0] == runs[1]


def test_uniform_error_and_figure(channel, tmp_path, capsys):
    fig = tmp_path / "band.svg"
    code = main(
        [
            "profile",
            channel,
            "--no-chemistry",
            "--ensemble",
            "2",
            "--error-source",
            "uniform",
            "--coordinate-error-A",
            "0.2",
            "--figure",
            str(fig),
        ]
    )
    assert code == 0
    assert "0.2 Å per direction" in capsys.readouterr().out
    assert fig.stat().st_size > 1000 and "5-95 %" in fig.read_text()


def test_check_ensemble_gives_verdict_shares(channel, tmp_path, capsys):
    out = tmp_path / "c.json"
    code = main(
        [
            "check",
            channel,
            "--entry",
            ENTRY,
            "--no-chemistry",
            "--ensemble",
            "3",
            "--backend",
            "multiprocessing",
            "--workers",
            "2",
            "--json",
            str(out),
        ]
    )
    assert code == 0
    text = capsys.readouterr().out
    assert "verdict for K+" in text
    narrowest = next(line for line in text.splitlines() if line.startswith("narrowest:"))
    assert "ensemble of 3" in narrowest
    shares = json.loads(out.read_text())["ensemble"]["summary"]["verdict"]["shares"]
    assert sum(shares.values()) == pytest.approx(1.0)


def test_scan_ensemble_bands_per_probe(channel, tmp_path, capsys):
    out = tmp_path / "s.json"
    code = main(
        [
            "scan",
            channel,
            "--entry",
            ENTRY,
            "--probe-radii-A",
            "1:2:1",
            "--ensemble",
            "2",
            "--json",
            str(out),
        ]
    )
    assert code == 0
    text = capsys.readouterr().out
    assert "members pass" in text and "ensemble of 2 (median [5-95 %])" in text
    probes = json.loads(out.read_text())["ensemble"]["summary"]["probes"]
    assert probes["probe_radius_A"] == [1.0, 2.0] and len(probes["capture_radius_A"]) == 2


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--ensemble", "-1"], "--ensemble"),
        (["--ensemble", "2", "--error-source", "uniform"], "--coordinate-error-A"),
        (["--ensemble", "2", "--error-source", "uniform", "--coordinate-error-A", "-1"], ">= 0"),
        (["--ensemble", "2", "--error-source", "resolution"], "--resolution-A"),
        (["--ensemble", "2", "--seed", "-3"], "--seed"),
        (["--ensemble", "2", "--workers", "0", "--backend", "multiprocessing"], "--workers"),
    ],
)
def test_bad_ensemble_options_are_one_line_errors(channel, tmp_path, capsys, extra, message):
    out = tmp_path / "never.json"
    assert main(["profile", channel, "--json", str(out), *extra]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error:") and message in err[0]
    assert not os.path.exists(out)


def test_match_ensemble_gives_probe_radius_bands(channel, tmp_path, capsys):
    out = tmp_path / "m.json"
    code = main(
        [
            "match",
            channel,
            "--entry",
            ENTRY,
            "--probe-radii-A",
            "1:2:0.5",
            "--current-pA",
            "20",
            "--current-sd-pA",
            "2",
            "--conc-mM",
            "150",
            "--ensemble",
            "2",
            "--json",
            str(out),
        ]
    )
    assert code == 0
    assert "match: best probe radius" in capsys.readouterr().out
    data = json.loads(out.read_text())
    assert "ensemble_lines" not in data
    assert data["ensemble"]["summary"]["match"]["best_probe_radius_A"]["n"] >= 1
    assert len(data["ensemble"]["members"]["probe_radius_intervals_A"]) == 2


def test_match_ensemble_needs_a_structure(capsys):
    args = ["match", "--current-pA", "20", "--conc-mM", "150", "--ensemble", "2"]
    assert main(args) == 2
    assert "give a STRUCTURE" in capsys.readouterr().err


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--error-source", "uniform"], "--error-source needs --ensemble"),
        (["--seed", "3"], "--seed needs --ensemble"),
        (["--ensemble", "2", "--coordinate-error-A", "0.2"], "needs --error-source uniform"),
        (["--ensemble", "2", "--resolution-A", "3"], "needs --error-source resolution"),
    ],
)
def test_ensemble_options_need_their_partners(channel, capsys, extra, message):
    assert main(["profile", channel, "--quiet", *extra]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and message in err[0]


def test_resolution_rule_in_check_with_resolution(channel, capsys):
    code = main(
        [
            "check",
            channel,
            "--no-chemistry",
            "--ensemble",
            "2",
            "--error-source",
            "resolution",
            "--resolution-A",
            "3.5",
        ]
    )
    assert code == 0
    assert "0.15 x resolution 3.5 Å" in capsys.readouterr().out


def test_match_figure_keeps_the_capture_marker_styles(channel, tmp_path):
    fig = tmp_path / "capture.svg"
    args = [
        "match",
        channel,
        "--entry",
        ENTRY,
        "--probe-radii-A",
        "0.5:4:0.5",
        "--current-pA",
        "20",
        "--conc-mM",
        "150",
        "--figure",
        str(fig),
        "--quiet",
    ]
    assert main(args) == 0
    text = fig.read_text()
    # the legend of the demo's capture figure: filled, open and crossed markers
    assert "probe passes (bottleneck)" in text and "probe stops in the pore" in text
    assert "scanned probe radii" not in text
