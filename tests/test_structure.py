import gzip
import shutil

import numpy as np
import pytest

from poreprobe import InputError, read_structure, select
from poreprobe.io.cleaning import resolve_altlocs
from poreprobe.io.structure import atoms_from_atomgroup, open_universe

PDB_TEXT = """\
ATOM      1  N   ALA A   1       0.000   0.000   0.000  1.00 10.00           N
ATOM      2  CA  ALA A   1       1.458   0.000   0.000  1.00 10.00           C
ATOM      3  C   ALA A   1       2.009   1.420   0.000  1.00 10.00           C
ATOM      4  O   ALA A   1       1.251   2.390   0.000  1.00 10.00           O
ATOM      5  CB AALA A   1       1.988  -0.773  -1.199  0.40 10.00           C
ATOM      6  CB BALA A   1       1.900  -0.800  -1.100  0.60 12.00           C
ATOM      7  H   ALA A   1      -0.500   0.800   0.000  1.00 10.00           H
HETATM    8  O   HOH A 101       5.000   5.000   5.000  1.00 20.00           O
HETATM    9  K     K A 102       6.000   5.000   5.000  1.00 20.00           K
HETATM   10  C1  LIG A 103       7.000   5.000   5.000  1.00 20.00           C
HETATM   11  C2  LIG A 103       8.000   5.000   5.000  1.00 20.00           C
END
"""


@pytest.fixture()
def small_pdb(tmp_path):
    path = tmp_path / "small.pdb"
    path.write_text(PDB_TEXT)
    return path


def test_default_keeps_polymer_only_and_records_drops(small_pdb):
    atoms = read_structure(small_pdb)
    assert set(atoms.kind) == {"polymer"}
    assert len(atoms) == 6  # N CA C O CB H (one CB kept)
    assert any("water" in n for n in atoms.notes)
    assert any("ion" in n for n in atoms.notes)
    assert any("hetero" in n for n in atoms.notes)


def test_keep_options(small_pdb):
    atoms = read_structure(small_pdb, waters=True, ions=True, hetero=True, hydrogens=False)
    assert sorted(set(atoms.kind)) == ["hetero", "ion", "polymer", "water"]
    assert "H" not in set(atoms.element)
    assert (atoms.kind == "ion").sum() == 1 and atoms.element[atoms.kind == "ion"][0] == "K"


@pytest.mark.parametrize(
    ("policy", "occ"), [("occupancy", 0.6), ("first", 0.4), ("A", 0.4), ("B", 0.6)]
)
def test_altloc_policies(small_pdb, policy, occ):
    atoms = read_structure(small_pdb, altloc=policy)
    cb = atoms.name == "CB"
    assert cb.sum() == 1
    assert atoms.occupancy[cb][0] == pytest.approx(occ)
    assert atoms.altloc_policy == policy


def test_bad_altloc_policy(small_pdb):
    with pytest.raises(InputError, match="altloc"):
        read_structure(small_pdb, altloc="best")


def test_mmcif_and_gzip_agree(small_pdb, tmp_path):
    import gemmi

    st = gemmi.read_structure(str(small_pdb))
    cif = tmp_path / "small.cif"
    st.make_mmcif_document().write_file(str(cif))
    gz = tmp_path / "small.pdb.gz"
    with open(small_pdb, "rb") as src, gzip.open(gz, "wb") as dst:
        shutil.copyfileobj(src, dst)
    a, b, c = (read_structure(p) for p in (small_pdb, cif, gz))
    np.testing.assert_allclose(a.coords_A, b.coords_A)
    np.testing.assert_allclose(a.coords_A, c.coords_A)
    assert a.name.tolist() == b.name.tolist() == c.name.tolist()


def test_selection_language(small_pdb):
    atoms = read_structure(small_pdb)
    assert select(atoms, "name CA C").name.tolist() == ["CA", "C"]
    assert len(read_structure(small_pdb, selection="not element H")) == 5
    assert len(select(atoms, "segid A and resid 1")) == 6


