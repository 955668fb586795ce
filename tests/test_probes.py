"""Tests of poreprobe.geometry.probes: probe-size scan, stop levels and capture radii.

Expected values come from closed-form geometry derived here. Atom radius: carbon
1.70 Å (Bondi 1964, J. Phys. Chem. 68:441, Table I), the default radius set.
"""

import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from poreprobe import InputError, PoreAxis, ProbeScan, capture_radius_at, probe_scan
from poreprobe.geometry.probes import DEFAULT_PROBE_RADII_A, profiles_csv, scan_csv
from poreprobe.geometry.synthetic import cone, ring_stack
from poreprobe.io.export import to_json

R_C = 1.70  # Bondi 1964, Table I (carbon)
Z_AXIS = PoreAxis([0.0, 0.0, 0.0], [0.0, 0.0, 1.0], "user")

# Cylinder: rings of 64 carbon atoms, ring radius R = 6 Å, every 0.5 Å from z = -8 to 8.
CYL_R, CYL_Z0 = 6.0, -8.0
CYL_PROBES = [1.0, 2.0, 3.0, 4.45, 5.0]


@pytest.fixture(scope="module")
def cylinder_scan():
    z = np.arange(-8.0, 8.01, 0.5)
    atoms = ring_stack(np.full(z.shape, CYL_R), z, atoms_per_ring=64)
    return probe_scan(atoms, Z_AXIS, probe_radii_A=CYL_PROBES, spacing_A=0.5, pore_radius_A=10.0)


# Funnel: ring radius grows linearly from 4 Å (z = -10) to 10 Å (z = +10); probes enter at
# the wide end (from_end="high").
CONE_SLOPE, CONE_MID = 6.0 / 20.0, 7.0  # ring radius = 7 + 0.3 z
CONE_SEC = math.sqrt(1 + CONE_SLOPE**2)  # 1 / cos(alpha), alpha = wall half-angle
CONE_PROBES = [1.5, 3.0, 4.0, 5.0]


@pytest.fixture(scope="module")
def cone_atoms():
    atoms, _, _ = cone(4.0, 10.0, 20.0, spacing_A=0.5, atoms_per_ring=64)
    return atoms


@pytest.fixture(scope="module")
def cone_scan(cone_atoms):
    return probe_scan(
        cone_atoms,
        Z_AXIS,
        probe_radii_A=CONE_PROBES,
        spacing_A=0.5,
        pore_radius_A=12.0,
        from_end="high",
    )


def test_cylinder_probe_smaller_than_pore_passes(cylinder_scan):
    # Closed form: the wall of a dense stack of rings lies at R - r = 4.3 Å from the axis and
    # the swept region of any probe p < R - r fills it, so R_open = R - r and the capture
    # radius is c(p) = R - r - p.
    scan = cylinder_scan
    for p in (1.0, 2.0, 3.0):
        i = CYL_PROBES.index(p)
        assert scan.passes[i] and scan.enters[i]
        np.testing.assert_allclose(scan.capture_radius_A[i], CYL_R - R_C - p, atol=0.05)
        np.testing.assert_allclose(scan.capture_radius_inscribed_A[i], CYL_R - R_C - p, atol=0.12)
        assert CYL_Z0 - 0.5 <= scan.stop_s_A[i] <= -CYL_Z0 + 0.5  # bottleneck inside the pore


def test_cylinder_probe_stuck_in_the_mouth(cylinder_scan):
    # A probe with R - r < p < sqrt(R^2 + r^2) - r stops on the axis below the first ring
    # (z0) where sqrt(R^2 + d^2) = p + r, i.e. d* = sqrt((p + r)^2 - R^2); in that plane the
    # ring's atoms cut a circle of radius R - sqrt(r^2 - d*^2) that the probe sweeps fully.
    p = 4.45
    i = CYL_PROBES.index(p)
    d_star = math.sqrt((p + R_C) ** 2 - CYL_R**2)
    scan = cylinder_scan
    assert not scan.passes[i] and scan.enters[i]
    np.testing.assert_allclose(scan.stop_s_A[i], CYL_Z0 - d_star, atol=0.02)
    expected = CYL_R - math.sqrt(R_C**2 - d_star**2) - p
    np.testing.assert_allclose(scan.capture_radius_A[i], expected, atol=0.05)


