"""Tests of poreprobe.scale.trajectory: per-frame profiles, statistics and closing frames."""

from __future__ import annotations

import warnings

import MDAnalysis
import numpy as np
import pytest
from _trajectory_data import (
    AMPLITUDE_A,
    N_FRAMES,
    PERIOD,
    RING_Z_A,
    grm_models_path,
    rigid_motion,
    ring_radii,
    write_trajectory,
)

from poreprobe import atom_radii_A, atoms_from_atomgroup, find_pore_axis, radius_profile
from poreprobe.errors import InputError
from poreprobe.geometry.synthetic import expected_radius_A
from poreprobe.scale.trajectory import PoreProfileAnalysis, profile_trajectory
from poreprobe.scale.trajectory_profiles import TrajectoryProfiles, frames_csv, planes_csv

pytestmark = pytest.mark.filterwarnings("ignore:.*gives no time step")

#: Bondi 1964, Table I: van der Waals radius of carbon.
CARBON_A = 1.70
#: Shannon 1976 (Acta Cryst. A32:751), CN 6: crystal radius of K+, the default threshold.
K_CRYSTAL_A = 1.38


@pytest.fixture(scope="module")
def breathing(tmp_path_factory):
    return write_trajectory(tmp_path_factory.mktemp("breathing"))


def universe(*files):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return MDAnalysis.Universe(*files)


@pytest.fixture(scope="module")
def breathing_fixed(breathing):
    u = universe(*breathing)
    return PoreProfileAnalysis(u.select_atoms("protein"), step_A=0.5).run()


def test_breathing_minimum_follows_geometry(breathing_fixed):
    # closed form (geometry): on the axis in the waist plane the nearest atoms are the
    # waist ring's, at its radius R(t) = 4 - 1.2 sin(2 pi t / 8) Å, so the sphere radius
    # is R(t) - r_C; every other plane is farther from its rings.
    t = np.arange(N_FRAMES)
    waist_A = ring_radii(t[:, None])[:, RING_Z_A == 0][:, 0]
    np.testing.assert_allclose(
        waist_A, 4.0 - AMPLITUDE_A * np.sin(2 * np.pi * t / PERIOD), rtol=0, atol=1e-12
    )
    res = breathing_fixed.results
    np.testing.assert_allclose(res.min_radius_A, waist_A - CARBON_A, rtol=0, atol=1e-4)
    np.testing.assert_allclose(res.min_s_A, 0.0, rtol=0, atol=1e-9)


def test_breathing_profile_matches_closed_form(breathing_fixed):
    # exact on-axis profile of a ring stack (poreprobe.geometry.synthetic; geometry, Bondi 1964 r_C)
    ana = breathing_fixed
    inside = np.abs(ana.s_A) <= RING_Z_A.max()
    for t in range(N_FRAMES):
        expected = expected_radius_A(ring_radii(t), RING_Z_A, ana.s_A[inside], CARBON_A)
        np.testing.assert_allclose(ana.results.radius_A[t, inside], expected, rtol=0, atol=1e-4)


def test_closed_frames_use_k_crystal_radius(breathing_fixed):
    ana = breathing_fixed
    assert ana.closed_below_A == pytest.approx(K_CRYSTAL_A, abs=1e-12)
    # minimum radius 2.3 - 1.2 sin(pi t / 4) < 1.38 only where sin = 1: t = 2, 10
    np.testing.assert_array_equal(ana.results.closed_frames, [2, 10])


def test_fit_recovers_the_rigid_motion(breathing_fixed):
    ana = breathing_fixed
    res = ana.results
    rot0, shift0 = rigid_motion(0)
    # the reference axis is the stack's z axis carried by frame 0's motion
    np.testing.assert_allclose(ana.reference_axis.direction, rot0 @ [0, 0, 1], atol=1e-6)
    for t in range(N_FRAMES):
        rot, shift = rigid_motion(t)
        np.testing.assert_allclose(res.axis_direction[t], rot @ [0, 0, 1], atol=1e-6)
        np.testing.assert_allclose(res.axis_point_A[t], shift, atol=1e-4)
    # rings only change radius, so the unweighted fit leaves no rotation: RMSD is the breathing
    assert res.fit_rmsd_A[0] == pytest.approx(0.0, abs=1e-4)
    assert np.all(res.fit_rmsd_A[[2, 6]] > 1.0)


def test_statistics_over_frames(breathing_fixed):
    res = breathing_fixed.results
    np.testing.assert_allclose(res.mean_radius_A, res.radius_A.mean(0), rtol=1e-12)
    np.testing.assert_allclose(res.sd_radius_A, res.radius_A.std(0, ddof=1), rtol=1e-12)
    np.testing.assert_allclose(res.percentile_radius_A[2], np.median(res.radius_A, 0), rtol=1e-12)
    # mean of 2.3 - 1.2 sin(pi t / 4) over t = 0..11: the sines of t = 8..11 repeat 0..3
    sines = np.sin(np.pi * np.arange(N_FRAMES) / 4)
    assert res.min_radius_mean_A == pytest.approx(2.3 - 1.2 * sines.mean(), abs=1e-4)
    assert res.min_radius_sd_A == pytest.approx(1.2 * sines.std(ddof=1), abs=1e-4)
    np.testing.assert_array_equal(res.n_enclosed, N_FRAMES)


