"""Coordinate-error ensembles: definitions, physics on analytic ring channels, seeds, backends."""

from __future__ import annotations

import math
import warnings
from dataclasses import replace

import numpy as np
import pytest

from poreprobe.errors import InputError, QualityWarning
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.probes import probe_scan
from poreprobe.geometry.profile import radius_profile
from poreprobe.geometry.synthetic import cylinder, hourglass
from poreprobe.scale.coordinate_error import (
    RESOLUTION_FRACTION,
    coordinate_sigma_A,
    perturbed_atoms,
    sigma_from_b_factor_A,
)
from poreprobe.scale.ensemble import profile_ensemble
from poreprobe.scale.ensemble_result import Band

Z_AXIS = PoreAxis([0.0, 0.0, 0.0], [0.0, 0.0, 1.0], "user")


def _with_b(atoms, b):
    return replace(atoms, b_factor=np.full(len(atoms), float(b)))


@pytest.fixture(scope="module")
def waist():
    atoms, _, _ = hourglass(r_waist_A=4.0, r_end_A=8.0, length_A=16.0, atoms_per_ring=24)
    return atoms


# ------------------------------------------------------------------ definitions


def test_b_factor_is_eight_pi_squared_times_the_one_direction_msd():
    # B = 8 pi^2 <u^2>, <u^2> the mean-square displacement along one direction
    # (Willis and Pryor 1975, Thermal Vibrations in Crystallography): sigma = sqrt(B / 8 pi^2)
    u2 = 0.04
    b = 8 * math.pi**2 * u2
    assert sigma_from_b_factor_A([b])[0] == pytest.approx(0.2, rel=1e-12)
    # B = 20 A^2 gives 0.50 A per direction (the figure quoted in checks/verdict.py)
    assert sigma_from_b_factor_A([20.0])[0] == pytest.approx(0.5033, abs=1e-4)
    # and the perturbed copies really have that displacement: per-direction SD 0.2 A and a
    # 3-D mean-square displacement of 3 <u^2> over 30,000 atoms (statistical tolerance 2 %)
    atoms, _, _ = cylinder(radius_A=6.0, length_A=200.0, spacing_A=0.2, atoms_per_ring=30)
    atoms = _with_b(atoms, b)
    with pytest.warns(QualityWarning, match="every atom has B"):
        sigma = coordinate_sigma_A(atoms)
    moved = perturbed_atoms(atoms, sigma, seed=5, member=0).coords_A - atoms.coords_A
    assert len(atoms) > 30_000
    assert moved.std(axis=0) == pytest.approx([0.2, 0.2, 0.2], rel=0.02)
    assert (moved**2).sum(axis=1).mean() == pytest.approx(3 * u2, rel=0.02)


def test_uniform_and_resolution_rules():
    atoms = cylinder()[0]
    assert np.all(coordinate_sigma_A(atoms, "uniform", coordinate_error_A=0.3) == 0.3)
    # resolution rule (our rule of thumb, from memory): RMS 3-D error 0.15 x d
    sigma = coordinate_sigma_A(atoms, "resolution", resolution_A=3.5)
    assert RESOLUTION_FRACTION == 0.15
    assert np.allclose(sigma * math.sqrt(3), 0.15 * 3.5)


def test_missing_or_zero_b_factors_warn():
    atoms = cylinder()[0]  # make_atoms leaves B = 0
    with pytest.warns(QualityWarning, match="B-factor above 0"):
        assert np.all(coordinate_sigma_A(atoms) == 0)
    b = np.full(len(atoms), 20.0)
    b[:5] = 0.0
    with pytest.warns(QualityWarning, match="5 of"):
        sigma = coordinate_sigma_A(replace(atoms, b_factor=b))
    assert np.all(sigma[:5] == 0) and np.all(sigma[5:] > 0)
    with pytest.warns(QualityWarning, match="every atom has B"):
        coordinate_sigma_A(_with_b(atoms, 30.0))


@pytest.mark.parametrize(
    "kwargs, match",
    [
        ({"n_members": 0}, "n_members"),
        ({"n_members": 10_001}, "n_members"),
        ({"source": "guess"}, "source"),
        ({"source": "uniform"}, "coordinate_error_A"),
        ({"source": "uniform", "coordinate_error_A": -0.1}, "coordinate_error_A"),
        ({"source": "resolution"}, "resolution_A"),
        ({"source": "resolution", "resolution_A": 0}, "resolution_A"),
        ({"sigma_A": [0.1]}, "sigma_A"),
        ({"seed": -1}, "seed"),
        ({"match_capture_radius_A": 2.0}, "probe_radii_A"),
        ({"probe_radii_A": [-1.0]}, "probe_radii_A"),
    ],
)
def test_bad_input(kwargs, match):
    b = np.linspace(5.0, 20.0, len(cylinder()[0]))
    atoms = replace(cylinder()[0], b_factor=b)
    with pytest.raises(InputError, match=match):
        profile_ensemble(atoms, Z_AXIS, **{"n_members": 2, **kwargs})


def test_band_of_values_with_nan():
    band = Band.of([1.0, 2.0, 3.0, np.nan])
    assert (band.median, band.n) == (2.0, 3)
    assert band.p5 == pytest.approx(1.1) and band.p95 == pytest.approx(2.9)
    assert math.isnan(Band.of([np.nan]).median) and Band.of([]).n == 0
    assert "[" in band.text() and band.width == pytest.approx(1.8)


# ------------------------------------------------------------------ physics


