"""Tests of the ``poreprobe scan`` command."""

import json

import numpy as np
import pytest

from poreprobe.cli.common import parse_probe_radii
from poreprobe.cli.main import main
from poreprobe.errors import InputError
from poreprobe.geometry.synthetic import ring_stack
from poreprobe.io.structure_writer import write_structure

R_C = 1.70  # Bondi 1964, J. Phys. Chem. 68:441, Table I (carbon)


@pytest.fixture(scope="module")
def tetramer_pdb(tmp_path_factory):
    """Invented C4 hourglass channel: ring radius 4 + 5 (z/12)^2 Å, 25 rings, 4 chains."""
    z = np.arange(-12.0, 12.01, 1.0)
    atoms = ring_stack(4.0 + 5.0 * (z / 12.0) ** 2, z, atoms_per_ring=32, chains=4)
    path = tmp_path_factory.mktemp("scan") / "hourglass.pdb"
    write_structure(atoms, path)
    return str(path)


def test_scan_writes_json_csv_and_table(tetramer_pdb, tmp_path, capsys):
    out_json, out_csv = tmp_path / "scan.json", tmp_path / "scan.csv"
    code = main(
        [
            "scan",
            tetramer_pdb,
            "--entry",
            "resid 1:2",
            "--probe-radii-A",
            "1:3:1",
            "--json",
            str(out_json),
            "--csv",
            str(out_csv),
        ]
    )
    assert code == 0
    data = json.loads(out_json.read_text())
    cap = data["capture"]
    assert cap["probe_radius_A"] == [1.0, 2.0, 3.0]
    assert cap["passes"] == [True, True, False]
    # closed form: the waist ring (radius 4 Å at z = 0) leaves 4 - r = 2.3 Å; probes that
    # pass are limited there, so c(p) = 2.3 - p
    np.testing.assert_allclose(
        cap["capture_radius_A"][:2], [4.0 - R_C - 1.0, 4.0 - R_C - 2.0], atol=0.05
    )
    np.testing.assert_allclose(cap["stop_s_A"][:2], [0.0, 0.0], atol=0.6)
    assert cap["stop_s_A"][2] < -1.0  # the 3 Å probe stops before the waist, entry side
    for key in ("capture_radius_inscribed_A", "enters"):
        assert len(cap[key]) == 3
    assert len(data["profiles"]["accessible_radius_A"]) == 3
    lines = out_csv.read_text().splitlines()
    own = [ln for ln in lines if not ln.startswith("# provenance")]
    assert len(own) == 3 + 1 + 3  # its comments, the header, one row per probe
    assert sum(ln.startswith("# provenance") for ln in lines) >= 4
    table = capsys.readouterr().out
    assert "model-based estimate" in table and "capture_A" in table
    assert "largest probe that passes: 2.00" in table


def test_from_high_end_reverses_entry(tetramer_pdb, tmp_path):
    out = tmp_path / "high.json"
    assert (
        main(
            [
                "scan",
                tetramer_pdb,
                "--entry",
                "resid 1:2",
                "--entry-end",
                "high",
                "--probe-radii-A",
                "3:3:1",
                "--json",
                str(out),
                "--quiet",
            ]
        )
        == 0
    )
    data = json.loads(out.read_text())
    assert data["entry"] == "high" and data["capture"]["stop_s_A"][0] > 1.0


@pytest.mark.parametrize(
    "args, message",
    [
        (["--probe-radii-A=-1:3:1"], "START must be > 0"),
        (["--probe-radii-A", "3:1:0.5"], "STOP must be >= START"),
        (["--probe-radii-A", "1:3:0"], "STEP must be > 0"),
        (["--probe-radii-A", "a:b"], "must be numbers"),
        (["--entry", "resid 999"], "matches no atoms"),
        (["--entry", "resid 12:14"], "middle of the pore"),
    ],
)
def test_bad_input_exit_2_one_line_no_file(tetramer_pdb, tmp_path, capsys, args, message):
    out = tmp_path / "never.json"
    argv = ["scan", tetramer_pdb, "--json", str(out), "--probe-radii-A", "1:2:1"]
    if "--entry" not in args:
        argv += ["--entry", "resid 1:2"]
    code = main(argv + args)
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2
    assert len(err) == 1 and err[0].startswith("poreprobe: error:") and message in err[0]
    assert not out.exists()
    assert not list(tmp_path.iterdir())


def test_missing_output_folder_is_caught_before_work(tetramer_pdb, tmp_path, capsys):
    code = main(["scan", tetramer_pdb, "--csv", str(tmp_path / "no" / "x.csv")])
    assert code == 2 and "does not exist" in capsys.readouterr().err


def test_parse_probe_radii():
    probes = parse_probe_radii("0.5:6:0.25")
    assert len(probes) == 23 and probes[0] == 0.5 and probes[-1] == 6.0
    np.testing.assert_allclose(parse_probe_radii("1:2"), [1.0, 1.25, 1.5, 1.75, 2.0])
    np.testing.assert_allclose(parse_probe_radii("1.5, 2,2.5"), [1.5, 2.0, 2.5])
    np.testing.assert_allclose(parse_probe_radii("1"), [1.0])
    with pytest.raises(InputError, match="START:STOP:STEP"):
        parse_probe_radii("1:2:3:4")
    with pytest.raises(InputError, match="comma-separated"):
        parse_probe_radii("one,two")
    with pytest.raises(InputError, match="increasing"):
        parse_probe_radii("2,1")
    with pytest.raises(InputError, match="> 0"):
        parse_probe_radii("0,1")
