"""Tests of poreprobe.geometry.reach: the pore grid, clearance on it and the reach field."""

from collections import deque

import numpy as np
import pytest

from poreprobe import InputError, PoreAxis, PoreNotFoundError, make_atoms, reach_field
from poreprobe.geometry.kernel import AtomSpheres
from poreprobe.geometry.synthetic import ring_stack

Z_AXIS = PoreAxis([0.0, 0.0, 0.0], [0.0, 0.0, 1.0], "user")
BONDI_C_A = 1.70  # Bondi 1964, J. Phys. Chem. 68:441, Table I (carbon)


def _random_channel(seed=7, n=160):
    """Invented porous shell of carbon atoms around the z axis (radius 3-7 Å, 14 Å long)."""
    rng = np.random.default_rng(seed)
    rho = rng.uniform(3.0, 7.0, n)
    phi = rng.uniform(0, 2 * np.pi, n)
    z = rng.uniform(-7.0, 7.0, n)
    return make_atoms(np.column_stack([rho * np.cos(phi), rho * np.sin(phi), z]))


def _flood_fill(clearance, inside, entry_layer, level):
    """Brute-force breadth-first flood fill from the entry layer through voxels >= level."""
    ok = inside & (clearance >= level)
    seen = np.zeros_like(ok)
    queue = deque()
    for i, j in zip(*np.nonzero(ok[:, :, entry_layer]), strict=True):
        seen[i, j, entry_layer] = True
        queue.append((i, j, entry_layer))
    shape = ok.shape
    while queue:
        i, j, k = queue.popleft()
        for di, dj, dk in ((1, 0, 0), (-1, 0, 0), (0, 1, 0), (0, -1, 0), (0, 0, 1), (0, 0, -1)):
            a, b, c = i + di, j + dj, k + dk
            if (
                0 <= a < shape[0]
                and 0 <= b < shape[1]
                and 0 <= c < shape[2]
                and ok[a, b, c]
                and not seen[a, b, c]
            ):
                seen[a, b, c] = True
                queue.append((a, b, c))
    return seen


@pytest.mark.parametrize("from_end", ["low", "high"])
def test_reach_equals_brute_force_flood_fill(from_end):
    atoms = _random_channel()
    levels = [0.5, 1.0, 1.5, 2.0, 2.5]
    fields = {
        m: reach_field(
            atoms,
            Z_AXIS,
            spacing_A=0.6,
            pore_radius_A=6.0,
            from_end=from_end,
            max_probe_A=2.5,
            method=m,
            levels_A=levels if m == "label" else None,
        )
        for m in ("label", "reconstruction", "union-find")
    }
    ref = fields["label"]
    checked = 0
    for level in levels:
        expected = _flood_fill(ref.clearance_A, ref.inside, ref.entry_layer, level)
        for method, f in fields.items():
            np.testing.assert_array_equal(f.reach_A >= level, expected, err_msg=method)
        checked += int(expected.sum())
    assert checked > 1000  # the thresholds cut through a non-trivial region


def test_exact_reach_is_max_min_bottleneck():
    # the exact methods agree voxel by voxel, and no voxel's reach exceeds its clearance
    atoms = _random_channel(seed=3)
    a = reach_field(atoms, Z_AXIS, spacing_A=0.6, pore_radius_A=6.0, method="reconstruction")
    b = reach_field(atoms, Z_AXIS, spacing_A=0.6, pore_radius_A=6.0, method="union-find")
    np.testing.assert_allclose(a.reach_A, b.reach_A, rtol=0, atol=1e-12)
    ok = np.isfinite(a.reach_A)
    assert (a.reach_A[ok] <= a.clearance_A[ok] + 1e-12).all()
    # the entry cap starts with its own clearance
    cap = a.inside[:, :, a.entry_layer]
    np.testing.assert_allclose(a.reach_A[:, :, 0][cap], a.clearance_A[:, :, 0][cap], atol=1e-12)


def test_clearance_grid_is_exact_kernel_clipped():
    # exact (clipped at the cap) wherever the clearance is >= 0; deep inside atoms a
    # negative upper bound may stand in for the exact value
    clipped = bounded = 0
    for n in (20, 400):
        atoms = _random_channel(seed=5, n=n)
        f = reach_field(atoms, Z_AXIS, spacing_A=0.4, pore_radius_A=6.0, max_probe_A=0.2)
        idx = np.argwhere(np.isfinite(f.clearance_A))
        exact = AtomSpheres(atoms.coords_A, np.full(len(atoms), BONDI_C_A)).clearance_A(
            f.index_to_xyz(idx)
        )
        got = f.clearance_A[tuple(idx.T)]
        free = exact >= 0
        np.testing.assert_allclose(
            got[free], np.minimum(exact[free], f.clearance_cap_A), rtol=0, atol=1e-9
        )
        assert (got[~free] < 0).all() and (got[~free] >= exact[~free] - 1e-9).all()
        clipped += int((exact > f.clearance_cap_A).sum())
        bounded += int((got[~free] > exact[~free] + 1e-6).sum())
    assert clipped > 0 and bounded > 0  # both shortcuts are exercised


