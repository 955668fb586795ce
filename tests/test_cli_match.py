"""``poreprobe match``: the calculator, its JSON, and one-line errors on bad input."""

import json

import numpy as np
import pytest

from poreprobe.bench.capture import diffusion_limited_current_pA, estimate_capture_radius
from poreprobe.bench.viscosity import diffusion_coefficient
from poreprobe.cli.main import main

FAST = ["--mc-samples", "2000"]


def exit_code(argv) -> int:
    """main()'s return value, or the code of the SystemExit argparse raises."""
    try:
        return main(argv)
    except SystemExit as exc:
        return exc.code


def run_json(tmp_path, *args):
    out = tmp_path / "out.json"
    rc = main(["match", *args, *FAST, "--quiet", "--json", str(out)])
    assert rc == 0
    return json.loads(out.read_text())


def test_worked_example_hemisphere(tmp_path):
    # REFERENCE_VALUES §6 (derived): K+ D = 1.957e-9 m²/s (CRC, 25 °C), a = 5 Å, c = 150 mM
    # give 88.98 pA for a hemisphere; the command must invert it to 5 Å.
    d = run_json(tmp_path, "--current-pA", "88.98", "--conc-mM", "150", "--ion", "K")
    assert d["capture_radius_A"] == pytest.approx(5.0, rel=1e-4)
    assert d["diffusion_m2_s"] == pytest.approx(1.957e-9, rel=1e-12)
    assert d["capture_radius_sd_A"] == 0.0
    assert "probe_radius_A_best" not in d


def test_worked_example_disk(tmp_path):
    # REFERENCE_VALUES §6 (derived): same inputs, disk (Berg & Purcell 1977) -> 56.65 pA.
    d = run_json(tmp_path, "--current-pA", "56.65", "--conc-mM", "150", "--geometry", "disk")
    assert d["capture_radius_A"] == pytest.approx(5.0, rel=1e-4)
    assert d["geometry"] == "disk"


def test_cli_matches_api(tmp_path):
    d = run_json(
        tmp_path,
        "--current-pA",
        "1.2",
        "--current-sd-pA",
        "0.1",
        "--conc-mM",
        "100",
        "--ion",
        "K",
        "--relative-viscosity",
        "2.5",
        "--temperature-C",
        "22",
    )
    diff = diffusion_coefficient("K", temperature_C=22, relative_viscosity=2.5)
    est = estimate_capture_radius(
        1.2, 100, diff.diffusion_m2_per_s, current_sd_pA=0.1, mc_samples=2000
    )
    assert d["diffusion_m2_s"] == pytest.approx(diff.diffusion_m2_per_s, rel=1e-12)
    assert d["capture_radius_A"] == pytest.approx(est.capture_radius_A, rel=1e-12)
    assert d["capture_radius_sd_A"] == pytest.approx(est.capture_radius_sd_A, rel=1e-12)
    assert d["capture_radius_mc_sd_A"] == pytest.approx(est.capture_radius_mc_sd_A, rel=1e-12)
    assert d["diffusion"]["relative_viscosity"] == 2.5


def test_viscogen_and_sem(tmp_path):
    d = run_json(
        tmp_path,
        "--current-pA",
        "3",
        "--current-sem-pA",
        "0.2",
        "--conc-mM",
        "100",
        "--viscogen",
        "sucrose",
        "--viscogen-percent-w-w",
        "20",
        "--temperature-C",
        "20",
    )
    # CRC 102nd ed., sucrose 20 % w/w at 20 °C: 1.945 mPa s vs water 1.002 mPa s.
    assert d["diffusion"]["relative_viscosity"] == pytest.approx(1.945 / 1.002, rel=1e-12)
    assert d["capture"]["current_uncertainty"] == "sem"


def test_explicit_diffusion_outside_table(tmp_path):
    d = run_json(
        tmp_path,
        "--current-pA",
        "2",
        "--conc-mM",
        "100",
        "--temperature-C",
        "37",
        "--diffusion-m2-per-s",
        "2.5e-9",
        "--diffusion-sd-m2-per-s",
        "1e-10",
    )
    assert d["diffusion_m2_s"] == 2.5e-9
    assert d["diffusion"]["method"] == "explicit"


def test_summary_printed(capsys):
    assert main(["match", "--current-pA", "10", "--conc-mM", "100", *FAST]) == 0
    out = capsys.readouterr().out
    assert "capture radius r_c" in out and "model estimate" in out


@pytest.mark.parametrize(
    "args, message",
    [
        (["--current-pA", "0", "--conc-mM", "100"], "current_pA"),
        (["--current-pA", "-1.5", "--conc-mM", "100"], "current_pA"),
        (["--current-pA", "1", "--conc-mM", "0"], "conc_mM"),
        (["--current-pA", "1", "--conc-mM", "-10"], "conc_mM"),
        (
            ["--current-pA", "1", "--conc-mM", "100", "--relative-viscosity", "0"],
            "relative_viscosity",
        ),
        (
            ["--current-pA", "1", "--conc-mM", "100", "--relative-viscosity", "-2"],
            "relative_viscosity",
        ),
        (["--current-pA", "1", "--conc-mM", "100", "--ion", "Xe"], "unknown ion"),
        (
            ["--current-pA", "1", "--conc-mM", "100", "--temperature-C", "45"],
            "outside the water-viscosity table",
        ),
        (
            ["--current-pA", "1", "--conc-mM", "100", "--diffusion-m2-per-s=-1e-9"],
            "diffusion_m2_per_s",
        ),
        (
            [
                "--current-pA",
                "1",
                "--conc-mM",
                "100",
                "--viscogen",
                "sucrose",
                "--viscogen-percent-w-w",
                "90",
            ],
            "viscogen_percent_w_w",
        ),
        (["--current-pA", "1", "--conc-mM", "100", "--current-sd-pA", "-0.1"], "current_sd_pA"),
        (["--current-pA", "1", "--conc-mM", "100", "--charge", "0"], "charge"),
        (["--current-pA", "abc", "--conc-mM", "100"], "current-pA"),
        (["--conc-mM", "100"], "current-pA"),
    ],
)
def test_bad_input_exit_2_one_line_no_file(tmp_path, capsys, args, message):
    out = tmp_path / "bad.json"
    assert exit_code(["match", *args, *FAST, "--json", str(out)]) == 2
    err = capsys.readouterr().err
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("poreprobe: error:")
    assert message in lines[0]
    assert "Traceback" not in err
    assert not out.exists()
    assert list(tmp_path.iterdir()) == []


