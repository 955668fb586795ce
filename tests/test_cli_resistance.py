"""The ``poreprobe resistance`` command."""

import json

import numpy as np
import pytest

import poreprobe
from poreprobe.bench.conductance import series_resistance
from poreprobe.cli.main import main
from poreprobe.cli.resistance import parse_conductances
from poreprobe.geometry import synthetic
from poreprobe.io.structure_writer import write_structure

AXIS = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]


@pytest.fixture(scope="module")
def cylinder_pdb(tmp_path_factory):
    atoms, _, _ = synthetic.cylinder(6.7, 10.0)
    path = tmp_path_factory.mktemp("resistance") / "cylinder.pdb"
    write_structure(atoms, path)
    return str(path)


def run(argv) -> int:
    """main(argv), also when argparse itself exits."""
    try:
        return main(argv)
    except SystemExit as exc:
        return int(exc.code)


def error_lines(err: str) -> list[str]:
    return [line for line in err.splitlines() if line.startswith("poreprobe: error:")]


def test_forward_json(cylinder_pdb, tmp_path, capsys):
    out = tmp_path / "r.json"
    rc = main(["resistance", cylinder_pdb, *AXIS, "--resistivity-ohm-m", "0.8", "--json", str(out)])
    assert rc == 0
    data = json.loads(out.read_text())
    assert [s["name"] for s in data["segments"]] == ["entry access", "constriction", "far access"]
    assert sum(s["share_percent"] for s in data["segments"]) == pytest.approx(100)
    assert sum(s["resistance_Gohm"] for s in data["segments"]) == pytest.approx(
        data["resistance_Gohm"]
    )
    # a = 5 Å, L = 10 Å, rho = 0.8 Ohm m -> 550 pS (REFERENCE_VALUES §6; Hille 2001,
    # Hall 1975); the ring stack's profile ripples between rings, hence 1 %.
    assert data["conductance_pS"] == pytest.approx(550, rel=0.01)
    assert data["axis"]["method"] == "user"
    text = capsys.readouterr().out
    assert "model estimate" in text and "constriction" in text


