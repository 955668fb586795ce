"""The map check on maps computed from models.

The maps are computed with gemmi's density calculator for electron scattering (the
five-Gaussian electron scattering factors of International Tables for Crystallography
Vol. C, Table 4.3.2.2, as gemmi tabulates them), atoms at B = 0 blurred by B = 4 d^2, plus
Gaussian noise of a stated RMS (:func:`poreprobe.density.model_map.simulate_map`). The
check's own expected density is a different model (Gaussian atoms weighted by atomic
number), so agreement is not circular. Models: the invented demo channel and CavAb (PDB
5KLG; Tang et al. 2016, Nature 537:117, JRNL) from tests/data.
"""

import warnings

import numpy as np
import pytest
from _real_channels import channel

import poreprobe as pp
from poreprobe.demo.channels import demo_channel
from poreprobe.density.mapcheck import map_check
from poreprobe.density.model_map import simulate_map
from poreprobe.errors import InputError
from poreprobe.io.density_map import DensityMap
from poreprobe.io.residues import BACKBONE_HEAVY_ATOMS
from poreprobe.io.structure import concatenate_atoms

D_A = 3.0
NOISE = 0.2  # noise RMS as a fraction of the noise-free map's RMS


def pseudo_atoms(coords, element, resname, chain):
    """Extra atoms (ions, a lipid-like cluster) to put density in the map only."""
    n = len(coords)
    return pp.Atoms(
        coords_A=np.asarray(coords, dtype=float),
        element=np.array([element] * n),
        name=np.array([element + str(k) for k in range(n)]),
        resname=np.array([resname] * n),
        resid=np.arange(1, n + 1),
        icode=np.array([""] * n),
        chain=np.array([chain] * n),
        altloc=np.array([""] * n),
        occupancy=np.ones(n),
        b_factor=np.zeros(n),
        kind=np.array(["hetero"] * n),
    )


@pytest.fixture(scope="module")
def demo():
    atoms = demo_channel("open")
    axis = pp.find_pore_axis(atoms)
    return atoms, axis, pp.radius_profile(atoms, axis, step_A=0.5)


@pytest.fixture(scope="module")
def demo_map(demo):
    return simulate_map(demo[0], D_A, noise_rms=NOISE)


@pytest.fixture(scope="module")
def planted(demo):
    """Map of the demo channel plus a K+ on the axis and a lipid-sized cluster off it."""
    atoms, axis, profile = demo
    ion_uvs = np.array([[0.0, 0.0, -2.0]])
    lipid_uvs = np.array(
        [
            [r * np.cos(np.pi / 4 + dphi), r * np.sin(np.pi / 4 + dphi), s]
            for r, dphi in ((2.0, 0.0), (2.5, 0.9))
            for s in np.arange(-15.0, -5.9, 1.27)
        ]
    )
    extra = [
        pseudo_atoms(axis.from_frame(ion_uvs), "K", "K", "X"),
        pseudo_atoms(axis.from_frame(lipid_uvs), "C", "LIP", "Y"),
    ]
    box = (atoms.coords_A.min(axis=0) - 8.0, atoms.coords_A.max(axis=0) + 8.0)
    dmap = simulate_map(concatenate_atoms([atoms, *extra]), D_A, noise_rms=NOISE, box_A=box)
    result = map_check(dmap, atoms, profile, resolution_A=D_A)
    return result, axis.from_frame(ion_uvs)[0], axis.from_frame(lipid_uvs).mean(axis=0)


def test_planted_ion_is_found_on_the_axis(planted):
    result, ion, _ = planted
    near = [b for b in result.blobs if np.linalg.norm(np.array(b.centre_A) - ion) <= D_A / 2]
    assert len(near) == 1
    blob = near[0]
    assert blob.s_A == pytest.approx(-2.0, abs=D_A / 2)
    assert blob.on_axis and blob.symmetry == "on the axis"
    assert blob.size_reading == "single ion or water"
    assert blob.peak_rms > 3.0


def test_planted_lipid_is_found_off_the_axis(planted):
    result, _, lipid = planted
    near = [b for b in result.blobs if np.linalg.norm(np.array(b.centre_A) - lipid) <= D_A / 2]
    assert len(near) == 1
    blob = near[0]
    assert not blob.on_axis
    assert blob.size_reading == "larger: lipid, detergent or ligand"
    assert blob.symmetry == "no symmetry copies"
    assert blob.residues and all(":" in r for r in blob.residues)


