"""``poreprobe compare`` on the command line."""

import json

import numpy as np
import pytest
from helix_channel import build_channel

from poreprobe.cli.main import main
from poreprobe.io.structure_writer import write_structure


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("compare_cli")
    clean = build_channel()
    write_structure(clean, folder / "wt.pdb")
    # the "mutant": every residue 19 pulled 0.5 Å away from the axis, in the xy-plane
    coords = clean.coords_A.copy()
    for ch in "ABCD":
        rows = (clean.chain == ch) & (clean.resid == 19)
        ca = clean.coords_A[rows & (clean.name == "CA")][0]
        coords[rows] += 0.5 * np.array([ca[0], ca[1], 0.0]) / np.hypot(ca[0], ca[1])
    write_structure(clean.with_coords(coords), folder / "mut.pdb")
    return folder


def test_compare_two_models(files, capsys):
    out, csv_out = files / "cmp.json", files / "cmp.csv"
    argv = [
        "compare",
        str(files / "wt.pdb"),
        str(files / "mut.pdb"),
        "--reference",
        "name CA and not resid 19",
        "--json",
        str(out),
        "--csv",
        str(csv_out),
    ]
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert "one axial frame" in text and "VAL 19" in text
    data = json.loads(out.read_text())
    assert data["reference_selection"] == "name CA and not resid 19"
    shifts = {s["lined_by"]: s for s in data["constriction_shifts"]}
    val = shifts["ring of 4 x VAL 19 side chains"]
    assert 0.3 < val["delta_radius_A"] <= 0.5 + 1e-6  # at most the 0.5 Å pull
    assert shifts["ring of 4 x LEU 12 side chains"]["delta_radius_A"] == pytest.approx(
        0.0, abs=0.002
    )  # PDB rounding only
    rows = [ln for ln in csv_out.read_text().splitlines() if not ln.startswith("#")]
    assert rows[0].count(",") == 3  # s, two radii, one difference


def test_compare_with_itself(files, capsys):
    out = files / "self.json"
    assert (
        main(
            ["compare", str(files / "wt.pdb"), str(files / "wt.pdb"), "--json", str(out), "--quiet"]
        )
        == 0
    )
    data = json.loads(out.read_text())
    diffs = [d for d in list(data["profile"]["difference_A"].values())[1] if d is not None]
    assert max(abs(d) for d in diffs) < 1e-9


@pytest.mark.parametrize(
    "extra, message",
    [
        ([], "at least two structures"),
        (["{wt}", "--reference", "resname ZZZ"], "matches no atoms"),
        (["{wt}", "--step-A", "0"], "step_A"),
    ],
)
def test_bad_input_exits_2_with_one_line(files, capsys, extra, message):
    out = files / "never.json"
    argv = (
        ["compare", str(files / "wt.pdb")]
        + [a.replace("{wt}", str(files / "wt.pdb")) for a in extra]
        + ["--json", str(out)]
    )
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("poreprobe: error:") and message in err
    assert not out.exists()
