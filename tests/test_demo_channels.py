"""Tests of the invented demo channels (poreprobe.demo.run) and of structures_demo/build.py."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.spatial import cKDTree

import poreprobe
from poreprobe.bench.ions import get_ion
from poreprobe.demo import channels as demo
from poreprobe.errors import InputError
from poreprobe.io.radii import atom_radii_A

#: Dehydrated K+ radius, Shannon 1976 (Acta Cryst. A32:751), CN 6: 1.38 Å.
K_CRYSTAL_RADIUS_A = get_ion("K").crystal_radius_A


@pytest.fixture(scope="module")
def models():
    return {v: demo.demo_channel(v) for v in demo.VARIANTS}


@pytest.fixture(scope="module")
def profiles(models):
    out = {}
    for variant, atoms in models.items():
        axis = poreprobe.find_pore_axis(atoms, entry=demo.ENTRY_SELECTION)
        out[variant] = poreprobe.radius_profile(atoms, axis, step_A=0.2)
    return out


def _window_min(profile, s_lo, s_hi):
    sel = (profile.s_A >= s_lo) & (profile.s_A <= s_hi)
    k = np.flatnonzero(sel)[np.nanargmin(profile.radius_A[sel])]
    return float(profile.radius_A[k]), int(profile.nearest_atom[k])


def _filter_window(atoms, axis):
    s = axis.s_A(atoms.coords_A)
    sel = np.isin(atoms.resid, demo.FILTER_RESIDUES[:4]) & (atoms.name == "O")
    return s[sel].min() - 0.5, s[sel].max() + 0.5


def _entrance_window(atoms, axis):
    s = axis.s_A(atoms.coords_A)
    ca = s[(atoms.resid == demo.ENTRANCE_RESIDUE) & (atoms.name == "CA")].mean()
    return ca - 4.0, ca + 6.0


def test_models_are_tetramers_of_standard_residues(models):
    assert len(models["open"]) == 2220
    assert len(models["widened"]) == 2196
    for atoms in models.values():
        assert sorted(set(atoms.chain.tolist())) == list(demo.CHAINS)
        assert set(atoms.kind.tolist()) == {"polymer"}
        assert "invented" in atoms.source
        per_chain = atoms.resname[(atoms.chain == "A") & (atoms.name == "CA")]
        assert len(per_chain) == len(demo.SEQUENCE) == 79
    ca = models["widened"].resname[
        (models["widened"].name == "CA") & (models["widened"].resid == demo.ENTRANCE_RESIDUE)
    ]
    assert set(ca.tolist()) == {"ALA"}


def test_every_residue_has_all_its_heavy_atoms(models):
    # Reference: the wwPDB Chemical Component Dictionary (biotite's bundled copy).
    info = pytest.importorskip("biotite.structure.info")
    atoms = models["open"]
    a = atoms.chain == "A"
    heavy = {}
    for resname in sorted(set(atoms.resname.tolist())):
        ref = info.residue(resname)
        heavy[resname] = {
            str(n) for n, e in zip(ref.atom_name, ref.element, strict=True) if e != "H"
        }
    for resid in range(1, 80):
        here = a & (atoms.resid == resid)
        resname = str(atoms.resname[here][0])
        expected = set(heavy[resname])
        if resid != 79:
            expected.discard("OXT")
        assert set(atoms.name[here].tolist()) == expected, resname


def test_models_have_exact_fourfold_symmetry_about_z(models):
    for atoms in models.values():
        axis = poreprobe.find_pore_axis(atoms)
        assert axis.method == "symmetry C4"
        assert axis.symmetry_rmsd_A < 1e-6
        np.testing.assert_allclose(np.abs(axis.direction), [0, 0, 1], atol=1e-9)
        np.testing.assert_allclose(axis.point_A[:2], 0, atol=1e-9)


def _min_clash_ratio(atoms):
    """Smallest distance / (sum of Bondi radii) between atoms of different, non-consecutive
    residues (or different chains)."""
    radii = atom_radii_A(atoms)
    pairs = cKDTree(atoms.coords_A).query_pairs(3.6, output_type="ndarray")
    i, j = pairs[:, 0], pairs[:, 1]
    same_chain = atoms.chain[i] == atoms.chain[j]
    near = same_chain & (np.abs(atoms.resid[i] - atoms.resid[j]) <= 1)
    i, j = i[~near], j[~near]
    d = np.linalg.norm(atoms.coords_A[i] - atoms.coords_A[j], axis=1)
    return float((d / (radii[i] + radii[j])).min())


def test_models_have_no_steric_clashes(models):
    # Common practice: atoms of different, non-consecutive residues (or of
    # different chains) closer than 0.85 x the sum of their van der Waals radii
    # (Bondi 1964, J. Phys. Chem. 68:441, Table I) count as a clash.
    for variant, atoms in models.items():
        assert _min_clash_ratio(atoms) >= 0.85, variant


def test_a_planted_clash_is_detected(models):
    atoms = models["open"]
    coords = atoms.coords_A.copy()
    cb = np.flatnonzero((atoms.chain == "A") & (atoms.resid == 65) & (atoms.name == "CB"))[0]
    other = np.flatnonzero((atoms.chain == "B") & (atoms.name == "CA"))
    k = other[np.argmin(np.linalg.norm(coords[other] - coords[cb], axis=1))]
    coords[cb] = coords[k] + [2.5, 0.0, 0.0]
    assert _min_clash_ratio(atoms.with_coords(coords)) < 0.85


def test_open_channel_has_entrance_cavity_filter_and_vestibule(models, profiles):
    atoms, prof = models["open"], profiles["open"]
    lo, hi = _filter_window(atoms, prof.axis)
    r_filter, k = _window_min(prof, lo, hi)
    # The narrowest point is the ring of filter carbonyl oxygens, wider than a
    # dehydrated K+ (Shannon 1976, CN 6: 1.38 Å) but narrower than 1.6 Å.
    assert prof.min_radius_A == pytest.approx(r_filter, abs=1e-9)
    assert K_CRYSTAL_RADIUS_A < r_filter < 1.6
    assert atoms.name[k] == "O" and atoms.resid[k] in demo.FILTER_RESIDUES
    elo, ehi = _entrance_window(atoms, prof.axis)
    r_entrance, k = _window_min(prof, elo, ehi)
    assert atoms.resid[k] == demo.ENTRANCE_RESIDUE and atoms.resname[k] == "PHE"
    assert 2.0 < r_entrance < 2.7
    cavity = (prof.s_A > ehi) & (prof.s_A < lo - 3)
    assert np.nanmax(prof.radius_A[cavity]) > 4.8
    vestibule = prof.s_A > hi + 6
    assert np.nanmax(prof.radius_A[vestibule]) > 6.0


def test_widened_entrance_and_closed_gate(models, profiles):
    open_entrance = _window_min(
        profiles["open"], *_entrance_window(models["open"], profiles["open"].axis)
    )[0]
    wide = profiles["widened"]
    wide_entrance = _window_min(wide, *_entrance_window(models["widened"], wide.axis))[0]
    assert wide_entrance > open_entrance + 1.5
    closed, atoms = profiles["closed"], models["closed"]
    # Closed: the entrance ring is the narrowest point and shuts out even a
    # dehydrated K+ (Shannon 1976, CN 6: 1.38 Å).
    assert closed.min_radius_A < K_CRYSTAL_RADIUS_A
    k = closed.nearest_atom[np.nanargmin(closed.radius_A)]
    assert atoms.resid[k] == demo.ENTRANCE_RESIDUE
    # The filter is untouched by the gate.
    lo, hi = _filter_window(atoms, closed.axis)
    assert _window_min(closed, lo, hi)[0] == pytest.approx(
        _window_min(profiles["open"], lo, hi)[0], abs=0.02
    )


def test_trajectory_is_deterministic_and_breathes():
    top, frames = demo.demo_trajectory(8)
    _, again = demo.demo_trajectory(8)
    np.testing.assert_array_equal(frames, again)
    assert frames.shape == (8, len(top), 3)
    rms0 = np.sqrt(((frames[0] - top.coords_A) ** 2).sum(1).mean())
    assert rms0 == pytest.approx(demo.JITTER_A * np.sqrt(3), rel=0.1)
    fractions = demo.breathing_fraction(8)
    assert fractions[0] == 0 and fractions.max() == pytest.approx(demo.BREATHING_AMPLITUDE)
    radii = []
    for k in (0, np.argmax(fractions)):
        atoms = top.with_coords(frames[k])
        axis = poreprobe.find_pore_axis(atoms, entry=demo.ENTRY_SELECTION)
        prof = poreprobe.radius_profile(atoms, axis, step_A=0.25)
        radii.append(_window_min(prof, *_entrance_window(atoms, axis))[0])
    assert radii[1] < radii[0] - 0.5


def test_demo_universe_reads_like_a_trajectory():
    u = demo.demo_universe(3)
    assert len(u.trajectory) == 3
    assert len(u.atoms) == 2220
    assert u.trajectory.dt == pytest.approx(demo.FRAME_TIME_PS)


def test_text_formats_read_back(tmp_path, models):
    atoms = models["closed"]
    (tmp_path / "m.pdb").write_text(demo.pdb_text(atoms, title="t"))
    (tmp_path / "m.cif").write_text(demo.mmcif_text(atoms, name="M"))
    for name in ("m.pdb", "m.cif"):
        back = poreprobe.read_structure(tmp_path / name)
        np.testing.assert_allclose(back.coords_A, atoms.coords_A, atol=5e-4 + 1e-9)
        assert back.name.tolist() == atoms.name.tolist()
        assert back.chain.tolist() == atoms.chain.tolist()
        assert back.resid.tolist() == atoms.resid.tolist()
        assert set(back.kind.tolist()) == {"polymer"}


def test_unknown_variant_is_rejected():
    with pytest.raises(InputError, match="variant must be one of open, widened, closed"):
        demo.demo_channel("half-open")
    with pytest.raises(InputError, match="n_frames"):
        demo.demo_trajectory(0)