def test_cylinder_probe_larger_than_mouth_never_enters(cylinder_scan):
    # p > sqrt(R^2 + r^2) - r = 4.536 Å stops beyond the atoms (d* > r): capture 0, flagged.
    p = 5.0
    i = CYL_PROBES.index(p)
    scan = cylinder_scan
    assert not scan.enters[i] and not scan.passes[i]
    assert scan.capture_radius_A[i] == 0.0 and scan.capture_radius_inscribed_A[i] == 0.0
    np.testing.assert_allclose(
        scan.stop_s_A[i], CYL_Z0 - math.sqrt((p + R_C) ** 2 - CYL_R**2), atol=0.02
    )
    assert np.isnan(scan.accessible_radius_A[i]).all()


def test_cone_stop_level_and_capture_radius(cone_scan):
    # Closed form for a funnel wall at half-angle alpha (tan alpha = 0.3): a probe's centre
    # stays (p + r)/cos(alpha) inside the ring-centre line, so it stops on the axis where the
    # ring radius 7 + 0.3 z equals (p + r) sec(alpha). The largest on-axis empty sphere that
    # touches the wall at that level has radius p sec(alpha) ... in that plane the swept
    # section reaches the wall, at radius (p + r) sec(alpha) - r sec(alpha), so
    # c(p) = p sec(alpha) - p, independent of the atom radius.
    scan = cone_scan
    for p in (3.0, 4.0, 5.0):
        i = CONE_PROBES.index(p)
        assert scan.enters[i] and not scan.passes[i]
        z_star = ((p + R_C) * CONE_SEC - CONE_MID) / CONE_SLOPE
        np.testing.assert_allclose(scan.stop_s_A[i], z_star, atol=0.03)
        np.testing.assert_allclose(scan.capture_radius_A[i], p * (CONE_SEC - 1), atol=0.02)
        np.testing.assert_allclose(
            scan.capture_radius_inscribed_A[i], p * (CONE_SEC - 1), atol=0.02
        )
        # profile: defined from the entry down to the stop level only
        finite = np.isfinite(scan.accessible_radius_A[i])
        assert finite.any() and (scan.s_A[finite] >= z_star - 0.5).all()


def test_cone_small_probe_passes_with_bottleneck_at_narrow_end(cone_scan):
    # p = 1.5 < 4 - 1.7: passes; the narrowest section is the last ring's plane (z = -10),
    # radius 4 - 1.7 = 2.3 Å, so c = 2.3 - 1.5.
    i = CONE_PROBES.index(1.5)
    assert cone_scan.passes[i]
    np.testing.assert_allclose(cone_scan.stop_s_A[i], -10.0, atol=0.3)
    np.testing.assert_allclose(cone_scan.capture_radius_A[i], 4.0 - R_C - 1.5, atol=0.05)


def test_grid_halving_changes_capture_radii_little(cone_atoms, cone_scan):
    # convergence: 0.5 Å -> 0.25 Å grid changes capture radii by < 0.05 Å
    probes = [1.5, 3.0, 5.0]
    fine = probe_scan(
        cone_atoms,
        Z_AXIS,
        probe_radii_A=probes,
        spacing_A=0.25,
        pore_radius_A=12.0,
        from_end="high",
    )
    coarse_idx = [CONE_PROBES.index(p) for p in probes]
    assert (np.abs(fine.capture_radius_A - cone_scan.capture_radius_A[coarse_idx]) < 0.05).all()
    assert (
        np.abs(fine.capture_radius_inscribed_A - cone_scan.capture_radius_inscribed_A[coarse_idx])
        < 0.05
    ).all()
    assert (np.abs(fine.stop_s_A - cone_scan.stop_s_A[coarse_idx]) < 0.05).all()


def _rotated(atoms, axis, rotvec, shift):
    rot = Rotation.from_rotvec(rotvec)
    # (copies: scipy's Rotation.apply rejects read-only arrays)
    return (
        atoms.with_coords(rot.apply(np.array(atoms.coords_A)) + shift),
        PoreAxis(
            rot.apply(np.array(axis.point_A)) + shift, rot.apply(np.array(axis.direction)), "user"
        ),
    )


