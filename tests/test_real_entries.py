"""Real deposited entries end to end: assemblies, pore-forming chains, the narrowest point.

Entries in tests/data/ (copied from the shared real-structure folder), each cited by PDB ID
and the primary citation of its JRNL record:

* 5VKE: KcsA with Fab; Cuello, Cortes and Perozo 2017, "The gating cycle of a K+ channel
  at atomic resolution", eLife 6. One channel subunit plus a Fab in the file; REMARK 350
  builds the tetramer.
* 3PJS: full-length KcsA with Fabs; Uysal, Cuello, Cortes, Koide, Kossiakoff and Perozo
  2011, "Mechanism of activation gating in the full-length KcsA K+ channel", PNAS 108:11896.
* 6F7A: GLIC; Zabara, Chong, Martiel, Stark, Cromer, Speziale, Drummond and Mezzenga 2018,
  "Design of ultra-swollen lipidic mesophases for the crystallization of membrane proteins
  with large extracellular domains", Nat. Commun. 9:544.
* 5KLG: CavAb; Tang, El-Din, Swanson, Pryde, Scheuer, Zheng and Catterall 2016,
  "Structural basis for inhibition of a voltage-gated Ca2+ channel by Ca2+ antagonist
  drugs", Nature 537:117.

Facts of the trade used (common practice, textbook knowledge): K+ channels are tetramers
with the pore on the four-fold axis; the KcsA selectivity filter is residues 75-79 (TVGYG)
and the narrowest point of a K+ channel with heavy atoms lies in the filter or at the inner
helix bundle crossing; pentameric ligand-gated channels are five-fold symmetric.

Radii are checked against the brute-force reference of tests/_brute_profile_real.py
(independent code), never against poreprobe's own earlier output.
"""

from __future__ import annotations

import json
import os
import re
import warnings

import numpy as np
import pytest
from _brute_profile_real import brute_plane_radius_A

import poreprobe as pp
from poreprobe.cli.main import main

DATA = os.path.join(os.path.dirname(__file__), "data")
TOL_A = 0.02


def entry(name):
    return os.path.join(DATA, f"{name}.pdb.gz")


def model(name, path=None):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        atoms = pp.read_structure(path or entry(name))
    radii = pp.atom_radii_A(atoms)
    axis = pp.find_pore_axis(atoms, radii_A=radii)
    return atoms, radii, axis, pp.radius_profile(atoms, axis, radii_A=radii, step_A=0.5)


def resid_of(label: str) -> int:
    return int(re.search(r"(-?\d+)[A-Za-z]?$", label).group(1))


@pytest.fixture(scope="module")
def kcsa():
    return model("5vke")


def test_one_subunit_kcsa_builds_a_c4_tetramer_narrowest_in_the_filter(kcsa):
    atoms, radii, axis, prof = kcsa
    assert atoms.assembly.built and atoms.assembly.used == "1"
    assert axis.method == "symmetry C4" and axis.n_fold == 4
    assert sorted(axis.chains) == ["C1", "C2", "C3", "C4"]  # the Fab copies do not decide
    assert any("accessory" in n for n in axis.notes)
    residues = {resid_of(lab) for lab in prof.min_residues}
    chains = {lab.split(":")[0] for lab in prof.min_residues}
    assert chains <= {"C1", "C2", "C3", "C4"}
    assert residues and (residues <= set(range(75, 80)) or residues & set(range(100, 120)))
    assert prof.min_radius_A > 0


def test_kcsa_radii_match_the_brute_force_reference(kcsa):
    atoms, radii, axis, prof = kcsa
    i = int(np.nanargmin(prof.radius_A))
    enclosed = np.flatnonzero(np.isfinite(prof.radius_A))
    for j in [i, *enclosed[:: max(len(enclosed) // 5, 1)]]:
        ref = brute_plane_radius_A(atoms.coords_A, radii, axis.point_A, axis.direction, prof.s_A[j])
        assert abs(prof.radius_A[j] - ref) < TOL_A, (prof.s_A[j], prof.radius_A[j], ref)


def test_full_length_kcsa_axis_from_the_four_channel_chains():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        atoms = pp.read_structure(entry("3pjs"))
    axis = pp.find_pore_axis(atoms)
    assert axis.method == "symmetry C4"
    assert sorted(axis.chains) == ["K", "L", "M", "N"]
    assert axis.chains[0] == "K"  # canonical order starts at the smallest id
    note = next(n for n in axis.notes if "accessory" in n)
    assert "A, B, C, D" in note
    # the Fab chains alone do not make the axis: their two-fold is rejected or not chosen
    assert axis.symmetry_rmsd_A < 4.0


def test_glic_is_c5_and_matches_the_brute_force_reference():
    atoms, radii, axis, prof = model("6f7a")
    assert axis.method == "symmetry C5" and sorted(axis.chains) == list("ABCDE")
    i = int(np.nanargmin(prof.radius_A))
    ref = brute_plane_radius_A(atoms.coords_A, radii, axis.point_A, axis.direction, prof.s_A[i])
    assert abs(prof.min_radius_A - ref) < TOL_A


def test_cavab_is_c4_and_its_narrowest_plane_matches_the_brute_force_reference():
    from brute_force import Clearance, plane_radius

    atoms, radii, axis, prof = model("5klg")
    assert axis.method == "symmetry C4" and sorted(axis.chains) == list("ABCD")
    assert axis.symmetry_rmsd_A < 4.0
    # tests/brute_force.py takes the region by the profile's own neck criterion (f = 0.75);
    # the looser f = 0.5 of _brute_profile_real.py joins a side pocket here (1.13 Å)
    i = int(np.nanargmin(prof.radius_A))
    (ref, _), (loose, _) = plane_radius(
        Clearance(atoms.coords_A, radii),
        axis.point_A,
        axis.direction,
        float(prof.s_A[i]),
        neck_fractions=(0.75, 0.5),
    )
    assert abs(prof.min_radius_A - ref) < TOL_A
    assert loose > ref + 0.1  # the two definitions do differ at this plane


def test_pdb_to_mmcif_keeps_assembly_and_results(tmp_path, kcsa):
    gemmi = pytest.importorskip("gemmi")
    st = gemmi.read_structure(entry("5vke"))
    st.setup_entities()
    cif = tmp_path / "5vke.cif"
    st.make_mmcif_document().write_file(str(cif))
    atoms, _, axis, prof = model("5vke", str(cif))
    _, _, axis_pdb, prof_pdb = kcsa
    assert atoms.assembly.built and sorted(axis.chains) == sorted(axis_pdb.chains)
    assert abs(axis.direction @ axis_pdb.direction - 1.0) < 1e-9
    assert prof.min_radius_A == pytest.approx(prof_pdb.min_radius_A, abs=1e-6)
    assert prof.min_s_A == pytest.approx(prof_pdb.min_s_A, abs=1e-6)
    out_pdb, out_cif = tmp_path / "p.json", tmp_path / "c.json"
    for src, out in ((entry("5vke"), out_pdb), (str(cif), out_cif)):
        argv = ["profile", src, "--no-chemistry", "--quiet", "--step-A", "0.5", "--json"]
        assert main([*argv, str(out)]) == 0
    a, b = json.loads(out_pdb.read_text()), json.loads(out_cif.read_text())
    assert a["assembly"]["chain_renames"] == b["assembly"]["chain_renames"]
    assert a["min_radius_A"] == pytest.approx(b["min_radius_A"], abs=1e-6)
