"""Rings of equivalent lining residues on real channels (entries cited in _real_channels.py)."""

from __future__ import annotations

import numpy as np
import pytest
from _real_channels import channel

from poreprobe.chemistry.chemistry import pore_chemistry
from poreprobe.chemistry.titration import residue_charge_e


@pytest.fixture(scope="module")
def chemistry():
    cache = {}

    def get(name):
        if name not in cache:
            atoms, prof = channel(name)
            cache[name] = pore_chemistry(atoms, prof)
        return cache[name]

    return get


def _ring(chem, residue):
    rings = [r for r in chem.rings if r.residue == residue]
    assert rings, f"no ring of {residue}"
    return max(rings, key=lambda r: r.count)


def test_kcsa_selectivity_filter_rings_of_four_lined_by_backbone(chemistry):
    # KcsA is a tetramer; its filter TVGYG (75-79) is lined by backbone carbonyl
    # oxygens (common practice; see ../shared/real_structures/README.md)
    chem = chemistry("3pjs")
    for residue in ("THR75", "VAL76", "GLY77", "TYR78", "GLY79"):
        assert _ring(chem, residue).count == 4
    for residue in ("VAL76", "GLY77", "TYR78", "GLY79"):
        assert _ring(chem, residue).faces == "backbone"
    # Thr75 also offers its hydroxyl (site S4), never its side chain alone
    assert "backbone" in _ring(chem, "THR75").faces
    # the filter rings run in sequence order along s (one direction through the pore)
    levels = [_ring(chem, f"{n}").s_A for n in ("THR75", "VAL76", "GLY77", "TYR78", "GLY79")]
    steps = np.diff(levels)
    assert (steps > 0).all() or (steps < 0).all()


def test_cavab_filter_is_a_ring_of_four_aspartates(chemistry):
    # CavAb: C4 tetramer; the Ca2+ filter holds a ring of aspartates (common practice)
    chem = chemistry("5klg")
    for residue in ("ASP1177", "ASP1178"):
        ring = _ring(chem, residue)
        assert ring.count == 4
        assert ring.faces == "side chain"
        # the ring's charge is n times one residue's (Henderson-Hasselbalch, symmetric ring)
        assert ring.charge_e == pytest.approx(4 * residue_charge_e("ASP", 7.0), rel=1e-12)
    assert max(r.count for r in chem.rings) == 4


def test_glic_m2_rings_of_five(chemistry):
    # GLIC: C5 homopentamer, pore lined by the M2 helices (common practice)
    chem = chemistry("6f7a")
    for residue in ("GLU222", "THR226", "SER230", "ILE233", "ALA237", "ILE240"):
        assert _ring(chem, residue).count == 5
    assert max(r.count for r in chem.rings) == 5
    assert _ring(chem, "GLU222").charge_e == pytest.approx(
        5 * residue_charge_e("GLU", 7.0), rel=1e-12
    )


def test_glic_closed_hydrophobic_gate_is_flagged(chemistry):
    # 6F7A is a closed GLIC; the Ile/Ala rings of M2 make a narrow hydrophobic stretch
    # (hydrophobic gating as in Beckstein & Sansom 2003, PNAS 100:7063): a flag there
    chem = chemistry("6f7a")
    i233, i240 = _ring(chem, "ILE233").s_A, _ring(chem, "ILE240").s_A
    lo, hi = sorted((i233, i240))
    assert any(f.s_start_A <= hi and f.s_end_A >= lo for f in chem.dewetting)
    # and the charged, wide vestibule is not flagged
    e222 = _ring(chem, "GLU222").s_A
    assert not any(f.s_start_A <= e222 <= f.s_end_A for f in chem.dewetting)


def test_rings_are_ordered_entry_to_exit(chemistry):
    chem = chemistry("5klg")
    levels = [r.s_A for r in chem.rings]
    assert levels == sorted(levels)


def test_per_level_charge_follows_the_rings(chemistry):
    chem = chemistry("5klg")
    ring = _ring(chem, "ASP1178")
    k = int(np.argmin(np.abs(chem.levels.s_A - ring.s_A)))
    # the plane at the ring's level is lined by the ring: its net charge includes it
    assert chem.levels.charge_e[k] <= ring.charge_e / 2
    assert np.nanmin(chem.levels.charge_smoothed_e) < -1