def test_per_frame_axis_equals_single_structure_profile(breathing):
    u = universe(*breathing)
    ag = u.select_atoms("protein")
    ana = PoreProfileAnalysis(ag, axis_mode="per-frame", step_A=0.5).run(step=3)
    assert list(ana.frames) == [0, 3, 6, 9]
    for row, frame in enumerate(ana.frames):
        u.trajectory[frame]
        atoms = atoms_from_atomgroup(ag)
        radii = atom_radii_A(atoms)
        axis = find_pore_axis(atoms, radii_A=radii)
        prof = radius_profile(
            atoms, axis, radii_A=radii, step_A=0.5, s_range_A=(ana.s_A[0], ana.s_A[-1])
        )
        np.testing.assert_array_equal(prof.s_A, ana.s_A)
        np.testing.assert_array_equal(ana.results.radius_A[row], prof.radius_A)
        assert ana.results.min_radius_A[row] == prof.min_radius_A
        np.testing.assert_array_equal(ana.results.axis_direction[row], axis.direction)


def test_grm_per_frame_equals_single_structure_profile():
    u = universe(grm_models_path())
    ag = u.select_atoms("all")
    ana = PoreProfileAnalysis(ag, axis_mode="per-frame", step_A=0.5).run(step=5)
    for row, frame in enumerate(ana.frames):
        u.trajectory[frame]
        atoms = atoms_from_atomgroup(ag)
        radii = atom_radii_A(atoms)
        axis = find_pore_axis(atoms, radii_A=radii)
        if axis.direction @ ana.reference_axis.direction < 0:
            axis = axis.flipped("test")
        prof = radius_profile(
            atoms, axis, radii_A=radii, step_A=0.5, s_range_A=(ana.s_A[0], ana.s_A[-1])
        )
        np.testing.assert_array_equal(ana.results.radius_A[row], prof.radius_A)
        assert ana.results.min_s_A[row] == prof.min_s_A


def test_grm_fixed_axis_equals_profile_of_aligned_frame():
    from MDAnalysis.analysis.align import alignto

    u = universe(grm_models_path())
    ref = universe(grm_models_path())
    ana = PoreProfileAnalysis(u.select_atoms("all"), step_A=0.5, align_selection="name CA").run(
        step=5
    )
    for row, frame in enumerate(ana.frames):
        u.trajectory[frame]
        _, rmsd_after = alignto(u.atoms, ref.atoms, select="name CA", match_atoms=False)
        atoms = atoms_from_atomgroup(u.atoms)
        prof = radius_profile(
            atoms,
            ana.reference_axis,
            radii_A=atom_radii_A(atoms),
            step_A=0.5,
            s_range_A=(ana.s_A[0], ana.s_A[-1]),
        )
        np.testing.assert_allclose(ana.results.radius_A[row], prof.radius_A, rtol=0, atol=1e-4)
        assert ana.results.fit_rmsd_A[row] == pytest.approx(rmsd_after, abs=1e-4)


def test_summary_and_exports(breathing_fixed, tmp_path):
    summary = breathing_fixed.summary()
    assert isinstance(summary, TrajectoryProfiles)
    assert summary.n_frames == N_FRAMES
    with pytest.raises(ValueError, match="read-only"):
        summary.radius_A[0, 0] = 1.0
    data = summary.to_dict()
    assert data["radius_set"] == "bondi"
    assert data["per_frame"]["radius_A"].shape == (N_FRAMES, len(summary.s_A))
    assert list(data["closed_frames"]) == [2, 10]
    text = planes_csv(summary, tmp_path / "planes.csv")
    lines = [ln for ln in text.splitlines() if not ln.startswith("#")]
    assert lines[0].split(",")[:3] == ["s_A", "mean_radius_A", "sd_radius_A"]
    assert len(lines) == 1 + len(summary.s_A)
    frames = [ln.split(",") for ln in frames_csv(summary).splitlines() if not ln.startswith("#")]
    assert frames[0] == ["frame", "time_ps", "min_radius_A", "min_s_A", "fit_rmsd_A", "closed"]
    assert [row[0] for row in frames[1:] if row[-1] == "1"] == ["2", "10"]


def test_missing_time_step_is_said_once():
    from poreprobe.errors import QualityWarning

    u = universe(grm_models_path())
    with pytest.warns(QualityWarning, match="gives no time step") as record:
        PoreProfileAnalysis(u.atoms, step_A=1.0).run(stop=2)
    assert len([w for w in record if "time step" in str(w.message)]) == 1


def test_summary_before_run_is_refused(breathing):
    ana = PoreProfileAnalysis(universe(*breathing).atoms, step_A=0.5)
    with pytest.raises(InputError, match="run"):
        ana.summary()