def test_forward_matches_api(cylinder_pdb, tmp_path):
    out = tmp_path / "r.json"
    assert (
        main(
            [
                "resistance",
                cylinder_pdb,
                *AXIS,
                "--electrolyte",
                "KCl",
                "--conc-mM",
                "150",
                "--segments",
                "cavity:-5:-1",
                "vestibule:2:5",
                "--segment-selection",
                "filter",
                "resid 5:7",
                "--far-side-factor",
                "2",
                "--quiet",
                "--json",
                str(out),
            ]
        )
        == 0
    )
    data = json.loads(out.read_text())
    atoms = poreprobe.read_structure(cylinder_pdb)
    prof = poreprobe.radius_profile(atoms, poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user"))
    est = series_resistance(
        prof,
        atoms=atoms,
        electrolyte="KCl",
        conc_mM=150,
        segments=[("cavity", -5, -1), ("vestibule", 2, 5), ("filter", "resid 5:7")],
        far_side_factor=2,
    )
    assert [s["name"] for s in data["segments"]] == [s.name for s in est.segments]
    assert len(data["segments"]) == 6
    assert np.allclose(
        [s["resistance_Gohm"] for s in data["segments"]],
        [s.resistance_Gohm for s in est.segments],
        rtol=1e-9,
    )
    assert data["conductance_pS"] == pytest.approx(est.conductance_pS, rel=1e-9)


def test_inverse_only(tmp_path, capsys):
    out = tmp_path / "inv.json"
    g0, ge, gf = 1e3 / 3.5, 1e3 / 4.5, 1e3 / 4.0  # R_e = 1, R_m = 2, R_f = 0.5 GOhm
    rc = main(
        [
            "resistance",
            "--from-conductances",
            f"{g0}:2,{ge}:2,{gf}:2",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "2",
            "--json",
            str(out),
        ]
    )
    assert rc == 0
    data = json.loads(out.read_text())
    assert [s["name"] for s in data["segments"]] == ["entry side", "middle", "far side"]
    assert [s["resistance_Gohm"] for s in data["segments"]] == pytest.approx([1.0, 2.0, 0.5])
    assert all(s["resistance_sd_Gohm"] > 0 for s in data["segments"])
    assert data["conductance_pS"] == pytest.approx(g0)
    assert "kT" in capsys.readouterr().out


def test_forward_and_inverse_side_by_side(cylinder_pdb, tmp_path):
    out = tmp_path / "both.json"
    assert (
        main(
            [
                "resistance",
                cylinder_pdb,
                *AXIS,
                "--from-conductances",
                "500:10,420:10,450:9",
                "--raised-entry-factor",
                "1.5",
                "--raised-far-factor",
                "1.4",
                "--quiet",
                "--json",
                str(out),
            ]
        )
        == 0
    )
    data = json.loads(out.read_text())
    assert data["inverse"]["prediction"]["conductances_pS"]["control"] == pytest.approx(
        data["conductance_pS"]
    )


def test_parse_conductances():
    assert parse_conductances("300:5, 250 ,200:1.5") == [(300, 5), (250, 0), (200, 1.5)]


@pytest.mark.parametrize(
    "argv",
    [
        ["--segments", "a:-5:0.5", "b:0:5"],  # overlapping
        ["--segments", "a:-9:0"],  # out of range
        ["--segments", "a:x:0"],  # not a number
        ["--cuts-A", "8"],  # out of range
        ["--entry-side-factor", "0"],
        ["--far-side-factor", "-2"],
        ["--conductivity-S-m", "-1"],
        ["--electrolyte", "KCl", "--conc-mM", "5000"],
        ["--conductivity-S-m", "1", "--conc-mM", "100"],
        ["--bathed-by", "constriction=up"],
        ["--mobility-factor", "2"],
        [
            "--from-conductances=-300:5,250:5,200:5",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "2",
        ],
        [
            "--from-conductances",
            "300:-5,250:5,200:5",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "2",
        ],
        [
            "--from-conductances",
            "300:5,250:5",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "2",
        ],
        [
            "--from-conductances",
            "300:5,250:5,200:5",
            "--raised-entry-factor",
            "0",
            "--raised-far-factor",
            "2",
        ],
        [
            "--from-conductances",
            "300:5,250:5,200:5",
            "--raised-entry-factor",
            "1",
            "--raised-far-factor",
            "2",
        ],
        ["--from-conductances", "300:5,250:5,200:5", "--raised-entry-factor", "2"],
        ["--raised-entry-factor", "2", "--raised-far-factor", "2"],
    ],
)
def test_bad_input_exits_2_with_one_line_and_no_file(cylinder_pdb, tmp_path, capsys, argv):
    out = tmp_path / "bad.json"
    rc = run(["resistance", cylinder_pdb, *AXIS, *argv, "--json", str(out)])
    err = capsys.readouterr().err
    assert rc == 2
    assert len(error_lines(err)) == 1, err
    assert "Traceback" not in err
    assert not out.exists()
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize(
    "argv",
    [
        ["resistance"],
        [
            "resistance",
            "--from-conductances=-1,2,3",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "3",
        ],
        [
            "resistance",
            "--from-conductances",
            "1,2,3",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "x",
        ],
    ],
)
def test_bad_input_without_structure(tmp_path, capsys, argv):
    out = tmp_path / "bad.json"
    assert run([*argv, "--json", str(out)]) == 2
    assert len(error_lines(capsys.readouterr().err)) == 1
    assert not out.exists()


def test_gramicidin_breakdown(gramicidin_pdb, tmp_path):
    # A real channel (PDB 1GRM via MDAnalysisTests): the pore lies within the atoms, the
    # mouths open with the profile radius at the pore ends, the shares add up.
    out = tmp_path / "gA.json"
    assert (
        run(
            [
                "resistance",
                gramicidin_pdb,
                "--electrolyte",
                "KCl",
                "--conc-mM",
                "1000",
                "--quiet",
                "--json",
                str(out),
            ]
        )
        == 0
    )
    data = json.loads(out.read_text())
    atoms = poreprobe.read_structure(gramicidin_pdb)
    axis = poreprobe.PoreAxis(data["axis"]["point_A"], data["axis"]["direction"], "user")
    s_atoms = axis.s_A(atoms.coords_A)
    lo, hi = data["pore_s_range_A"]
    assert s_atoms.min() - 1e-6 <= lo < hi <= s_atoms.max() + 1e-6
    assert sum(s["share_percent"] for s in data["segments"]) == pytest.approx(100)
    assert data["segments"][0]["kind"] == data["segments"][-1]["kind"] == "access"
    assert 0 < data["narrowest_radius_A"] <= min(data["mouth_radius_A"].values())
    assert data["conductance_pS"] == pytest.approx(1e3 / data["resistance_Gohm"])