# --- with a structure: the probe-size scan's capture curve ----------------------------

STRUCT = ["--probe-radii-A", "1:3:0.5", "--search-radius-A", "10", "--entry", "resid 1"]


def test_structure_match_cylinder(c4_cylinder_pdb, tmp_path):
    # Invented four-chain cylinder of carbon rings, ring radius 6 Å. With the Bondi C
    # radius 1.70 Å (Bondi 1964, Table I) the free radius is 6 - 1.7 = 4.3 Å, every probe
    # up to 3 Å passes, and c(p) = R_open - p ≈ 4.3 - p (geometry; the scalloped wall
    # adds a few hundredths). A current implying r_c = 2.3 Å must match p ≈ 2.0 Å.
    d_k = 1.957e-9  # K+ at 25 °C (CRC Handbook), m²/s
    current = diffusion_limited_current_pA(2.3, d_k, 100.0)
    d = run_json(
        tmp_path,
        c4_cylinder_pdb,
        "--current-pA",
        f"{current:.6f}",
        "--current-sd-pA",
        f"{0.05 * current:.6f}",
        "--conc-mM",
        "100",
        *STRUCT,
    )
    assert d["capture_radius_A"] == pytest.approx(2.3, rel=1e-6)
    assert d["probe_radius_A_best"] == pytest.approx(2.0, abs=0.15)
    ((lo, hi),) = d["probe_radius_A_intervals"]
    assert lo < d["probe_radius_A_best"] < hi
    # Slope of c(p) is -1, so the band r_c ± SD maps to p ± SD.
    assert hi - lo == pytest.approx(2 * d["capture_radius_sd_A"], rel=0.1)
    assert all(d["structure"]["passes"]) and d["structure"]["radius_set"] == "bondi"
    (iv,) = d["match"]["intervals"]  # one interval, with its probes' decision and level
    assert iv["rank"] == 1 and iv["passes"] == "all"
    assert iv["probe_radius_low_A"] == pytest.approx(lo)
    assert all(s is not None for s in iv["stop_s_A"])
    kinds = {c["kind"]: c for c in d["match"]["ion_radii"]}
    assert not kinds["hydrated"]["in_scan_range"]  # 3.31 Å > 3 Å scanned
    assert kinds["crystal"]["capture_radius_A"] == pytest.approx(4.3 - 1.38, abs=0.15)


def test_structure_match_equals_api(c4_cylinder_pdb, tmp_path):
    from poreprobe import find_pore_axis, probe_scan, read_structure
    from poreprobe.bench.match import match_scan

    d = run_json(
        tmp_path,
        c4_cylinder_pdb,
        "--current-pA",
        "40",
        "--current-sd-pA",
        "3",
        "--conc-mM",
        "100",
        *STRUCT,
    )
    atoms = read_structure(c4_cylinder_pdb)
    axis = find_pore_axis(atoms, entry="resid 1")
    scan = probe_scan(atoms, axis, probe_radii_A=[1.0, 1.5, 2.0, 2.5, 3.0], pore_radius_A=10)
    m = match_scan(scan, d["capture_radius_A"], d["capture_radius_sd_A"], ion="K")
    assert d["probe_radius_A_best"] == pytest.approx(m.best_probe_radius_A, abs=1e-9)
    np.testing.assert_allclose(
        d["probe_radius_A_intervals"], [list(iv) for iv in m.intervals_A], rtol=0, atol=1e-9
    )


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--current-pA", "0", "--conc-mM", "100"], "current_pA"),
        (
            ["--current-pA", "5", "--conc-mM", "100", "--probe-radii-A", "3:1:0.5"],
            "--probe-radii-A",
        ),
        (["--current-pA", "5", "--conc-mM", "100", "--entry", "resid 999"], "matches no atoms"),
    ],
)
def test_structure_bad_input(c4_cylinder_pdb, tmp_path, capsys, extra, message):
    out = tmp_path / "bad.json"
    assert exit_code(["match", c4_cylinder_pdb, *extra, *FAST, "--json", str(out)]) == 2
    lines = capsys.readouterr().err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("poreprobe: error:") and message in lines[0]
    assert not out.exists()


def test_missing_structure_file(tmp_path, capsys):
    out = tmp_path / "x.json"
    rc = exit_code(
        [
            "match",
            str(tmp_path / "nope.pdb"),
            "--current-pA",
            "5",
            "--conc-mM",
            "100",
            *FAST,
            "--json",
            str(out),
        ]
    )
    assert rc == 2 and not out.exists()
    assert capsys.readouterr().err.count("\n") == 1