def test_profile_trajectory_serial(breathing):
    result = profile_trajectory(*breathing, step=4, step_A=0.5)
    assert list(result.frames) == [0, 4, 8]
    assert result.source == "breathing.pdb" and result.trajectory == "breathing.dcd"
    np.testing.assert_allclose(result.min_radius_A, 2.3, atol=1e-4)  # sin(pi t / 4) = 0


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"axis_mode": "sideways"}, "axis_mode must be one of fixed, per-frame"),
        ({"step_A": 0.0}, "step_A must be > 0"),
        ({"reference_frame": 99}, "reference_frame must be between 0 and 11"),
        ({"percentiles": (50, 150)}, "percentiles must be between 0"),
        ({"closed_below_A": -1}, "closed_below_A must be >= 0"),
        ({"align_selection": "name XYZ"}, "matches no atoms"),
        ({"s_range_A": (5, -5)}, "high > low"),
        ({"radii": "nonesuch"}, "radii must be one of"),
    ],
)
def test_bad_options_are_named(breathing, kwargs, match):
    ag = universe(*breathing).select_atoms("protein")
    with pytest.raises(InputError, match=match):
        PoreProfileAnalysis(ag, **kwargs)


def test_not_an_atomgroup():
    with pytest.raises(InputError, match="must be an MDAnalysis AtomGroup"):
        PoreProfileAnalysis(np.zeros((10, 3)))


def test_profile_trajectory_bad_input(breathing, tmp_path):
    with pytest.raises(InputError, match="no such file"):
        profile_trajectory(str(tmp_path / "missing.pdb"))
    with pytest.raises(InputError, match="matches no atoms"):
        profile_trajectory(*breathing, selection="resname HOH")
    with pytest.raises(InputError, match="no frames selected"):
        profile_trajectory(*breathing, start=50)
    with pytest.raises(InputError, match="backend must be one of"):
        profile_trajectory(*breathing, backend="threads")


def test_package_exports_trajectory_names_lazily():
    import poreprobe

    assert poreprobe.PoreProfileAnalysis is PoreProfileAnalysis
    assert poreprobe.profile_trajectory is profile_trajectory
    with pytest.raises(AttributeError, match="no attribute 'no_such_name'"):
        poreprobe.no_such_name  # noqa: B018


def test_capture_radius_per_frame_equals_scan_of_that_frame(breathing):
    from poreprobe.geometry.probes import capture_radius_at, probe_scan

    u = universe(*breathing)
    ana = PoreProfileAnalysis(
        u.select_atoms("protein"), step_A=0.5, capture_probe_radius_A=1.0
    ).run(step=2)
    assert list(ana.frames) == [0, 2, 4, 6, 8, 10]
    for row, frame in enumerate(ana.frames):
        u.trajectory[frame]
        atoms, axis, _, _ = ana.frame_atoms_and_axis()
        scan = probe_scan(atoms, axis, probe_radii_A=[1.0], radii_A=atom_radii_A(atoms))
        assert ana.results.capture_radius_A[row] == capture_radius_at(scan, 1.0)
    # closed form (geometry): the probe passes the waist, whose free radius is
    # R(t) - r_C (Bondi 1964, Table I), so c = R(t) - r_C - p; 0.01 Å covers the
    # scalloped wall of 32 atoms per ring
    waist_A = ring_radii(ana.frames[:, None])[:, RING_Z_A == 0][:, 0]
    np.testing.assert_allclose(
        ana.results.capture_radius_A, waist_A - CARBON_A - 1.0, rtol=0, atol=0.01
    )
    summary = ana.summary()
    assert summary.capture_mean_A == pytest.approx(np.mean(summary.capture_radius_A))
    assert frames_csv(summary).splitlines()[3].split(",")[4] == "capture_radius_A_p1"


def test_no_capture_unless_asked(breathing_fixed):
    assert np.isnan(breathing_fixed.results.capture_radius_A).all()
    summary = breathing_fixed.summary()
    assert summary.capture_radius_A is None and summary.to_dict()["capture"] is None


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"capture_probe_radius_A": 0}, "capture_probe_radius_A must be > 0"),
        ({"capture_from_end": "middle"}, "capture_from_end must be one of low, high"),
        ({"capture_spacing_A": -1}, "capture_spacing_A must be > 0"),
    ],
)
def test_bad_capture_options(breathing, kwargs, match):
    with pytest.raises(InputError, match=match):
        PoreProfileAnalysis(universe(*breathing).atoms, **kwargs)


@pytest.mark.parametrize("step_A", [0.2, 0.3, 0.7])
def test_grid_is_the_reference_planes_for_any_step(breathing, step_A):
    from poreprobe.geometry.profile import plane_positions_A

    ag = universe(*breathing).select_atoms("protein")
    ana = PoreProfileAnalysis(ag, step_A=step_A)
    s_ref = ana.reference_axis.s_A(ag.positions.astype(np.float64))
    np.testing.assert_array_equal(ana.s_A, plane_positions_A(s_ref, step_A, 2.0))
    ana.run(stop=2)  # every frame's profile lands on the same planes
    assert ana.results.radius_A.shape == (2, len(ana.s_A))
