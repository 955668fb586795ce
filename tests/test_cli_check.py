"""``poreprobe check`` on the command line."""

import json

import numpy as np
import pytest
from helix_channel import build_channel

from poreprobe.cli.main import main
from poreprobe.io.structure import make_atoms
from poreprobe.io.structure_writer import write_structure


@pytest.fixture(scope="module")
def model_files(tmp_path_factory):
    folder = tmp_path_factory.mktemp("check_cli")
    clean = build_channel()
    write_structure(clean, folder / "clean.pdb")
    # damaged: A:LEU12 side chain truncated, and a water on the axis inside the pore
    keep = ~((clean.chain == "A") & (clean.resid == 12) & np.isin(clean.name, ["CG", "CD1", "CD2"]))
    cut = clean.subset(keep)
    water = make_atoms(
        [[0.0, 0.0, 5.0]],
        element=["O"],
        name=["O"],
        resname=["HOH"],
        resid=[101],
        chain=["W"],
        kind=["water"],
    )
    damaged = make_atoms(
        np.vstack([cut.coords_A, water.coords_A]),
        **{
            f: np.concatenate([getattr(cut, f), getattr(water, f)])
            for f in ("element", "name", "resname", "resid", "chain", "b_factor", "kind")
        },
    )
    write_structure(damaged, folder / "damaged.pdb")
    return folder


def test_check_writes_json_and_report(model_files, capsys):
    out = model_files / "clean.json"
    assert main(["check", str(model_files / "clean.pdb"), "--ion", "K", "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "readiness report" in text and "ring of 4 x LEU 12 side chains" in text
    assert "model-based estimates" in text
    data = json.loads(out.read_text())
    assert {"lining", "findings", "verdict", "constrictions", "sensitivity"} <= set(data)
    row = data["lining"][0]
    assert {"chain", "resname", "resid", "s_min_A", "s_max_A", "closest_A"} <= set(row)
    assert data["verdict"]["verdict"] == "dehydrated" and data["verdict"]["ion"] == "K+"
    assert [f["code"] for f in data["findings"]] == ["hydrogens-absent"]
    assert len(data["profile"]["s_A"]) == len(data["profile"]["radius_A"])


def test_report_sorted_by_severity(model_files, capsys):
    out = model_files / "damaged.json"
    csv_out = model_files / "lining.csv"
    assert (
        main(["check", str(model_files / "damaged.pdb"), "--json", str(out), "--csv", str(csv_out)])
        == 0
    )
    lines = [ln for ln in capsys.readouterr().out.splitlines() if ln.startswith("  [")]
    order = ["[HIGH", "[MEDIUM", "[LOW", "[INFO"]
    ranks = [next(k for k, tag in enumerate(order) if ln.strip().startswith(tag)) for ln in lines]
    assert ranks == sorted(ranks) and len(ranks) >= 3
    data = json.loads(out.read_text())
    by_code = {f["code"]: f for f in data["findings"]}
    assert by_code["missing-side-chain-atoms"]["residues"] == ["A:LEU12"]
    assert by_code["water-in-pore"]["residues"] == ["W:HOH101"]
    assert by_code["water-in-pore"]["details"]["counted_as_walls"] is False
    header = [ln for ln in csv_out.read_text().splitlines() if not ln.startswith("#")][0]
    assert header.startswith("chain,resname,resid,icode,s_min_A,s_max_A,closest_A")


def test_keep_waters_counts_them_as_walls(model_files, capsys):
    out = model_files / "walled.json"
    assert (
        main(
            [
                "check",
                str(model_files / "damaged.pdb"),
                "--keep-waters",
                "--json",
                str(out),
                "--quiet",
            ]
        )
        == 0
    )
    assert capsys.readouterr().out == ""
    data = json.loads(out.read_text())
    assert data["walls"] == ["polymer", "water"]
    water = [f for f in data["findings"] if f["code"] == "water-in-pore"]
    assert water[0]["details"]["counted_as_walls"] is True


@pytest.mark.parametrize(
    "args, message",
    [
        (["check", "missing.pdb"], "no such file"),
        (["check", "{clean}", "--ion", "Xx"], "unknown ion"),
        (["check", "{clean}", "--clash-fraction", "5"], "clash_fraction"),
        (["check", "{clean}", "--lining-distance-A", "-1"], "lining_distance_A"),
    ],
)
def test_bad_input_exits_2_with_one_line(model_files, capsys, args, message):
    out = model_files / "never.json"
    argv = [a.replace("{clean}", str(model_files / "clean.pdb")) for a in args]
    assert main(argv + ["--json", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("poreprobe: error:") and message in err
    assert not out.exists()