def test_multi_model_choice(gramicidin_pdb, tmp_path):
    from conftest import mdanalysis_test_file

    path = mdanalysis_test_file("1grm_elNemo_mode7.pdb.bz2")
    first = read_structure(path, frame=0)
    later = read_structure(path, frame=5)
    assert len(first) == len(later)
    assert not np.allclose(first.coords_A, later.coords_A)
    with pytest.raises(InputError, match="frame must be between"):
        read_structure(path, frame=999)


def test_gemmi_model_index(tmp_path, small_pdb):
    two = tmp_path / "two.pdb"
    body = [ln for ln in PDB_TEXT.splitlines() if ln.startswith("ATOM")]
    moved = [ln[:30] + f"{float(ln[30:38]) + 1:8.3f}" + ln[38:] for ln in body]
    two.write_text(
        "MODEL        1\n"
        + "\n".join(body)
        + "\nENDMDL\nMODEL        2\n"
        + "\n".join(moved)
        + "\nENDMDL\nEND\n"
    )
    a = read_structure(two, model=0)
    b = read_structure(two, model=1)
    np.testing.assert_allclose(b.coords_A[:, 0] - a.coords_A[:, 0], 1.0, atol=1e-6)
    with pytest.raises(InputError, match="model must be between 0 and 1"):
        read_structure(two, model=2)


@pytest.mark.filterwarnings("ignore:missing dimension")
def test_mdanalysis_formats_roundtrip(gramicidin_pdb, tmp_path):
    universe = open_universe(gramicidin_pdb)
    gro = tmp_path / "g.gro"
    universe.atoms.write(str(gro))
    from_gro = read_structure(gro)
    from_pdb = read_structure(gramicidin_pdb)
    assert len(from_gro) == len(from_pdb)
    np.testing.assert_allclose(from_gro.coords_A, from_pdb.coords_A, atol=0.01)  # GRO: 0.01 Å
    assert set(from_gro.element) == {"C", "N", "O"}
    # 2 chains x (15 amino acids + the ethanolamine cap, whose carbon is also named CA)
    assert len(atoms_from_atomgroup(universe.select_atoms("name CA"))) == 32


@pytest.mark.parametrize(
    ("content", "match"),
    [("", "is empty"), ("this is not a structure\n", "cannot read|no atoms|holds no")],
)
def test_bad_files(tmp_path, content, match):
    path = tmp_path / "bad.pdb"
    path.write_text(content)
    with pytest.raises(InputError, match=match):
        read_structure(path)


def test_missing_file():
    with pytest.raises(InputError, match="no such file"):
        read_structure("/nonexistent/model.cif")


def test_selection_matching_nothing(small_pdb):
    with pytest.raises(InputError, match="matches no atoms"):
        read_structure(small_pdb, selection="resname XYZ")


def test_malformed_selection(small_pdb):
    with pytest.raises(InputError, match="bad selection"):
        read_structure(small_pdb, selection="name CA and and")


def test_resolve_altlocs_without_altlocs_is_identity(gramicidin_pdb):
    atoms = read_structure(gramicidin_pdb)
    assert len(resolve_altlocs(atoms, "first")) == len(atoms)


def test_atoms_are_read_only(small_pdb):
    atoms = read_structure(small_pdb)
    with pytest.raises(ValueError, match="read-only"):
        atoms.coords_A[0, 0] = 1.0


def test_psf_with_xyz_and_dcd_trajectories():
    from conftest import mdanalysis_test_file

    psf_xyz = read_structure(
        mdanalysis_test_file("2r9r-1b.psf"), trajectory=mdanalysis_test_file("2r9r-1b.xyz")
    )
    assert len(psf_xyz) > 0 and np.isfinite(psf_xyz.coords_A).all()
    psf = mdanalysis_test_file("adk.psf")
    dcd = mdanalysis_test_file("adk_dims.dcd")
    first = read_structure(psf, trajectory=dcd, frame=0)
    third = read_structure(psf, trajectory=dcd, frame=2)
    assert len(first) == len(third) > 3000  # adenylate kinase, all atoms
    assert "H" in set(first.element)
    assert not np.allclose(first.coords_A, third.coords_A)
    assert len(read_structure(psf, trajectory=dcd, hydrogens=False)) < len(first)