def test_only_the_planted_blobs_and_findings_carry_s(planted):
    result = planted[0]
    assert len(result.blobs) == 2
    density = [f for f in result.findings if f.code == "pore-density"]
    assert len(density) == 2
    assert all("s_A" in f.details for f in density)
    assert {f.severity for f in density} == {"low", "high"}
    d = result.to_dict()
    assert d["caveat"].startswith("model-based estimates")
    assert len(d["blobs"]) == 2 and "warnings" in d


def _side_chain(atoms, label):
    return (atoms.residue_labels() == label) & ~np.isin(atoms.name, list(BACKBONE_HEAVY_ATOMS))


def test_clean_map_flags_no_side_chain(demo, demo_map):
    atoms, _, profile = demo
    result = map_check(demo_map, atoms, profile, resolution_A=D_A)
    scored = [s for s in result.support if np.isfinite(s.score)]
    assert len(scored) > 20
    assert not [s.residue for s in result.support if s.unsupported]
    assert not result.blobs


@pytest.mark.parametrize("label", ["A:PHE73", "B:ASP48"])
def test_side_chain_moved_out_of_its_density_is_flagged(demo, demo_map, label):
    atoms, axis, _ = demo
    side = _side_chain(atoms, label)
    coords = atoms.coords_A.copy()
    coords[side] += 3.0 * axis.direction
    moved = atoms.with_coords(coords)
    result = map_check(
        demo_map, moved, pp.radius_profile(moved, axis, step_A=0.5), resolution_A=D_A
    )
    flagged = [s.residue for s in result.support if s.unsupported]
    assert flagged == [label]
    finding = [f for f in result.findings if f.code == "side-chain-unsupported"]
    assert finding[0].residues == (label,) and "s_A" in finding[0].details


def test_removed_side_chain_leaves_its_neighbours_unaffected(demo, demo_map):
    atoms, axis, profile = demo
    before = {
        s.residue: s.score for s in map_check(demo_map, atoms, profile, resolution_A=D_A).support
    }
    kept = atoms.subset(~_side_chain(atoms, "A:PHE73"))
    after = map_check(demo_map, kept, pp.radius_profile(kept, axis, step_A=0.5), resolution_A=D_A)
    assert not [s.residue for s in after.support if s.unsupported]
    common = [s for s in after.support if s.residue in before and np.isfinite(s.score)]
    assert len(common) > 20
    assert max(abs(s.score - before[s.residue]) for s in common) < 0.05


def test_side_chains_removed_in_every_subunit_show_as_symmetric_density(demo, demo_map):
    atoms, axis, _ = demo
    side = (atoms.resid == 73) & ~np.isin(atoms.name, list(BACKBONE_HEAVY_ATOMS))
    kept = atoms.subset(~side)
    result = map_check(demo_map, kept, pp.radius_profile(kept, axis, step_A=0.5), resolution_A=D_A)
    assert len(result.blobs) == 4
    assert {b.symmetry for b in result.blobs} == {"repeats 4 of 4 around the axis"}
    ring_s = axis.s_A(atoms.coords_A[side]).mean()
    assert all(abs(b.s_A - ring_s) <= D_A / 2 for b in result.blobs)
    narrower = [f for f in result.findings if f.code == "map-radius-differs"]
    assert narrower and narrower[0].details["difference_A"] < 0


@pytest.mark.parametrize("d_A", [2.0, 3.0, 4.0])
@pytest.mark.parametrize("k_rms", [2.0, 3.0, 4.0])
def test_map_radius_agrees_with_the_model_within_the_derived_band(demo, d_A, k_rms):
    atoms, _, profile = demo
    dmap = simulate_map(atoms, d_A)
    result = map_check(dmap, atoms, profile, resolution_A=d_A, contour=dmap.mean + k_rms * dmap.rms)
    lo, hi = result.radius_band_A
    diff = result.map_radius_A - result.model_radius_A
    ok = np.isfinite(diff)
    assert ok.sum() >= 0.8 * np.isfinite(result.model_radius_A).sum()
    assert np.all((diff[ok] >= lo) & (diff[ok] <= hi)), (diff[ok].min(), diff[ok].max(), lo, hi)
    assert not result.disagree.any()


