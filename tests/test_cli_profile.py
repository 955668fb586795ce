import json
import os

import pytest

from poreprobe.cli.main import main


def _run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


def test_profile_writes_json_and_csv(c4_cylinder_pdb, tmp_path, capsys):
    js, cs = tmp_path / "p.json", tmp_path / "p.csv"
    code, out, err = _run(
        ["profile", c4_cylinder_pdb, "--json", str(js), "--csv", str(cs), "--step-A", "0.5"], capsys
    )
    assert code == 0, err
    data = json.loads(js.read_text())
    for key in ("point_A", "direction", "method"):
        assert key in data["axis"]
    assert data["axis"]["method"] == "symmetry C4"
    assert data["radius_set"] == "bondi"
    assert len(data["profile"]["s_A"]) == len(data["profile"]["radius_A"])
    assert len(data["profile"]["center_A"][0]) == 3
    assert data["min_radius_A"] == pytest.approx(6.0 - 1.7, abs=0.01)  # ring 6 Å, Bondi C
    assert "min_s_A" in data and data["version"]
    lines = [ln for ln in cs.read_text().splitlines() if not ln.startswith("#")]
    assert lines[0] == ("s_A,radius_A,center_x_A,center_y_A,center_z_A,occluded,signed_clearance_A")
    assert len(lines) == len(data["profile"]["s_A"]) + 1
    assert "narrowest: radius 4.30 Å" in out
    assert "model-based estimate" in out


def test_quiet_prints_nothing(c4_cylinder_pdb, capsys):
    code, out, _ = _run(["profile", c4_cylinder_pdb, "--quiet", "--step-A", "1"], capsys)
    assert code == 0 and out == ""


def _one_line_error(code, err):
    assert code == 2
    lines = err.strip().splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("poreprobe: error: ")
    assert "Traceback" not in err


@pytest.mark.parametrize(
    ("content", "extra"),
    [
        ("", []),  # empty file
        ("not a structure at all\n", []),  # not a structure
        (None, ["--select", "resname XYZ"]),  # no atoms after selection
        (None, ["--select", "index 0"]),  # a single atom
        (None, ["--radii", "mine"]),  # unknown option value
        (None, ["--axis-method", "guess"]),  # unknown option value
        (None, ["--axis-direction", "0", "0", "0"]),  # zero-length axis
        (None, ["--step-A", "-1"]),  # bad number
        (None, ["--altloc", "best"]),  # unknown altloc policy
        (None, ["--entry", "resname XYZ"]),  # entry matches nothing
    ],
)
def test_bad_input_is_one_line_exit_2_and_no_file(
    content, extra, c4_cylinder_pdb, tmp_path, capsys
):
    path = c4_cylinder_pdb
    if content is not None:
        path = str(tmp_path / "bad.pdb")
        with open(path, "w") as fh:
            fh.write(content)
    out_json = tmp_path / "out.json"
    code = main(["profile", path, "--json", str(out_json), *extra])
    _, err = capsys.readouterr()
    _one_line_error(code, err)
    assert not out_json.exists()
    assert not [f for f in os.listdir(tmp_path) if f.startswith(".poreprobe-")]


def test_missing_output_folder(c4_cylinder_pdb, tmp_path, capsys):
    code = main(["profile", c4_cylinder_pdb, "--json", str(tmp_path / "no" / "p.json")])
    _, err = capsys.readouterr()
    _one_line_error(code, err)


def test_help_lists_commands(capsys):
    assert main(["--help"]) == 0
    assert "profile" in capsys.readouterr().out


def test_outputs_get_the_usual_file_mode(c4_cylinder_pdb, tmp_path):
    out = tmp_path / "p.json"
    assert main(["profile", c4_cylinder_pdb, "--json", str(out), "--quiet"]) == 0
    mask = os.umask(0)
    os.umask(mask)
    assert (out.stat().st_mode & 0o777) == (0o666 & ~mask)
