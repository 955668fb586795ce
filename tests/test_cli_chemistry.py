"""Pore chemistry through ``poreprobe profile`` and ``poreprobe check``.

Real entry: CavAb, PDB 5KLG (Tang et al. 2016, Nature 537:117; JRNL), copied to tests/data/,
profiled on the symmetry axis of its four chains (see _real_channels.py).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from _real_channels import DATA, channel

from poreprobe.cli.main import main

ENTRY = f"{DATA}/5klg.pdb.gz"


@pytest.fixture(scope="module")
def axis_args():
    atoms, prof = channel("5klg")
    point, direction = prof.axis.point_A, prof.axis.direction
    return [
        "--axis-point",
        *map(str, point),
        "--axis-direction",
        *map(str, direction),
        "--step-A",
        "0.5",
    ]


@pytest.fixture(scope="module")
def profile_run(tmp_path_factory, axis_args):
    folder = tmp_path_factory.mktemp("chem_cli")
    out = {"json": folder / "p.json", "csv": folder / "c.csv", "png": folder / "p.png"}
    argv = ["profile", ENTRY, *axis_args, "--json", str(out["json"])]
    argv += ["--chemistry-csv", str(out["csv"]), "--figure", str(out["png"]), "--quiet"]
    assert main(argv) == 0
    return out


def test_profile_json_has_chemistry(profile_run):
    data = json.loads(profile_run["json"].read_text())
    chem = data["chemistry"]
    assert {"rings", "levels", "potential", "dewetting", "pH", "pka_source"} <= set(chem)
    ring = chem["rings"][0]
    assert {"s_A", "residue", "count", "charge_e", "hydropathy", "faces"} <= set(ring)
    assert len(chem["levels"]["s_A"]) == len(data["profile"]["s_A"])
    pot = chem["potential"]
    assert "not a Poisson-Boltzmann" in pot["caveat"] and "membrane" in pot["caveat"]
    assert pot["dielectric"] == 40.0 and pot["ionic_strength_M"] == pytest.approx(0.15)
    assert chem["hydropathy_scale"]["name"] == "kyte-doolittle"
    asp = [r for r in chem["rings"] if r["residue"] == "ASP1178"]
    assert asp and asp[0]["count"] == 4


def test_chemistry_csv_and_figure(profile_run):
    lines = profile_run["csv"].read_text().splitlines()
    header = next(line for line in lines if not line.startswith("#"))
    assert header.split(",")[:3] == ["s_A", "n_residues", "charge_e"]
    assert "ion_energy_kT" in header
    assert any("not a Poisson-Boltzmann" in line for line in lines if line.startswith("#"))
    assert profile_run["png"].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_check_lists_rings_entry_to_exit(tmp_path, axis_args, capsys):
    out = tmp_path / "check.json"
    assert main(["check", ENTRY, *axis_args, "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "rings of lining residues, entry to exit" in text
    block = text.split("rings of lining residues, entry to exit")[1].split("screened")[0]
    levels = [
        float(line.split("s =")[1].split("Å")[0])
        for line in block.splitlines()[1:]
        if "s =" in line
    ]
    assert len(levels) > 5 and levels == sorted(levels)
    assert "ring of 4 x ASP1177" in text
    assert "crude continuum estimate" in text
    data = json.loads(out.read_text())
    assert data["chemistry"]["rings"] and "verdict" in data


def test_options_change_the_chemistry(tmp_path, axis_args):
    def run(*extra):
        out = tmp_path / "o.json"
        assert main(["profile", ENTRY, *axis_args, "--quiet", "--json", str(out), *extra]) == 0
        return json.loads(out.read_text())["chemistry"]

    base = run()
    neutral = run("--charge-state", "ASP1177=0", "--dielectric", "20", "--conc-mM", "100")
    ring = {r["residue"]: r for r in neutral["rings"]}
    assert ring["ASP1177"]["charge_e"] == 0.0
    assert neutral["potential"]["debye_length_nm"] > base["potential"]["debye_length_nm"]
    # 1/eps scaling (point-charge Coulomb law): with the same charges, eps 20 doubles phi
    same = run("--dielectric", "20")
    np.testing.assert_allclose(
        np.array(same["potential"]["potential_mV"]),
        2 * np.array(base["potential"]["potential_mV"]),
        rtol=1e-9,
    )
    ww = run("--hydropathy-scale", "wimley-white", "--ph", "2")
    assert ww["hydropathy_scale"]["name"] == "wimley-white"
    # Henderson-Hasselbalch at pH 2 with the Asp pKa 3.5 (Grimsley et al. 2009): 4 x -1/(1+10^1.5)
    asp = {r["residue"]: r for r in ww["rings"]}["ASP1177"]
    assert asp["charge_e"] == pytest.approx(4 * -1 / (1 + 10**1.5), rel=1e-9)
    plain = tmp_path / "n.json"
    assert (
        main(["profile", ENTRY, *axis_args, "--quiet", "--no-chemistry", "--json", str(plain)]) == 0
    )
    assert "chemistry" not in json.loads(plain.read_text())


@pytest.mark.parametrize(
    "option, message",
    [
        (["--ph", "15"], "--ph must be between"),
        (["--dielectric", "0"], "--dielectric must be between"),
        (["--charge-state", "GLU=5"], "charge of GLU must be between"),
        (["--conc-mM", "-3"], "conc_mM must be > 0"),
    ],
)
def test_bad_chemistry_options(tmp_path, axis_args, capsys, option, message):
    out = tmp_path / "bad.json"
    assert main(["profile", ENTRY, *axis_args, "--json", str(out), *option]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error:") and message in err[0]
    assert not out.exists()