def test_real_channel_ion_in_the_cavity(tmp_path):
    atoms, profile = channel("5klg")
    r = profile.radius_A
    mid = np.arange(len(r))[len(r) // 4 : 3 * len(r) // 4]
    k = mid[np.nanargmax(r[mid])]  # the widest enclosed plane of the middle half: the cavity
    ion = profile.center_A[k]
    dmap = simulate_map(
        concatenate_atoms([atoms, pseudo_atoms([ion], "K", "K", "X")]),
        D_A,
        noise_rms=NOISE,
        box_A=(atoms.coords_A.min(axis=0) - 6, atoms.coords_A.max(axis=0) + 6),
    )
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", pp.QualityWarning)
        result = map_check(dmap, atoms, profile, resolution_A=D_A)
    near = [b for b in result.blobs if np.linalg.norm(np.array(b.centre_A) - ion) <= D_A / 2]
    assert len(near) == 1 and near[0].on_axis
    assert abs(near[0].s_A - profile.s_A[k]) <= D_A / 2
    assert result.correlation > 0.5


def _shifted(dmap, **changes):
    return DensityMap(**{**dmap.__dict__, **changes})


def test_map_not_covering_the_pore_is_an_error(demo, demo_map):
    atoms, _, profile = demo
    far = _shifted(demo_map, origin_A=demo_map.origin_A + 200.0)
    with pytest.raises(InputError, match="does not cover the pore"):
        map_check(far, atoms, profile, resolution_A=D_A)


def test_map_with_another_cell_is_an_error(demo, demo_map):
    atoms, _, profile = demo
    wrong = _shifted(demo_map, voxel_A=demo_map.voxel_A * 1.15)
    with pytest.raises(InputError, match="does not sit in the map's density"):
        map_check(wrong, atoms, profile, resolution_A=D_A)


def test_settings_are_checked(demo, demo_map):
    atoms, _, profile = demo
    with pytest.raises(InputError, match="resolution_A"):
        map_check(demo_map, atoms, profile, resolution_A=0.0)
    with pytest.raises(InputError, match="contour"):
        map_check(demo_map, atoms, profile, resolution_A=D_A, contour=float("nan"))
    with pytest.raises(InputError, match="DensityMap"):
        map_check(np.zeros((3, 3, 3)), atoms, profile, resolution_A=D_A)


def test_translation_of_model_and_map_and_atom_order_change_nothing(demo):
    """Moving model and map together, or reordering the atoms, gives the same check."""
    atoms, axis, profile = demo
    shift = np.array([7.3, -4.1, 11.9])
    rng = np.random.default_rng(5)
    order = rng.permutation(len(atoms))
    ref = planted_map_for_properties(demo)
    base = map_check(ref, atoms, profile, resolution_A=D_A)
    assert len(base.blobs) == 1 and base.blobs[0].on_axis  # the K+ only
    moved_atoms = atoms.with_coords(atoms.coords_A + shift).subset(order)
    moved_axis = pp.PoreAxis(axis.point_A + shift, axis.direction, "user", n_fold=axis.n_fold)
    moved_profile = pp.radius_profile(moved_atoms, moved_axis, step_A=0.5)
    moved_map = DensityMap(**{**ref.__dict__, "origin_A": ref.origin_A + shift})
    moved = map_check(moved_map, moved_atoms, moved_profile, resolution_A=D_A)
    assert [round(b.s_A, 3) for b in moved.blobs] == [round(b.s_A, 3) for b in base.blobs]
    assert [b.volume_A3 for b in moved.blobs] == [b.volume_A3 for b in base.blobs]
    scores = {s.residue: s.score for s in base.support}
    assert all(
        np.isnan(s.score) and np.isnan(scores[s.residue]) or abs(s.score - scores[s.residue]) < 1e-6
        for s in moved.support
    )
    np.testing.assert_allclose(moved.map_radius_A, base.map_radius_A, atol=0.26, equal_nan=True)


def planted_map_for_properties(demo):
    """A map of the demo with a K+ on the axis, on a box aligned to whole voxels."""
    atoms, axis, _ = demo
    ion = pseudo_atoms(axis.from_frame([[0.0, 0.0, -2.0]]), "K", "K", "X")
    lo = np.floor(atoms.coords_A.min(axis=0)) - 8.0
    return simulate_map(
        concatenate_atoms([atoms, ion]),
        D_A,
        noise_rms=NOISE,
        box_A=(lo, np.ceil(atoms.coords_A.max(axis=0)) + 8.0),
    )
