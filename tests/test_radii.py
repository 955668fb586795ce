import warnings

import gemmi
import numpy as np
import pytest

from poreprobe import InputError, QualityWarning, atom_radii_A, get_radius_set, make_atoms
from poreprobe.io.radii import RADIUS_SETS


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
    path.write_text('[elements]\nC = 1.9\nXX = 2.2\n[atoms]\n"LYS:NZ" = 1.6\n"*:O" = 1.4\n')
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        radii = atom_radii_A(_atoms(), "bondi", overrides=path)
    np.testing.assert_allclose(radii, [1.9, 1.4, 1.6, 2.2])
    assert get_radius_set("bondi", path).name == "bondi+r.toml"


def test_exact_atom_key_beats_wildcard(tmp_path):
    path = tmp_path / "r.toml"
    path.write_text('[atoms]\n"*:O" = 1.4\n"ALA:O" = 1.45\n')
    assert (
        atom_radii_A(
            make_atoms([[0, 0, 0]], element=["O"], name=["O"], resname=["ALA"]), overrides=path
        )[0]
        == 1.45
    )


@pytest.mark.parametrize(
    ("text", "match"),
    [
        ("[elements]\nC = -1\n", "between 0 and 5"),
        ("[elements]\nC = 'big'\n", "must be a number"),
        ("[atoms]\nNZ = 1.6\n", "RESNAME:ATOMNAME"),
        ("[colours]\nC = 1\n", "unknown table"),
        ("C = = 1", "not valid TOML"),
    ],
)
def test_bad_override_files(tmp_path, text, match):
    path = tmp_path / "bad.toml"
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        get_radius_set("bondi", path)


def test_unknown_set_name():
    with pytest.raises(InputError, match="radii must be one of"):
        get_radius_set("mine")
