"""The profile's in-plane maximum over the pore's own region, and occluded planes.

Every radius here is checked against the slow brute-force reference of
``tests/brute_force.py`` (dense raster, flood over the region criterion, SQP
refinement), independent code, never against poreprobe's own earlier output.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from brute_force import Clearance, plane_radius
from conftest import mdanalysis_test_file
from hypothesis import given, settings
from hypothesis import strategies as st

import poreprobe as pp
from poreprobe import InputError, PoreAxis, make_atoms, radius_profile
from poreprobe.geometry import synthetic as syn

CARBON_A = 1.70  # Bondi 1964, Table I (carbon)


def _slab_channel(free_fn, half_box=16.0, spacing=1.2, z_half=6.0):
    """Carbon atoms on a cubic lattice wherever they keep 1.7 Å clear of a designed free set.

    ``free_fn(xy)`` gives the in-plane distance of points to the free set (0 inside it); the
    resulting channel runs along z with that cross-section.
    """
    g = np.arange(-half_box, half_box + 1e-9, spacing)
    z = np.arange(-z_half, z_half + 1e-9, spacing)
    xx, yy, zz = np.meshgrid(g, g, z, indexing="ij")
    xy = np.column_stack([xx.ravel(), yy.ravel()])
    keep = free_fn(xy) >= CARBON_A
    coords = np.column_stack([xy[keep], zz.ravel()[keep]])
    return make_atoms(coords)


def _dist_to_discs_and_bar(xy, discs, bar):
    """Distance from points to a union of discs and one axis-aligned bar (x0, x1, half width)."""
    d = np.full(len(xy), np.inf)
    for (cx, cy), r in discs:
        d = np.minimum(d, np.maximum(np.hypot(xy[:, 0] - cx, xy[:, 1] - cy) - r, 0.0))
    x0, x1, w = bar
    dx = np.maximum(np.maximum(x0 - xy[:, 0], xy[:, 0] - x1), 0.0)
    dy = np.maximum(np.abs(xy[:, 1]) - w, 0.0)
    return np.minimum(d, np.hypot(dx, dy))


def _brute(atoms, axis, s, fractions=(0.75,), half_width=12.0):
    clear = Clearance(atoms.coords_A, pp.atom_radii_A(atoms))
    return [
        r
        for r, _ in plane_radius(
            clear, axis.point_A, axis.direction, s, neck_fractions=fractions, half_width=half_width
        )
    ]


def test_side_pocket_behind_a_narrow_neck_is_not_the_pore():
    # lumen of radius 4 on the axis, a larger pocket (radius 6) joined by a 0.6 Å wide slit
    atoms = _slab_channel(
        lambda xy: _dist_to_discs_and_bar(xy, [((0.0, 0.0), 4.0), ((11.0, 0.0), 6.0)], (0, 11, 0.3))
    )
    axis = PoreAxis([0, 0, 0], [0, 0, 1], "user")
    prof = radius_profile(atoms, axis, step_A=0.5, margin_A=0.0)
    mid = np.abs(prof.s_A) <= 2.0
    lumen, pocket = _brute(atoms, axis, 0.0, fractions=(0.75, 0.01), half_width=18.0)
    assert pocket > lumen + 1.0  # the pocket is larger: a plane-wide maximum would take it
    k = int(np.flatnonzero(prof.s_A == 0.0)[0])
    assert prof.radius_A[k] == pytest.approx(lumen, abs=0.02)
    assert np.all(prof.radius_A[mid] < lumen + 0.3)
    assert np.all(np.hypot(*axis.to_frame(prof.center_A[mid])[:, :2].T) < 2.0)


def test_two_maxima_joined_by_a_wide_neck_take_the_larger():
    # the axis runs through the smaller maximum (radius 3.5); the larger (4.5) lies 7 Å
    # away through a neck 6.4 Å wide: plainly the same lumen
    design = [((0.0, 0.0), 3.5), ((7.0, 0.0), 4.5)]
    atoms = _slab_channel(lambda xy: _dist_to_discs_and_bar(xy, design, (0.0, 7.0, 3.2)))
    axis = PoreAxis([0, 0, 0], [0, 0, 1], "user")
    prof = radius_profile(atoms, axis, step_A=0.5, margin_A=0.0)
    local = radius_profile(atoms, axis, step_A=0.5, margin_A=0.0, neck_fraction=1.0)
    k = int(np.flatnonzero(prof.s_A == 0.0)[0])
    (expected,) = _brute(atoms, axis, 0.0, half_width=14.0)
    assert prof.radius_A[k] == pytest.approx(expected, abs=0.02)
    assert prof.center_A[k, 0] > 4.0  # in the larger part
    assert local.radius_A[k] < expected - 0.5  # the local maximum alone is the smaller one


def _k_channel_fragment():
    atoms = pp.read_structure(
        mdanalysis_test_file("2r9r-1b.psf"), trajectory=mdanalysis_test_file("2r9r-1b.xyz")
    )
    return atoms


def _real(name):
    from _real_channels import channel

    return channel(name)[0]


@pytest.mark.parametrize("name", ["2r9r-1b", "3pjs", "6f7a", "5klg"])
def test_profile_matches_brute_force_on_real_pores(name):
    # K+ channel fragment (MDAnalysisTests 2r9r-1b.psf + .xyz); KcsA full length, PDB 3PJS
    # (Uysal et al. 2011, PNAS 108:11896); GLIC, PDB 6F7A (Zabara et al. 2018, Nat. Commun.
    # 9:544). Axis: normal of the CA polygons of the equivalent chains (_real_channels.py).
    from _real_channels import symmetry_axis

    atoms = _k_channel_fragment() if name == "2r9r-1b" else _real(name)
    point, direction = symmetry_axis(atoms)
    axis = PoreAxis(point, direction, "user")
    prof = radius_profile(atoms, axis, step_A=0.5)
    # inside the pore: the run of enclosed planes holding the narrowest point, less 2 Å at
    # each end (beyond it the sphere escapes to the bulk), radius below 6 Å
    enclosed = np.isfinite(prof.radius_A)
    k_min = int(np.flatnonzero(prof.s_A == prof.min_s_A)[0])
    lo = hi = k_min
    while lo > 0 and enclosed[lo - 1]:
        lo -= 1
    while hi < len(enclosed) - 1 and enclosed[hi + 1]:
        hi += 1
    inside = (prof.s_A >= prof.s_A[lo] + 2) & (prof.s_A <= prof.s_A[hi] - 2) & (prof.radius_A < 6.0)
    idx = np.flatnonzero(inside)
    assert idx.size > 20
    idx = idx[np.linspace(0, idx.size - 1, 15).round().astype(int)]
    clear = Clearance(atoms.coords_A, pp.atom_radii_A(atoms))
    checked = 0
    for k in idx:
        lo, mid, hi = (
            r
            for r, _ in plane_radius(
                clear,
                axis.point_A,
                axis.direction,
                float(prof.s_A[k]),
                neck_fractions=(0.7, 0.75, 0.8),
                half_width=2.5 * max(float(prof.radius_A[k]), 1.0) + 3.0,
            )
        )
        if abs(hi - lo) > 0.02:
            continue  # a neck within 0.05 f of the criterion: ambiguous by definition
        checked += 1
        assert prof.signed_clearance_A[k] == pytest.approx(mid, abs=0.02), prof.s_A[k]
    assert checked >= 10


def _plugged_cylinder():
    """A ring-stack cylinder (radius 6 Å) with a solid layer of atoms across it at z = 0."""
    atoms, _, _ = syn.cylinder(6.0, 12.0, spacing_A=1.0, atoms_per_ring=36)
    g = np.arange(-5.0, 5.01, 1.0)
    xx, yy = np.meshgrid(g, g, indexing="ij")
    keep = np.hypot(xx, yy) <= 5.2
    plug = np.column_stack([xx[keep], yy[keep], np.zeros(int(keep.sum()))])
    coords = np.concatenate([atoms.coords_A, plug])
    return make_atoms(coords)


def test_occluded_plane_reports_zero_radius_and_the_overlap():
    atoms = _plugged_cylinder()
    axis = PoreAxis([0, 0, 0], [0, 0, 1], "user")
    prof = radius_profile(atoms, axis, step_A=0.25, margin_A=0.0)
    k = int(np.flatnonzero(prof.s_A == 0.0)[0])
    assert prof.occluded[k]
    assert prof.radius_A[k] == 0.0
    (expected,) = _brute(atoms, axis, 0.0, half_width=6.0)
    assert expected < 0
    assert prof.signed_clearance_A[k] == pytest.approx(expected, abs=0.02)
    assert prof.min_radius_A == 0.0 and prof.min_occluded
    assert np.all(prof.radius_A[np.isfinite(prof.radius_A)] >= 0)
    d = json.loads(json.dumps(prof.to_dict()))
    assert d["min_occluded"] is True and d["n_occluded"] == prof.n_occluded >= 1
    assert d["profile"]["occluded"][k] is True
    assert d["profile"]["signed_clearance_A"][k] < 0
    free = ~prof.occluded & np.isfinite(prof.radius_A)
    np.testing.assert_array_equal(prof.signed_clearance_A[free], prof.radius_A[free])


def test_cli_profile_says_occluded(tmp_path, capsys):
    from poreprobe.cli.main import main
    from poreprobe.io.writer import write_structure

    path = tmp_path / "plug.pdb"
    write_structure(_plugged_cylinder(), path)
    out_json = tmp_path / "p.json"
    csv = tmp_path / "p.csv"
    rc = main(
        [
            "profile",
            str(path),
            "--axis-point",
            "0",
            "0",
            "0",
            "--axis-direction",
            "0",
            "0",
            "1",
            "--json",
            str(out_json),
            "--csv",
            str(csv),
        ]
    )
    assert rc == 0
    text = capsys.readouterr().out
    assert "occluded" in text
    assert "-0." not in text.split("narrowest")[1].splitlines()[0]
    assert json.loads(out_json.read_text())["min_occluded"] is True
    rows = [r for r in csv.read_text().splitlines() if not r.startswith("#")]
    assert "occluded" in rows[0] and "signed_clearance_A" in rows[0]


@pytest.mark.parametrize("value", [0, -0.1, 1.5, float("nan")])
def test_bad_neck_fraction(value):
    atoms, _, _ = syn.cylinder()
    with pytest.raises(InputError, match="neck_fraction"):
        radius_profile(atoms, PoreAxis([0, 0, 0], [0, 0, 1], "user"), neck_fraction=value)


@settings(max_examples=4, deadline=None)
@given(
    seed=st.integers(0, 2**31 - 1),
    shift=st.lists(st.floats(-30.0, 30.0), min_size=3, max_size=3),
)
def test_real_profile_unchanged_by_rigid_motion_and_atom_order(seed, shift):
    # K+ channel fragment (MDAnalysisTests 2r9r-1b): the region rasters are oriented by the
    # atoms, so rotating, shifting and shuffling the input changes no radius (0.02 Å)
    from _real_channels import symmetry_axis
    from scipy.spatial.transform import Rotation

    atoms = _k_channel_fragment()
    point, direction = symmetry_axis(atoms)
    ref = radius_profile(atoms, PoreAxis(point, direction, "user"), step_A=0.5)
    rng = np.random.default_rng(seed)
    rot = Rotation.random(random_state=seed)
    order = rng.permutation(len(atoms))
    moved = make_atoms(
        rot.apply(np.array(atoms.coords_A)[order]) + shift,
        element=atoms.element[order],
        name=atoms.name[order],
        resname=atoms.resname[order],
        resid=atoms.resid[order],
        chain=atoms.chain[order],
    )
    axis = PoreAxis(rot.apply(point) + shift, rot.apply(direction), "user")
    prof = radius_profile(moved, axis, step_A=0.5, s_range_A=(ref.s_A[0], ref.s_A[-1]))
    np.testing.assert_array_equal(np.isfinite(prof.radius_A), np.isfinite(ref.radius_A))
    ok = np.isfinite(ref.radius_A)
    np.testing.assert_allclose(prof.radius_A[ok], ref.radius_A[ok], atol=0.02)