def test_index_coordinate_round_trip_and_frame():
    atoms = _random_channel(n=60)
    axis = PoreAxis([1.0, -2.0, 0.5], [0.2, 0.1, 1.0], "user")
    f = reach_field(atoms, axis, spacing_A=0.7, pore_radius_A=4.0, max_probe_A=1.0)
    idx = np.array([[0, 0, 0], [3, 5, 7], [f.shape[0] - 1, 2, f.shape[2] - 1]])
    np.testing.assert_array_equal(f.xyz_to_index(f.index_to_xyz(idx)), idx)
    uvs = f.index_to_frame(idx)
    np.testing.assert_allclose(uvs[:, 2], f.s_A[idx[:, 2]], atol=1e-12)
    np.testing.assert_allclose(axis.to_frame(f.index_to_xyz(idx)), uvs, atol=1e-9)
    centre = np.array([[f.shape[0] // 2, f.shape[1] // 2, 3]])
    np.testing.assert_allclose(f.index_to_frame(centre)[0, :2], [0.0, 0.0], atol=1e-12)
    assert f.contains_index(centre)[0]
    assert not f.contains_index(np.array([[0, 0, 0], [-1, 0, 0]])).any()


def test_probes_cannot_bypass_the_pore_outside_a_thin_protein():
    # Rings of radius 6 Å: the pore is 6 - 1.7 = 4.3 Å wide (Bondi 1964 C radius); inside a
    # 12 Å search cylinder a 4.3 Å-wide gap remains outside the wall. A 3 Å probe fits there,
    # not through the pore, so it must not reach the far end.
    z = np.arange(-8.0, 8.01, 0.5)
    atoms = ring_stack(np.full(z.shape, 6.0), z, atoms_per_ring=48)
    f = reach_field(atoms, Z_AXIS, spacing_A=0.5, pore_radius_A=12.0, levels_A=[1.0, 3.0, 4.5])
    assert f.region(1.0)[:, :, f.exit_layer].any()
    assert not f.region(4.5)[:, :, f.exit_layer].any()
    outside = f.clearance_A[:, :, f.shape[2] // 2] > 3.0
    rho = np.hypot(*np.meshgrid(f.u_A, f.v_A, indexing="ij"))
    assert (outside & (rho > 8.0)).any()  # room for the probe outside the wall ...
    assert not f.region(3.0)[:, :, f.shape[2] // 2][rho > 8.0].any()  # ... but no access


def test_to_dict_and_read_only():
    atoms = _random_channel(n=60)
    f = reach_field(atoms, Z_AXIS, spacing_A=0.8, pore_radius_A=4.0, levels_A=[0.5, 1.0])
    d = f.to_dict()
    assert d["shape"] == list(f.shape) and d["method"] == "label" and d["entry"] == "low"
    with pytest.raises(ValueError):
        f.reach_A[0, 0, 0] = 1.0
    with pytest.raises(InputError, match="levels"):
        f.region(0.75)


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"spacing_A": 0}, "spacing_A must be > 0"),
        ({"spacing_A": -0.5}, "spacing_A must be > 0"),
        ({"method": "magic"}, "method must be one of"),
        ({"method": "label"}, "needs levels_A"),
        ({"levels_A": [1.0, 0.5]}, "strictly increasing"),
        ({"levels_A": [-1.0, 0.5]}, ">= 0"),
        ({"from_end": "middle"}, "from_end must be one of"),
        ({"pore_radius_A": 0.5}, "at least 2 spacings"),
    ],
)
def test_bad_input(kwargs, match):
    atoms = _random_channel(n=40)
    with pytest.raises(InputError, match=match):
        reach_field(atoms, Z_AXIS, **kwargs)


def test_no_atom_near_axis():
    atoms = make_atoms([[30.0, 0.0, 0.0], [30.0, 1.0, 0.0]])
    with pytest.raises(PoreNotFoundError, match="no atom lies within"):
        reach_field(atoms, Z_AXIS, pore_radius_A=10.0)


def test_narrow_gaps_in_the_wall_do_not_open_a_bypass():
    # 7 carbon atoms per ring of radius 4 Å sit 3.59 Å apart (2 x 1.7 Å = 3.4 Å): slits of
    # clearance ~0.1 Å cross the wall. The pore is 4 - 1.7 = 2.3 Å wide; outside the wall a
    # 14 Å search cylinder leaves room for a 3 Å probe. With the smallest probe (1 Å) wider
    # than the slits they count as wall and the 3 Å probe cannot go round the protein ...
    z = np.arange(-8.0, 8.01, 0.5)
    atoms = ring_stack(np.full(z.shape, 4.0), z, atoms_per_ring=7, twist=False)
    f = reach_field(atoms, Z_AXIS, spacing_A=0.5, pore_radius_A=14.0, levels_A=[1.0, 3.0])
    assert f.region(1.0)[:, :, f.exit_layer].any()
    assert not f.region(3.0)[:, :, f.exit_layer].any()
    # ... whereas with a smallest probe narrower than the slits the outside is open
    g = reach_field(atoms, Z_AXIS, spacing_A=0.5, pore_radius_A=14.0, levels_A=[0.02, 3.0])
    assert g.region(3.0)[:, :, g.exit_layer].any()
