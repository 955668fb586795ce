"""Off-grid scan results: bottleneck, pass decisions, capture radii, frame independence.

References: closed-form ring geometry (carbon 1.70 Å, Bondi 1964, Table I), the profile's
narrowest radius, and the independent 3-D raster flood fill of ``tests/brute_force.py``.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from brute_force import Clearance, flood_capture
from conftest import mdanalysis_test_file
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

import poreprobe as pp
from poreprobe.geometry import synthetic as syn
from poreprobe.geometry.inplane import inplane_angle_rad

CARBON_A = 1.70  # Bondi 1964, Table I
Z_AXIS = pp.PoreAxis([0, 0, 0], [0, 0, 1], "user")


def test_ring_channel_bottleneck_equals_the_waist():
    # hourglass of rings: the waist ring (radius 3.5 Å) sets the narrowest passage exactly
    atoms, radii, z = syn.hourglass(r_waist_A=3.5)
    probes = [1.0, 1.5, 1.75, 1.78, 1.82, 2.0]
    scan = pp.probe_scan(atoms, Z_AXIS, probe_radii_A=probes, pore_radius_A=10)
    expected = 3.5 - CARBON_A
    assert scan.bottleneck_clearance_A == pytest.approx(expected, abs=0.02)
    np.testing.assert_array_equal(scan.passes, np.asarray(probes) <= expected)
    prof = pp.radius_profile(atoms, Z_AXIS, step_A=0.1, margin_A=0)
    assert scan.bottleneck_clearance_A == pytest.approx(prof.min_radius_A, abs=0.02)


def test_gramicidin_largest_passing_probe_equals_profile():
    # PDB 1GRM (MDAnalysisTests 1grm_single.pdb): the profile's narrowest radius is the
    # largest probe that gets through, to 0.02 Å (issue: a 1.25 Å probe used to fail)
    atoms = pp.read_structure(mdanalysis_test_file("1grm_single.pdb"))
    axis = pp.find_pore_axis(atoms)
    prof = pp.radius_profile(atoms, axis, step_A=0.05)
    probes = [1.0, 1.25, 1.3, 1.45, 1.6]
    scan = pp.probe_scan(atoms, axis, probe_radii_A=probes, pore_radius_A=10)
    assert scan.bottleneck_clearance_A == pytest.approx(prof.min_radius_A, abs=0.02)
    np.testing.assert_array_equal(scan.passes, np.asarray(probes) <= scan.bottleneck_clearance_A)
    assert scan.passes[:3].all() and not scan.passes[3:].any()


def _rough_funnel(seed=3):
    """A funnel of jittered rings narrowing from 7 Å (low end) to 4 Å (high end)."""
    z = np.arange(-6, 6.01, 1.0)
    atoms = syn.ring_stack(7.0 - 0.25 * (z + 6), z, atoms_per_ring=24)
    rng = np.random.default_rng(seed)
    return pp.make_atoms(atoms.coords_A + rng.normal(scale=0.3, size=atoms.coords_A.shape))


@pytest.fixture(scope="module")
def funnel_scan():
    atoms = _rough_funnel()
    return atoms, pp.probe_scan(atoms, Z_AXIS, probe_radii_A=[3.0, 4.0], pore_radius_A=10)


def test_capture_radii_match_brute_force_flood(funnel_scan):
    atoms, scan = funnel_scan
    clear = Clearance(atoms.coords_A, pp.atom_radii_A(atoms))
    for i, p in enumerate(scan.probe_radius_A):
        cap, stop, passes = flood_capture(
            clear, Z_AXIS.point_A, Z_AXIS.direction, p, box_radius=7.5, s_range=(-9.0, 2.5)
        )
        assert not passes and not scan.passes[i]
        assert scan.stop_s_A[i] == pytest.approx(stop, abs=0.02)
        assert scan.capture_radius_A[i] == pytest.approx(cap, abs=0.03)
    assert 0 <= scan.discretisation_error_A < 0.1
    assert scan.error_spacing_A == pytest.approx(1.5 * scan.spacing_A)


@settings(
    max_examples=3, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    rotvec=st.lists(st.floats(-3.0, 3.0), min_size=3, max_size=3),
    shift=st.lists(st.floats(-20.0, 20.0), min_size=3, max_size=3),
)
def test_scan_unchanged_under_rigid_motion(funnel_scan, rotvec, shift):
    atoms, scan = funnel_scan
    rot = Rotation.from_rotvec(rotvec)
    moved = pp.make_atoms(rot.apply(np.array(atoms.coords_A)) + shift)
    axis = pp.PoreAxis(np.asarray(shift, dtype=float), rot.apply([0, 0, 1.0]), "user")
    other = pp.probe_scan(moved, axis, probe_radii_A=[3.0, 4.0], pore_radius_A=10)
    np.testing.assert_allclose(other.capture_radius_A, scan.capture_radius_A, atol=0.03)
    np.testing.assert_allclose(other.stop_s_A, scan.stop_s_A, atol=0.02)
    np.testing.assert_array_equal(other.passes, scan.passes)


def test_grid_angle_follows_the_structure():
    atoms = _rough_funnel()
    frame = Z_AXIS.to_frame(atoms.coords_A)
    theta = inplane_angle_rad(frame, 10.0)
    for phi in (0.3, 1.1, -2.0):
        c, s = np.cos(phi), np.sin(phi)
        turned = frame @ np.array([[c, s, 0], [-s, c, 0], [0, 0, 1]])
        delta = inplane_angle_rad(turned, 10.0) - theta
        # the grid turns with the atoms (the jittered rings have no exact symmetry)
        assert np.isclose(np.cos(delta - phi), 1.0, atol=1e-9)


def test_scan_json_and_text_report_the_discretisation(tmp_path, capsys):
    from poreprobe.cli.main import main
    from poreprobe.io.writer import write_structure

    path = tmp_path / "funnel.pdb"
    write_structure(_rough_funnel(), path)
    out = tmp_path / "scan.json"
    rc = main(
        [
            "scan",
            str(path),
            "--axis-point",
            "0",
            "0",
            "0",
            "--axis-direction",
            "0",
            "0",
            "1",
            "--probe-radii-A",
            "2:4:1",
            "--search-radius-A",
            "10",
            "--json",
            str(out),
        ]
    )
    assert rc == 0
    text = capsys.readouterr().out
    data = json.loads(out.read_text())
    d = data["discretisation"]
    assert d["compared_spacing_A"] == pytest.approx(0.75)
    assert d["max_capture_change_A"] is not None and d["max_capture_change_A"] >= 0
    assert "discretisation estimate" in text


def test_real_fragment_capture_radius_matches_brute_force():
    # K+ channel fragment (MDAnalysisTests 2r9r-1b.psf + .xyz), a 4 Å probe entering from
    # the cytoplasmic end (C-termini, high s here): capture radius within 0.03 Å and stop
    # level within 0.02 Å of the 3-D brute-force flood fill (axis: CA polygons, helper)
    from _real_channels import symmetry_axis

    atoms = pp.read_structure(
        mdanalysis_test_file("2r9r-1b.psf"), trajectory=mdanalysis_test_file("2r9r-1b.xyz")
    )
    point, direction = symmetry_axis(atoms)
    axis = pp.PoreAxis(point, direction, "user")
    frame = axis.to_frame(atoms.coords_A)
    c_term = frame[atoms.resid == atoms.resid.max(), 2].mean()
    assert c_term > 0  # the C-termini sit at high s on this axis
    scan = pp.probe_scan(atoms, axis, probe_radii_A=[4.0], from_end="high", pore_radius_A=12)
    clear = Clearance(atoms.coords_A, pp.atom_radii_A(atoms))
    top = float(frame[:, 2].max())
    # the brute force enters at low s: run it on the reversed axis
    cap, stop, passes = flood_capture(
        clear, point, -np.asarray(direction), 4.0, box_radius=9.0, s_range=(-top - 5.5, -10.5)
    )
    assert not passes and not scan.passes[0] and scan.enters[0]
    assert scan.stop_s_A[0] == pytest.approx(-stop, abs=0.02)
    assert scan.capture_radius_A[0] == pytest.approx(cap, abs=0.03)
