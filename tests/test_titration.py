"""Henderson-Hasselbalch charges, pKa tables and charge-state overrides."""

from __future__ import annotations

import numpy as np
import pytest

from poreprobe.chemistry.titration import (
    PKA_TABLES,
    TITRATABLE_GROUPS,
    hh_charge_e,
    parse_charge_states,
    residue_charge_e,
    titratable_sites,
)
from poreprobe.errors import InputError
from poreprobe.io.structure import make_atoms


@pytest.mark.parametrize("table", sorted(PKA_TABLES))
@pytest.mark.parametrize("resname", sorted(TITRATABLE_GROUPS))
def test_half_charge_at_pka(table, resname):
    # Henderson-Hasselbalch: at pH = pKa half of the groups are charged (any biochemistry text)
    pka = PKA_TABLES[table][resname]
    sign = TITRATABLE_GROUPS[resname][0]
    assert residue_charge_e(resname, pka, pka_table=table) == pytest.approx(0.5 * sign, abs=1e-12)


def test_limits_and_one_unit_from_pka():
    # one pH unit above an acid's pKa: 10/11 deprotonated (Henderson-Hasselbalch)
    assert float(hh_charge_e(-1, 4.0, 5.0)) == pytest.approx(-10 / 11)
    assert float(hh_charge_e(1, 10.0, 9.0)) == pytest.approx(10 / 11)
    assert residue_charge_e("LEU", 7.0) == 0.0
    assert residue_charge_e("HIP", 7.0) == 1.0  # protonation state fixed by the name
    assert residue_charge_e("HIE", 3.0) == 0.0


def test_grimsley_values():
    # Grimsley, Scholtz & Pace 2009, Protein Sci. 18:247, averages in folded proteins
    # (abstract), as transcribed by Kozlowski 2016, Biol. Direct 11:55, Table 4
    expected = {"ASP": 3.5, "GLU": 4.2, "HIS": 6.6, "CYS": 6.8, "TYR": 10.3, "LYS": 10.5}
    for res, pka in expected.items():
        assert PKA_TABLES["grimsley2009"][res] == pka


def _ring_of_glutamates(n=4, radius_A=5.0):
    """n glutamate carboxylates (CD, OE1, OE2) on a ring in the plane z = 0, one per chain."""
    coords, names, chains = [], [], []
    for k in range(n):
        a = 2 * np.pi * k / n
        for name, dr in (("CD", 1.2), ("OE1", 0.0), ("OE2", 0.0)):
            coords.append([(radius_A + dr) * np.cos(a), (radius_A + dr) * np.sin(a), 0.0])
            names.append(name)
            chains.append("ABCDE"[k])
    coords = np.array(coords) + np.array([[0, 0, 0], [0, 0, 1.1], [0, 0, -1.1]] * n)
    return make_atoms(
        coords,
        element=[n_[0] for n_ in names],
        name=names,
        resname=["GLU"] * len(names),
        resid=[71] * len(names),
        chain=chains,
    )


def test_sites_sum_over_symmetric_ring():
    sites = titratable_sites(_ring_of_glutamates(4), pH=7.0)
    assert len(sites.charge_e) == 4
    one = residue_charge_e("GLU", 7.0)
    assert sites.charge_e.sum() == pytest.approx(4 * one, rel=1e-12)
    # charge sits at the carboxylate centroid, on the ring radius
    np.testing.assert_allclose(np.hypot(*sites.position_A[:, :2].T), 5.0, atol=1e-12)


def test_overrides_win():
    atoms = _ring_of_glutamates(4)
    states = parse_charge_states(["A:GLU71=0", "GLU71=-0.5"])
    sites = titratable_sites(atoms, pH=7.0, charge_states=states)
    assert sites.charge_of()["A:GLU71"] == 0.0
    assert sites.charge_of()["B:GLU71"] == -0.5
    assert set(sites.state.tolist()) == {"override"}
    with pytest.raises(InputError, match="charge state must look like"):
        parse_charge_states(["GLU71"])
    with pytest.raises(InputError, match="between -1.0 and 1.0"):
        parse_charge_states(["HIS=2"])


def test_disulfide_is_neutral():
    atoms = make_atoms(
        [[0, 0, 0], [2.05, 0, 0], [10, 0, 0]],
        element=["S", "S", "S"],
        name=["SG", "SG", "SG"],
        resname=["CYS"] * 3,
        resid=[1, 2, 3],
        chain=["A"] * 3,
    )
    sites = titratable_sites(atoms, pH=9.0)
    assert sites.state.tolist() == ["disulfide", "disulfide", "pH"]
    assert sites.charge_e[:2].tolist() == [0.0, 0.0]
    assert sites.charge_e[2] < -0.5


def test_bad_ph_is_refused():
    with pytest.raises(InputError, match="pH must be between"):
        titratable_sites(_ring_of_glutamates(), pH=15)
    with pytest.raises(InputError, match="pka_table must be one of"):
        titratable_sites(_ring_of_glutamates(), pka_table="textbook")