@settings(
    max_examples=3, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    rotvec=st.lists(st.floats(-3.0, 3.0), min_size=3, max_size=3),
    shift=st.lists(st.floats(-20.0, 20.0), min_size=3, max_size=3),
)
def test_rigid_motion_invariance(cone_atoms, cone_scan, rotvec, shift):
    atoms, axis = _rotated(cone_atoms, Z_AXIS, np.array(rotvec), np.array(shift))
    moved = probe_scan(
        atoms, axis, probe_radii_A=CONE_PROBES, spacing_A=0.5, pore_radius_A=12.0, from_end="high"
    )
    np.testing.assert_array_equal(moved.passes, cone_scan.passes)
    np.testing.assert_array_equal(moved.enters, cone_scan.enters)
    np.testing.assert_allclose(moved.stop_s_A, cone_scan.stop_s_A, atol=0.05)
    np.testing.assert_allclose(moved.capture_radius_A, cone_scan.capture_radius_A, atol=0.05)


def test_profiles_nested_and_nan_beyond_stop(cone_scan):
    prof = cone_scan.accessible_radius_A
    # swept regions are nested: a larger probe never reaches wider at the same level
    both = np.isfinite(prof[:-1]) & np.isfinite(prof[1:])
    assert both.any()
    assert (prof[:-1][both] >= prof[1:][both] - 0.05).all()
    # entering from high s: NaN below each stopped probe's stop level
    for i in np.flatnonzero(~cone_scan.passes):
        assert np.isnan(prof[i][cone_scan.s_A < cone_scan.stop_s_A[i] - 1e-9]).all()
    assert (
        cone_scan.accessible_radius_inscribed_A[np.isfinite(prof)] <= prof[np.isfinite(prof)] + 1e-9
    ).all()


def test_capture_radius_at_interpolates(cone_scan):
    c = cone_scan.capture_radius_A
    assert capture_radius_at(cone_scan, 3.0) == pytest.approx(c[1], abs=1e-12)
    assert capture_radius_at(cone_scan, 3.5) == pytest.approx(0.5 * (c[1] + c[2]), abs=1e-12)
    got = capture_radius_at(cone_scan, [4.0, 4.25], inscribed=True)
    ci = cone_scan.capture_radius_inscribed_A
    np.testing.assert_allclose(got, [ci[2], 0.75 * ci[2] + 0.25 * ci[3]], atol=1e-12)
    with pytest.raises(InputError, match="within the scanned range"):
        capture_radius_at(cone_scan, 6.5)
    with pytest.raises(InputError, match="finite"):
        capture_radius_at(cone_scan, float("nan"))


def test_result_is_frozen_and_exports(cone_scan, tmp_path):
    assert isinstance(cone_scan, ProbeScan)
    with pytest.raises(ValueError):
        cone_scan.capture_radius_A[0] = 1.0
    data = json.loads(to_json(cone_scan))
    cap = data["capture"]
    for key in (
        "probe_radius_A",
        "capture_radius_A",
        "capture_radius_inscribed_A",
        "stop_s_A",
        "passes",
    ):
        assert len(cap[key]) == len(CONE_PROBES)
    assert len(data["profiles"]["accessible_radius_A"]) == len(CONE_PROBES)
    assert len(data["profiles"]["accessible_radius_A"][0]) == len(data["profiles"]["s_A"])
    assert data["radius_set"] == "bondi" and data["entry"] == "high"
    rows = scan_csv(cone_scan, tmp_path / "c.csv").splitlines()
    assert rows[3].startswith("probe_radius_A,capture_radius_A") and len(rows) == 4 + 4
    assert profiles_csv(cone_scan).count("\n") > 10


def test_default_probes():
    assert len(DEFAULT_PROBE_RADII_A) == 23
    assert DEFAULT_PROBE_RADII_A[0] == 0.5 and DEFAULT_PROBE_RADII_A[-1] == 6.0


@pytest.mark.parametrize(
    "probes, match",
    [
        ([-1.0, 1.0], ">= 0"),
        ([0.0, 1.0], "must be > 0"),
        ([2.0, 1.0], "strictly increasing"),
        ([], "empty"),
        ([1.0, float("nan")], "NaN"),
    ],
)
def test_bad_probe_radii(cone_atoms, probes, match):
    with pytest.raises(InputError, match=match):
        probe_scan(cone_atoms, Z_AXIS, probe_radii_A=probes)
