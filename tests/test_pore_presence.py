"""Is there a pore at all (poreprobe.geometry.pore_presence), and what commands say when not.

Entries in tests/data/ (cited by PDB ID and the primary citation of their JRNL record):

* 9LYZ: hen lysozyme with NAM-NAG-NAM; Kelly, Sielecki, Sykes, James and Phillips 1979,
  "X-ray crystallography of the binding of the bacterial cell wall trisaccharide
  NAM-NAG-NAM to lysozyme", Nature 282:875. A monomeric enzyme: no pore.
* 4XNW: P2Y1 receptor; Zhang et al. 2015, "Two disparate ligand-binding sites in the
  human P2Y1 receptor", Nature 520:317. A GPCR: no ion pore.
* 5VKE (Cuello, Cortes and Perozo 2017, eLife 6), 6F7A (Zabara et al. 2018, Nat. Commun.
  9:544), 5KLG (Tang et al. 2016, Nature 537:117): channels, each with a pore.

That a monomeric enzyme or a single GPCR has no transmembrane ion pore, and that these
channels have one, is textbook knowledge (common practice).
"""

from __future__ import annotations

import json
import os
import warnings

import pytest
from conftest import mdanalysis_test_file

import poreprobe as pp
from poreprobe.cli.main import main
from poreprobe.geometry.pore_presence import MIN_LENGTH_A, pore_presence

DATA = os.path.join(os.path.dirname(__file__), "data")


def entry(name):
    return os.path.join(DATA, f"{name}.pdb.gz")


def presence(path, trajectory=None, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        atoms = pp.read_structure(path, trajectory=trajectory, **kw)
    radii = pp.atom_radii_A(atoms)
    axis = pp.find_pore_axis(atoms, radii_A=radii)
    prof = pp.radius_profile(atoms, axis, radii_A=radii, step_A=0.5)
    return pore_presence(prof, atoms.coords_A, radii)


@pytest.mark.parametrize(
    ("name", "assembly"), [("9lyz", "auto"), ("4xnw", "auto"), ("4xnw", "deposited")]
)
def test_enzyme_and_receptor_have_no_pore(name, assembly):
    got = presence(entry(name), assembly=assembly)
    assert not got.pore_found
    assert got.walled_length_A < MIN_LENGTH_A
    assert "no pore found" in got.message()


@pytest.mark.parametrize("name", ["5vke", "6f7a", "5klg"])
def test_channels_have_a_pore(name):
    got = presence(entry(name))
    assert got.pore_found and got.walled_length_A >= MIN_LENGTH_A
    lo, hi = got.s_range_A
    assert hi - lo >= MIN_LENGTH_A


def test_small_real_channels_have_a_pore():
    gram = presence(mdanalysis_test_file("1grm_single.pdb"))
    frag = presence(
        mdanalysis_test_file("2r9r-1b.psf"), trajectory=mdanalysis_test_file("2r9r-1b.xyz")
    )
    assert gram.pore_found and frag.pore_found


def test_bad_criterion_arguments_are_input_errors():
    atoms = pp.read_structure(mdanalysis_test_file("1grm_single.pdb"))
    axis = pp.find_pore_axis(atoms)
    prof = pp.radius_profile(atoms, axis, step_A=0.5)
    radii = pp.atom_radii_A(atoms)
    with pytest.raises(pp.InputError):
        pore_presence(prof, atoms.coords_A, radii, n_directions=2)
    with pytest.raises(pp.InputError):
        pore_presence(prof, atoms.coords_A, radii, min_length_A=-1.0)


@pytest.mark.parametrize("command", ["profile", "check", "scan"])
def test_commands_say_no_pore_in_one_line_and_exit_0(command, tmp_path, capsys):
    out = tmp_path / "r.json"
    argv = [command, entry("9lyz"), "--json", str(out)]
    if command != "scan":
        argv.append("--no-chemistry")
    assert main(argv) == 0
    lines = capsys.readouterr().out.strip().splitlines()
    assert len(lines) == 1 and "no pore found" in lines[0]
    data = json.loads(out.read_text())
    assert data["pore_found"] is False and data["min_radius_A"] is None
    assert data["assembly"]["used"] == "1"


def test_pore_found_is_recorded_in_the_profile_json(tmp_path):
    out = tmp_path / "r.json"
    argv = ["profile", entry("5klg"), "--no-chemistry", "--quiet", "--json", str(out)]
    assert main(argv) == 0
    data = json.loads(out.read_text())
    assert data["pore_found"] is True and data["min_radius_A"] > 0
    assert data["pore_presence"]["walled_length_A"] >= MIN_LENGTH_A


def test_batch_rows_carry_the_flag(tmp_path):
    out = tmp_path / "b.json"
    code = main(["batch", entry("9lyz"), entry("5klg"), "--quiet", "--json", str(out)])
    assert code == 0
    rows = {os.path.basename(r["path"]): r for r in json.loads(out.read_text())["rows"]}
    assert rows["9lyz.pdb.gz"]["pore_found"] is False
    assert rows["9lyz.pdb.gz"]["min_radius_A"] is None
    assert rows["5klg.pdb.gz"]["pore_found"] is True
    assert rows["5klg.pdb.gz"]["min_radius_A"] > 0


def test_a_user_axis_is_not_tested(tmp_path, capsys):
    out = tmp_path / "r.json"
    axis = ["--axis-selections", "resid 1:40", "resid 90:129"]
    argv = ["profile", entry("9lyz"), *axis, "--no-chemistry", "--json", str(out)]
    assert main(argv) == 0
    assert "pore presence not tested" in capsys.readouterr().out
    data = json.loads(out.read_text())
    assert data["pore_found"] is None and data["pore_presence"]["not_tested"]