def test_zero_displacement_collapses_to_the_model(waist):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)  # B = 0 everywhere: warned
        ens = profile_ensemble(waist, Z_AXIS, n_members=6, step_A=0.25, margin_A=0.0, ion="K")
    model = radius_profile(waist, Z_AXIS, step_A=0.25, margin_A=0.0)
    assert any("B-factor above 0" in w for w in ens.warnings)
    assert np.array_equal(ens.s_A, model.s_A)
    for row in ens.member_radius_A:
        assert np.array_equal(row, model.radius_A, equal_nan=True)
    for band in (ens.radius_band_A[0], ens.radius_band_A[1], ens.radius_band_A[2]):
        assert np.allclose(band, model.radius_A, equal_nan=True, atol=1e-12)
    assert ens.min_radius.p5 == ens.min_radius.p95 == model.min_radius_A
    assert ens.min_s.median == model.min_s_A
    assert ens.verdict_shares[ens.model_verdict] == 1.0


def test_zero_displacement_collapses_the_scan_bands():
    atoms, _, _ = cylinder(radius_A=5.0, length_A=8.0)
    probes = [1.0, 2.0, 3.5]
    ens = profile_ensemble(
        atoms,
        Z_AXIS,
        n_members=3,
        sigma_A=np.zeros(len(atoms)),
        probe_radii_A=probes,
        match_capture_radius_A=1.2,
        match_sd_A=0.1,
    )
    scan = probe_scan(atoms, Z_AXIS, probe_radii_A=probes)
    for j, band in enumerate(ens.capture_bands):
        assert band.p5 == band.p95 == pytest.approx(scan.capture_radius_A[j], nan_ok=True)
    assert ens.largest_passing.median == scan.largest_passing_probe_A
    assert ens.best_probe.p5 == ens.best_probe.p95
    assert ens.to_dict()["summary"]["match"]["best_probe_radius_A"]["n"] == 3


def test_spread_grows_in_proportion_to_the_displacement(waist):
    # The radius is a max-min of distances, positively homogeneous of degree 1 in small
    # displacements (analytic, first order): with the same random draws, twice the
    # displacement gives twice the deviation from the model. Checked within 15 %.
    spreads = {}
    for sigma in (0.04, 0.08):
        ens = profile_ensemble(
            waist,
            Z_AXIS,
            n_members=24,
            source="uniform",
            coordinate_error_A=sigma,
            seed=11,
            step_A=0.25,
            margin_A=0.0,
        )
        dev = ens.member_radius_A - ens.model_radius_A
        spreads[sigma] = (np.nanstd(dev, axis=0).mean(), np.std(ens.member_min_radius_A))
    for which in (0, 1):
        ratio = spreads[0.08][which] / spreads[0.04][which]
        assert ratio == pytest.approx(2.0, rel=0.15), (which, spreads)
    assert spreads[0.04][0] > 0.005  # the spread is real, not rounding


def test_seed_repeats_and_changes_members(waist):
    atoms = _with_b(waist, 15.0)
    kw = {"n_members": 4, "step_A": 0.5, "margin_A": 0.0}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)  # one B for every atom
        a = profile_ensemble(atoms, Z_AXIS, seed=1, **kw)
        b = profile_ensemble(atoms, Z_AXIS, seed=1, **kw)
        c = profile_ensemble(atoms, Z_AXIS, seed=2, **kw)
    assert np.array_equal(a.member_radius_A, b.member_radius_A, equal_nan=True)
    assert not np.array_equal(a.member_radius_A, c.member_radius_A, equal_nan=True)
    # members differ from each other, and a member does not depend on the ensemble size
    assert len(set(np.round(a.member_min_radius_A, 9))) == 4
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)
        d = profile_ensemble(atoms, Z_AXIS, seed=1, **{**kw, "n_members": 2})
    assert np.array_equal(d.member_radius_A, a.member_radius_A[:2], equal_nan=True)
    # independent draws: displacements of two members are uncorrelated
    sigma = np.full(len(atoms), 0.3)
    m0 = perturbed_atoms(atoms, sigma, 1, 0).coords_A - atoms.coords_A
    m1 = perturbed_atoms(atoms, sigma, 1, 1).coords_A - atoms.coords_A
    assert abs(np.corrcoef(m0.ravel(), m1.ravel())[0, 1]) < 0.05


def test_serial_multiprocessing_and_dask_agree(waist):
    atoms = _with_b(waist, 12.0)
    kw = {"n_members": 6, "step_A": 0.5, "margin_A": 0.0, "seed": 4, "ion": "K"}
    results = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)
        for backend in ("serial", "multiprocessing", "dask"):
            results[backend] = profile_ensemble(atoms, Z_AXIS, backend=backend, n_workers=2, **kw)
    ref = results["serial"]
    for name in ("multiprocessing", "dask"):
        other = results[name]
        assert np.array_equal(other.member_radius_A, ref.member_radius_A, equal_nan=True), name
        assert np.array_equal(other.member_min_s_A, ref.member_min_s_A), name
        assert other.member_verdict == ref.member_verdict
        assert other.min_radius == ref.min_radius


def test_json_has_members_summary_and_caveat(waist):
    from poreprobe.io.export import to_json

    atoms = _with_b(waist, 12.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)
        ens = profile_ensemble(atoms, Z_AXIS, n_members=3, step_A=0.5, margin_A=0.0)
    import json

    data = json.loads(to_json(ens))
    assert len(data["members"]["min_radius_A"]) == 3
    assert data["summary"]["min_radius_A"]["n"] == 3
    assert "model-based" in data["caveat"] and "Willis" in data["error_rule"]
    assert data["warnings"] and "every atom has B" in data["warnings"][0]
