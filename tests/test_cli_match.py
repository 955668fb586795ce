"""``poreprobe match``: the calculator, its JSON, and one-line errors on bad input."""

import json

import pytest

from poreprobe.capture import estimate_capture_radius
from poreprobe.cli import main
from poreprobe.viscosity import diffusion_coefficient

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
    d = run_json(tmp_path, "--current-pA", "1.2", "--current-sd-pA", "0.1", "--conc-mM", "100",
                 "--ion", "K", "--relative-viscosity", "2.5", "--temperature-C", "22")
    diff = diffusion_coefficient("K", temperature_C=22, relative_viscosity=2.5)
    est = estimate_capture_radius(1.2, 100, diff.diffusion_m2_per_s, current_sd_pA=0.1,
                                  mc_samples=2000)
    assert d["diffusion_m2_s"] == pytest.approx(diff.diffusion_m2_per_s, rel=1e-12)
    assert d["capture_radius_A"] == pytest.approx(est.capture_radius_A, rel=1e-12)
    assert d["capture_radius_sd_A"] == pytest.approx(est.capture_radius_sd_A, rel=1e-12)
    assert d["capture_radius_mc_sd_A"] == pytest.approx(est.capture_radius_mc_sd_A, rel=1e-12)
    assert d["diffusion"]["relative_viscosity"] == 2.5


def test_viscogen_and_sem(tmp_path):
    d = run_json(tmp_path, "--current-pA", "3", "--current-sem-pA", "0.2", "--conc-mM", "100",
                 "--viscogen", "sucrose", "--viscogen-percent-w-w", "20", "--temperature-C", "20")
    # CRC 102nd ed., sucrose 20 % w/w at 20 °C: 1.945 mPa s vs water 1.002 mPa s.
    assert d["diffusion"]["relative_viscosity"] == pytest.approx(1.945 / 1.002, rel=1e-12)
    assert d["capture"]["current_uncertainty"] == "sem"


def test_explicit_diffusion_outside_table(tmp_path):
    d = run_json(tmp_path, "--current-pA", "2", "--conc-mM", "100", "--temperature-C", "37",
                 "--diffusion-m2-s", "2.5e-9", "--diffusion-sd-m2-s", "1e-10")
    assert d["diffusion_m2_s"] == 2.5e-9
    assert d["diffusion"]["method"] == "explicit"


def test_summary_printed(capsys):
    assert main(["match", "--current-pA", "10", "--conc-mM", "100", *FAST]) == 0
    out = capsys.readouterr().out
    assert "capture radius r_c" in out and "model estimate" in out


@pytest.mark.parametrize("args, message", [
    (["--current-pA", "0", "--conc-mM", "100"], "current_pA"),
    (["--current-pA", "-1.5", "--conc-mM", "100"], "current_pA"),
    (["--current-pA", "1", "--conc-mM", "0"], "conc_mM"),
    (["--current-pA", "1", "--conc-mM", "-10"], "conc_mM"),
    (["--current-pA", "1", "--conc-mM", "100", "--relative-viscosity", "0"],
     "relative_viscosity"),
    (["--current-pA", "1", "--conc-mM", "100", "--relative-viscosity", "-2"],
     "relative_viscosity"),
    (["--current-pA", "1", "--conc-mM", "100", "--ion", "Xe"], "unknown ion"),
    (["--current-pA", "1", "--conc-mM", "100", "--temperature-C", "45"],
     "outside the water-viscosity table"),
    (["--current-pA", "1", "--conc-mM", "100", "--diffusion-m2-s=-1e-9"],
     "diffusion_m2_per_s"),
    (["--current-pA", "1", "--conc-mM", "100", "--viscogen", "sucrose",
      "--viscogen-percent-w-w", "90"], "viscogen_percent_w_w"),
    (["--current-pA", "1", "--conc-mM", "100", "--current-sd-pA", "-0.1"], "current_sd_pA"),
    (["--current-pA", "1", "--conc-mM", "100", "--charge", "0"], "charge"),
    (["--current-pA", "abc", "--conc-mM", "100"], "current-pA"),
    (["--conc-mM", "100"], "current-pA"),
])
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
