import warnings

import gemmi
import numpy as np
import pytest

from poreprobe import InputError, QualityWarning, atom_radii_A, get_radius_set, make_atoms
from poreprobe.cli.main import main
from poreprobe.geometry import synthetic
from poreprobe.io.radii import RADIUS_SETS
from poreprobe.io.writer import write_structure


@pytest.mark.parametrize("element", sorted(set(RADIUS_SETS["bondi"]) - {"D"}))
def test_bondi_matches_gemmi_table(element):
    # Bondi 1964, J. Phys. Chem. 68:441, Table I; gemmi's element table carries the same
    # values (cross-check of our transcription).
    assert RADIUS_SETS["bondi"][element] == pytest.approx(
        gemmi.Element(element.capitalize()).vdw_r, abs=1e-3
    )


def test_bondi_biomolecular_values():
    # Bondi 1964, Table I: H 1.20, C 1.70, N 1.55, O 1.52, S 1.80, P 1.80, Se 1.90 Å.
    expected = {"H": 1.20, "C": 1.70, "N": 1.55, "O": 1.52, "S": 1.80, "P": 1.80, "SE": 1.90}
    for elem, value in expected.items():
        assert RADIUS_SETS["bondi"][elem] == value


def test_alvarez_values():
    # Alvarez 2013, Dalton Trans. 42:8617, Table 1: H 1.20, C 1.77, N 1.66, O 1.50, S 1.89,
    # P 1.90, Se 1.82 Å.
    expected = {"H": 1.20, "C": 1.77, "N": 1.66, "O": 1.50, "S": 1.89, "P": 1.90, "SE": 1.82}
    assert {k: RADIUS_SETS["alvarez"][k] for k in expected} == expected


def _atoms():
    return make_atoms(
        np.arange(12.0).reshape(4, 3),
        element=["C", "O", "N", "XX"],
        name=["CA", "O", "NZ", "Q"],
        resname=["ALA", "ALA", "LYS", "UNL"],
    )


def test_unknown_element_warns_and_never_zero():
    with pytest.warns(QualityWarning, match="'XX'"):
        radii = atom_radii_A(_atoms())
    assert radii[3] == pytest.approx(1.80)
    assert (radii > 0).all()


def test_toml_overrides(tmp_path):
    path = tmp_path / "r.toml"
    path.write_text(
        '[elements]\nC = 1.9\nXX = 2.2\n[residues.LYS]\nNZ = 1.6\n[residues."*"]\nO = 1.4\n'
    )
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        radii = atom_radii_A(_atoms(), "bondi", overrides=path)
    np.testing.assert_allclose(radii, [1.9, 1.4, 1.6, 2.2])
    assert get_radius_set("bondi", path).name == "bondi+r.toml"


def test_exact_atom_key_beats_wildcard(tmp_path):
    path = tmp_path / "r.toml"
    path.write_text('[residues."*"]\nO = 1.4\n[residues.ALA]\nO = 1.45\n')
    assert (
        atom_radii_A(
            make_atoms([[0, 0, 0]], element=["O"], name=["O"], resname=["ALA"]), overrides=path
        )[0]
        == 1.45
    )


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("[elements]\nC = -1\n", r"elements.C = -1 is outside \(0, 5\] Å"),
        ("[elements]\nC = 0\n", r"elements.C = 0 is outside"),
        ("[elements]\nC = 5.01\n", r"elements.C = 5.01 is outside"),
        ("[elements]\nC = nan\n", r"elements.C = nan is outside"),
        ("[elements]\nC = inf\n", r"elements.C = inf is outside"),
        ("[elements]\nC = 'big'\n", "elements.C must be a number in Å, got str 'big'"),
        ("[elements]\nC = '1.7'\n", "elements.C must be a number in Å, got str '1.7'"),
        ("[elements]\nC = true\n", "elements.C must be a number in Å, got bool True"),
        ("[residues.LYS]\nNZ = false\n", "residues.LYS.NZ must be a number in Å, got bool"),
        ("[residues.LYS]\nNZ = [1.6]\n", "residues.LYS.NZ must be a number in Å, got list"),
        ("[residues.LYS]\nNZ = 9\n", r"residues.LYS.NZ = 9 is outside"),
        ("[residues]\nLYS = 1.6\n", r"residues.LYS must be a table of atom names"),
        ("residues = 1\n", r"residues must be a table"),
        ('[atoms]\n"LYS:NZ" = 1.6\n', r"\[residues.LYS\] NZ = 1.6"),
        ("[colours]\nC = 1\n", "unknown key"),
        ("C = = 1", "not valid TOML"),
    ],
)
def test_bad_override_files(tmp_path, text, match):
    path = tmp_path / "bad.toml"
    path.write_text(text)
    with pytest.raises(InputError, match=match) as err:
        get_radius_set("bondi", path)
    assert str(path) in str(err.value)  # the error names the file
    assert "\n" not in str(err.value)


def test_largest_allowed_radius_is_accepted(tmp_path):
    path = tmp_path / "r.toml"
    path.write_text("[elements]\nC = 5\n[residues.LYS]\nNZ = 1\n")
    rset = get_radius_set("bondi", path)
    assert rset.by_element["C"] == 5.0 and rset.by_atom["LYS:NZ"] == 1.0


def test_unknown_set_name():
    with pytest.raises(InputError, match="radii must be one of"):
        get_radius_set("mine")


def test_cli_bad_radius_file_is_one_line_exit_2_and_no_output(tmp_path, capsys):
    z = np.arange(-4, 4.1, 1.0)
    model = tmp_path / "ring.pdb"
    write_structure(synthetic.ring_stack(np.full(z.shape, 4.0), z, atoms_per_ring=12), model)
    bad = tmp_path / "radii.toml"
    bad.write_text("[residues.LYS]\nNZ = true\n")
    out = tmp_path / "profile.json"
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    argv = ["profile", str(model), *axis, "--radii-file", str(bad), "--json", str(out)]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.startswith("poreprobe: error: ") and err.count("\n") == 1
    assert "residues.LYS.NZ" in err and str(bad) in err
    assert not out.exists()
