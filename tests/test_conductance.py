"""Series-resistance model, inverse analysis and energetics (poreprobe.bench.conductance)."""

import math
import warnings

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy import constants
from scipy.spatial.transform import Rotation

import poreprobe
from poreprobe.bench.conductance import (
    access_resistance_ohm,
    pore_integral_per_m,
    series_resistance,
)
from poreprobe.bench.side_split import ratio_free_energy, split_side_resistances
from poreprobe.errors import InputError, PoreNotFoundError, QualityWarning
from poreprobe.geometry import synthetic
from poreprobe.geometry.profile import RadiusProfile
from poreprobe.geometry.segments import PoreExtent, pore_extent, pore_segments

BONDI_C_A = 1.70  # Bondi 1964, J. Phys. Chem. 68:441, Table I (carbon)
Z_AXIS = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")


def analytic_profile(s_A, radius_A, step_A):
    """A RadiusProfile from arrays (NaN = open plane), for closed-form checks."""
    s = np.asarray(s_A, dtype=float)
    r = np.asarray(radius_A, dtype=float)
    k = int(np.nanargmin(r))
    return RadiusProfile(
        s_A=s,
        radius_A=r,
        center_A=np.zeros((len(s), 3)),
        axis=Z_AXIS,
        radius_set="analytic",
        step_A=step_A,
        max_radius_A=20.0,
        min_radius_A=float(r[k]),
        min_s_A=float(s[k]),
        min_center_A=np.zeros(3),
        min_residues=(),
        contact_tol_A=0.3,
        nearest_atom=np.full(len(s), -1),
        source="analytic",
    )


def open_ended(s_A, radius_A, step_A):
    """Add one open (NaN) plane beyond each end, as the profile reports the bath."""
    s = np.concatenate([[s_A[0] - step_A], s_A, [s_A[-1] + step_A]])
    r = np.concatenate([[np.nan], radius_A, [np.nan]])
    return analytic_profile(s, r, step_A)


@pytest.fixture(scope="module")
def ring_cylinder():
    atoms, ring_r, ring_z = synthetic.cylinder(6.7, 10.0)
    return atoms, ring_r, ring_z, poreprobe.radius_profile(atoms, Z_AXIS)


@pytest.fixture(scope="module")
def ring_hourglass():
    atoms, ring_r, ring_z = synthetic.hourglass()
    return atoms, ring_r, ring_z, poreprobe.radius_profile(atoms, Z_AXIS)


# --------------------------------------------------------------------------- forward model
def test_reference_worked_example_cylinder_with_access():
    # a = 5 Å, L = 10 Å, rho = 0.8 Ohm m: cylinder 1.0186e9 Ohm; with both access terms
    # 1.8186e9 Ohm, 550 pS (REFERENCE_VALUES §6, derived from R = rho L/(pi a^2),
    # Hille 2001, and R = rho/(4a) per mouth, Hall 1975).
    s = np.arange(0, 10.0001, 0.2)
    est = series_resistance(open_ended(s, np.full(s.shape, 5.0), 0.2), resistivity_ohm_m=0.8)
    names = [seg.name for seg in est.segments]
    assert names == ["entry access", "constriction", "far access"]
    pore = est.segments[1]
    assert pore.resistance_Gohm * 1e9 == pytest.approx(1.0186e9, rel=1e-4)
    assert est.segments[0].resistance_Gohm * 1e9 == pytest.approx(4.00e8, rel=1e-12)
    assert est.resistance_Gohm * 1e9 == pytest.approx(1.8186e9, rel=1e-4)
    assert est.conductance_pS == pytest.approx(550, rel=1e-3)
    assert sum(seg.share_percent for seg in est.segments) == pytest.approx(100, rel=1e-12)


def test_access_resistance_hall():
    # R = rho/(4a): a = 5 Å, rho = 0.8 Ohm m -> 4.00e8 Ohm (Hall 1975; REFERENCE_VALUES §6).
    assert access_resistance_ohm(0.8, 5.0) == pytest.approx(4.00e8, rel=1e-12)


@pytest.mark.parametrize(("ring_radius_A", "length_A"), [(6.7, 10.0), (8.0, 16.0)])
def test_cylinder_of_atoms_matches_closed_form(ring_radius_A, length_A):
    # Ring stack of carbon atoms: the pore radius at a ring plane is a = R_ring - r_C
    # (Bondi 1964 Table I, r_C = 1.70 Å) and the pore spans the rings, L = z_last - z_first.
    # R = rho L/(pi a^2) + 2 rho/(4a) (Hille 2001; Hall 1975) within 1 %.
    atoms, ring_r, ring_z = synthetic.cylinder(ring_radius_A, length_A)
    prof = poreprobe.radius_profile(atoms, Z_AXIS)
    est = series_resistance(prof, atoms=atoms, resistivity_ohm_m=0.8)
    a_m = (ring_radius_A - BONDI_C_A) * 1e-10
    length_m = (ring_z[-1] - ring_z[0]) * 1e-10
    expected = 0.8 * length_m / (np.pi * a_m**2) + 2 * 0.8 / (4 * a_m)
    assert est.resistance_Gohm * 1e9 == pytest.approx(expected, rel=0.01)
    assert (est.pore_start_A, est.pore_end_A) == pytest.approx((ring_z[0], ring_z[-1]))
    assert est.entry_mouth_radius_A == pytest.approx(ring_radius_A - BONDI_C_A, abs=1e-4)
    # tighter: the pore term equals the integral of the exact ring-stack profile
    # (synthetic.expected_radius_A, closed form) on a fine grid
    fine = np.linspace(ring_z[0], ring_z[-1], 20001)
    r_exact = synthetic.expected_radius_A(ring_r, ring_z, fine, BONDI_C_A)
    integral = np.trapezoid(1 / (np.pi * (r_exact * 1e-10) ** 2), fine * 1e-10)
    pore = [seg for seg in est.segments if seg.kind == "pore"]
    assert sum(seg.resistance_Gohm for seg in pore) * 1e9 == pytest.approx(0.8 * integral, rel=5e-4)


def test_cone_closed_form_integral():
    # Cone r(s) = a1 + (a2 - a1) s / L: integral ds/(pi r^2) = L/(pi a1 a2) (calculus);
    # with r linear between planes the integral is exact even on a coarse grid with the
    # segment ends between planes.
    a1, a2, length = 2.0, 9.0, 17.5
    s = np.arange(0, length + 1e-9, 0.7)
    s[-1] = length
    r = a1 + (a2 - a1) * s / length
    assert pore_integral_per_m(s, r, 0, length) == pytest.approx(
        length * 1e-10 / (np.pi * a1 * a2 * 1e-20), rel=1e-12
    )
    lo, hi = 1.23, 12.34
    r_lo, r_hi = (a1 + (a2 - a1) * x / length for x in (lo, hi))
    assert pore_integral_per_m(s, r, lo, hi) == pytest.approx(
        (hi - lo) * 1e-10 / (np.pi * r_lo * r_hi * 1e-20), rel=1e-12
    )
    est = series_resistance(open_ended(s, r, 0.7), resistivity_ohm_m=1.0)
    rho_over_m = 1.0 / 1e-10
    expected_ohm = (length / (np.pi * a1 * a2) + 1 / (4 * a1) + 1 / (4 * a2)) * rho_over_m
    assert est.resistance_Gohm * 1e9 == pytest.approx(expected_ohm, rel=1e-12)
    assert (est.entry_mouth_radius_A, est.far_mouth_radius_A) == pytest.approx((a1, a2))


def test_cone_of_atoms_matches_closed_form_profile_integral():
    # Ring-stack cone: the pore term equals the integral of its exact profile
    # (synthetic.expected_radius_A) within 0.05 %.
    atoms, ring_r, ring_z = synthetic.cone()
    prof = poreprobe.radius_profile(atoms, Z_AXIS)
    est = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0)
    fine = np.linspace(ring_z[0], ring_z[-1], 20001)
    r_exact = synthetic.expected_radius_A(ring_r, ring_z, fine, BONDI_C_A) * 1e-10
    integral = np.trapezoid(1 / (np.pi * r_exact**2), fine * 1e-10)
    pore_ohm = sum(seg.resistance_Gohm for seg in est.segments if seg.kind == "pore") * 1e9
    assert pore_ohm == pytest.approx(integral, rel=5e-4)
    ends = synthetic.expected_radius_A(ring_r, ring_z, ring_z[[0, -1]], BONDI_C_A)
    assert (est.entry_mouth_radius_A, est.far_mouth_radius_A) == pytest.approx(ends, abs=1e-4)


def test_trumpet_beyond_the_protein_is_not_pore(ring_cylinder):
    # Past the last ring the profile radius grows (distance to the end ring): with the
    # atoms the pore stops at the rings; without them the flared planes count as pore.
    atoms, _, ring_z, prof = ring_cylinder
    with_atoms = pore_extent(prof, atoms)
    without = pore_extent(prof)
    assert (with_atoms.start_A, with_atoms.end_A) == pytest.approx((ring_z[0], ring_z[-1]))
    assert with_atoms.clipped_to_atoms
    assert (without.start_A, without.end_A) == pytest.approx((prof.s_A[0], prof.s_A[-1]))


def test_flared_mouth_extends_to_the_last_ring(ring_hourglass):
    # In a funnel the sphere touches deeper rings, yet the pore runs to the end rings.
    atoms, _, ring_z, prof = ring_hourglass
    ext = pore_extent(prof, atoms)
    assert (ext.start_A, ext.end_A) == pytest.approx((ring_z[0], ring_z[-1]))
    assert ext.narrowest_s_A == pytest.approx(0.0, abs=1e-9)


def test_closed_pore_has_no_conductance():
    s = np.arange(0, 10.0001, 0.5)
    r = np.where(np.abs(s - 5) < 1, -0.2, 3.0)
    with pytest.raises(PoreNotFoundError, match="closed"):
        series_resistance(open_ended(s, r, 0.5), resistivity_ohm_m=1.0)


def test_open_stretch_splits_off_planes_with_warning():
    s = np.arange(0, 20.0001, 0.5)
    r = np.full(s.shape, 4.0)
    r[s < 5] = 6.0
    r[(s > 3) & (s < 5)] = np.nan
    with pytest.warns(QualityWarning, match="cut off"):
        ext = pore_extent(analytic_profile(s, r, 0.5))
    assert (ext.start_A, ext.end_A) == pytest.approx((5.0, 20.0))


def test_rigid_motion_invariance(ring_hourglass):
    atoms, _, _, prof = ring_hourglass
    ref = series_resistance(prof, atoms=atoms, resistivity_ohm_m=0.7)
    rot = Rotation.from_euler("zyx", [37, -71, 12], degrees=True)
    shift = np.array([4.0, -7.5, 12.25])
    moved = atoms.with_coords(rot.apply(np.array(atoms.coords_A)) + shift)
    axis = poreprobe.PoreAxis(shift, rot.apply([0, 0, 1]), "user")
    est = series_resistance(
        poreprobe.radius_profile(moved, axis), atoms=moved, resistivity_ohm_m=0.7
    )
    assert est.conductance_pS == pytest.approx(ref.conductance_pS, rel=1e-6)
    assert [s.resistance_Gohm for s in est.segments] == pytest.approx(
        [s.resistance_Gohm for s in ref.segments], rel=1e-6
    )


# --------------------------------------------------------------------------- segments
def test_automatic_rule_on_hourglass(ring_hourglass):
    # Constriction = planes within 1 Å of the minimum radius around the narrowest plane
    # (+ half a step each way); checked against the closed-form ring-stack profile.
    atoms, ring_r, ring_z, prof = ring_hourglass
    est = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0)
    names = [seg.name for seg in est.segments]
    assert names == [
        "entry access",
        "entry-side pore",
        "constriction",
        "far-side pore",
        "far access",
    ]
    sides = [seg.side for seg in est.segments]
    assert sides == ["entry", "entry", "neither", "far", "far"]
    exact = synthetic.expected_radius_A(ring_r, ring_z, prof.s_A, BONDI_C_A)
    inside = prof.s_A[exact <= exact.min() + 1.0]
    constriction = est.segments[2]
    assert constriction.s_start_A == pytest.approx(inside.min() - 0.1)
    assert constriction.s_end_A == pytest.approx(inside.max() + 0.1)
    assert constriction.radius_A == pytest.approx(exact.min(), abs=1e-4)


def test_five_named_segments_from_ranges_and_a_selection(ring_cylinder):
    atoms, _, ring_z, prof = ring_cylinder
    segs = pore_segments(
        prof,
        atoms=atoms,
        segments=[("cavity", -5.0, -1.0), ("filter", "resid 5:7"), ("vestibule", 2.0, 5.0)],
    )
    # resid k is the ring at z = -5 + (k - 1): resid 5..7 spans -1..1
    assert [(s.name, s.s_start_A, s.s_end_A) for s in segs] == [
        ("cavity", -5.0, -1.0),
        ("filter", -1.0, 1.0),
        ("pore between filter and vestibule", 1.0, 2.0),
        ("vestibule", 2.0, 5.0),
    ]
    est = series_resistance(
        prof,
        atoms=atoms,
        resistivity_ohm_m=1.0,
        segments=[("cavity", -5.0, -1.0), ("filter", "resid 5:7"), ("vestibule", 2.0, 5.0)],
    )
    assert len(est.segments) == 6
    assert [s.side for s in est.segments] == ["entry", "entry", "neither", "far", "far", "far"]


@settings(max_examples=25, deadline=None)
@given(st.lists(st.floats(0.3, 19.7), min_size=1, max_size=6, unique=True))
def test_cuts_are_additive(cuts):
    # Segment resistances in series add up to the uncut pore (any cut positions).
    s = np.arange(0, 20.0001, 0.25)
    r = 3 + np.sin(s / 3) ** 2 + 0.1 * s
    prof = open_ended(s, r, 0.25)
    assume(all(abs(a - b) >= 1e-3 for a in cuts for b in cuts if a != b))
    whole = series_resistance(prof, resistivity_ohm_m=1.0, cuts_s_A=[])
    cut = series_resistance(prof, resistivity_ohm_m=1.0, cuts_s_A=cuts)
    assert len(cut.segments) == len(cuts) + 3
    assert cut.resistance_Gohm == pytest.approx(whole.resistance_Gohm, rel=1e-12)


def test_side_factors_scale_only_their_side(ring_hourglass):
    atoms, _, _, prof = ring_hourglass
    base = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0)
    raised = series_resistance(
        prof, atoms=atoms, resistivity_ohm_m=1.0, entry_side_factor=2.5, far_side_factor=0.5
    )
    factor = {"entry": 2.5, "far": 0.5, "neither": 1.0}
    for a, b in zip(base.segments, raised.segments, strict=True):
        assert b.resistance_Gohm == pytest.approx(factor[a.side] * a.resistance_Gohm, rel=1e-12)
    assert raised.conductance_pS == pytest.approx(
        base.predicted_conductance_pS(2.5, 0.5), rel=1e-12
    )


def test_bathed_by_and_mobility_and_mouth_overrides(ring_hourglass):
    atoms, _, _, prof = ring_hourglass
    base = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0)
    est = series_resistance(
        prof,
        atoms=atoms,
        resistivity_ohm_m=1.0,
        entry_side_factor=3.0,
        bathed_by={"constriction": "entry"},
        mobility_factor={"constriction": 0.5},
        mouth_radii_A=(2.0, 8.0),
    )
    c0, c1 = base.segments[2], est.segments[2]
    assert c1.side == "entry" and c1.mobility_factor == 0.5
    assert c1.resistance_Gohm == pytest.approx(c0.resistance_Gohm * 3.0 / 0.5, rel=1e-12)
    assert est.segments[0].resistance_Gohm == pytest.approx(3.0 / (4 * 2e-10) * 1e-9)
    assert est.segments[-1].resistance_Gohm == pytest.approx(1.0 / (4 * 8e-10) * 1e-9)
    all_half = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0, mobility_factor=0.5)
    for a, b in zip(base.segments, all_half.segments, strict=True):
        expected = a.resistance_Gohm * (2.0 if a.kind == "pore" else 1.0)
        assert b.resistance_Gohm == pytest.approx(expected, rel=1e-12)


def test_resistivity_sources_agree(ring_cylinder):
    atoms, _, _, prof = ring_cylinder
    by_rho = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1 / 1.289)
    by_kappa = series_resistance(prof, atoms=atoms, conductivity_S_per_m=1.289)
    # 100 mM KCl: 12.89 mS/cm (CRC Handbook molar conductivity table; REFERENCE_VALUES §3)
    by_salt = series_resistance(prof, atoms=atoms, electrolyte="KCl", conc_mM=100)
    assert by_kappa.conductance_pS == pytest.approx(by_rho.conductance_pS, rel=1e-12)
    assert by_salt.conductance_pS == pytest.approx(by_rho.conductance_pS, rel=1e-9)
    assert "KCl 100 mM" in by_salt.resistivity_source


@pytest.mark.parametrize(
    "kwargs",
    [
        {"segments": [("a", -5.0, 0.5), ("b", 0.0, 5.0)]},  # overlap
        {"segments": [("a", -6.0, 0.0)]},  # out of range
        {"segments": [("a", 2.0, 1.0)]},  # reversed
        {"segments": [("a", -4.0, -2.0), ("a", 0.0, 2.0)]},  # duplicate name
        {"segments": [("x", "resid 1:3"), ("y", "resid 2:5")]},  # selections overlap
        {"segments": [("entry access", -4.0, -2.0)]},  # reserved name
        {"cuts_s_A": [0.0, 7.0]},  # cut out of range
        {"cuts_s_A": [1.0], "segments": [("a", -4.0, -2.0)]},  # both
        {"entry_side_factor": 0.0},
        {"far_side_factor": -1.0},
        {"bathed_by": {"nowhere": "entry"}},
        {"bathed_by": {"constriction": "left"}},
        {"mobility_factor": 1.5},
        {"mobility_factor": 0.0},
        {"mouth_radii_A": (5.0,)},
        {"side_names": ("in", "in")},
    ],
)
def test_bad_forward_input(ring_cylinder, kwargs):
    atoms, _, _, prof = ring_cylinder
    with pytest.raises(InputError):
        series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0, **kwargs)


@pytest.mark.parametrize(
    "kwargs",
    [
        {},
        {"resistivity_ohm_m": 1.0, "conductivity_S_per_m": 1.0},
        {"electrolyte": "KCl"},
        {"conc_mM": 100},
        {"resistivity_ohm_m": -1.0},
    ],
)
def test_exactly_one_positive_resistivity_source(ring_cylinder, kwargs):
    _, _, _, prof = ring_cylinder
    with pytest.raises(InputError):
        series_resistance(prof, **kwargs)


def test_selection_partly_outside_is_clipped_with_warning(ring_cylinder):
    atoms, _, _, prof = ring_cylinder
    short = PoreExtent(-3.0, 3.0, 0.0, 5.0, False)
    with pytest.warns(QualityWarning, match="clipped"):
        segs = pore_segments(prof, atoms=atoms, segments=[("all", "all")], extent=short)
    assert len(segs) == 1
    assert (segs[0].s_start_A, segs[0].s_end_A) == pytest.approx((-3.0, 3.0))
    with pytest.raises(InputError, match="outside the pore"):
        pore_segments(prof, atoms=atoms, segments=[("end", "resid 10:11")], extent=short)


def test_to_dict_has_the_documented_fields(ring_cylinder):
    atoms, _, _, prof = ring_cylinder
    out = series_resistance(prof, atoms=atoms, resistivity_ohm_m=1.0).to_dict()
    for seg in out["segments"]:
        assert {"name", "resistance_Gohm", "share_percent", "side", "kind"} <= set(seg)
    assert out["conductance_pS"] > 0
    assert out["radius_set"] == "bondi"


# --------------------------------------------------------------------------- inverse analysis
def simulate(r_entry, r_middle, r_far, fe, ff):
    """Conductances (pS) of the three-resistor model (resistances in GOhm)."""
    return (
        1e3 / (r_entry + r_middle + r_far),
        1e3 / (fe * r_entry + r_middle + r_far),
        1e3 / (r_entry + r_middle + ff * r_far),
    )


@settings(max_examples=40, deadline=None)
@given(
    st.floats(0.01, 10),
    st.floats(0.01, 10),
    st.floats(0.01, 10),
    st.floats(1.1, 5) | st.floats(0.2, 0.9),
    st.floats(1.1, 5) | st.floats(0.2, 0.9),
)
def test_inverse_recovers_simulated_resistances_exactly(re, rm, rf, fe, ff):
    g = simulate(re, rm, rf, fe, ff)
    res = split_side_resistances(*g, factor_entry=fe, factor_far=ff)
    got = [res.resistance_Gohm[k] for k in ("entry", "middle", "far")]
    assert got == pytest.approx([re, rm, rf], rel=1e-9, abs=1e-12)
    total = re + rm + rf
    assert res.share_percent["middle"] == pytest.approx(100 * rm / total, rel=1e-9, abs=1e-9)


def test_inverse_uncertainty_grows_as_factor_approaches_one():
    sds = []
    for f in (4.0, 2.0, 1.5, 1.2, 1.05, 1.01):
        g = simulate(1.0, 2.0, 0.5, f, f)
        res = split_side_resistances(*[(x, 0.02 * x) for x in g], factor_entry=f, factor_far=f)
        assert res.resistance_Gohm["entry"] == pytest.approx(1.0, rel=1e-9)
        sds.append(
            (
                res.resistance_sd_Gohm["entry"],
                res.resistance_sd_Gohm["middle"],
                res.resistance_sd_Gohm["far"],
                res.share_sd_percent["entry"],
            )
        )
    sds = np.array(sds)
    assert np.all(np.diff(sds, axis=0) > 0)
    # close to 1 the SD scales as 1/(f - 1): halving (f - 1) nearly doubles it
    assert sds[-1, 0] / sds[-2, 0] == pytest.approx(5.0, rel=0.1)


def test_inverse_sd_matches_monte_carlo():
    # First-order propagation against sampling (fixed generator state) for small SDs.
    fe, ff = 2.0, 1.6
    g = np.array(simulate(1.0, 2.0, 0.5, fe, ff))
    sd = 0.005 * g
    res = split_side_resistances(*zip(g, sd, strict=True), factor_entry=fe, factor_far=ff)
    rng = np.random.default_rng(7)
    draws = rng.normal(g, sd, size=(40000, 3))
    r = 1e3 / draws
    r_e = (r[:, 1] - r[:, 0]) / (fe - 1)
    r_f = (r[:, 2] - r[:, 0]) / (ff - 1)
    r_m = r[:, 0] - r_e - r_f
    for key, sample in (("entry", r_e), ("middle", r_m), ("far", r_f)):
        assert res.resistance_sd_Gohm[key] == pytest.approx(sample.std(), rel=0.03)
    assert res.share_sd_percent["middle"] == pytest.approx((100 * r_m / r[:, 0]).std(), rel=0.03)


def test_inverse_of_forward_prediction_recovers_the_side_split(ring_hourglass):
    # Forward model -> conductances with raised resistivity on each side -> inverse:
    # the split equals the forward model's entry / neither / far totals.
    atoms, _, _, prof = ring_hourglass
    est = series_resistance(prof, atoms=atoms, electrolyte="KCl", conc_mM=150)
    g = (
        est.conductance_pS,
        est.predicted_conductance_pS(1.8, 1),
        est.predicted_conductance_pS(1, 2.4),
    )
    res = split_side_resistances(*g, factor_entry=1.8, factor_far=2.4, estimate=est)
    parts = est.by_side_Gohm()
    assert res.resistance_Gohm["entry"] == pytest.approx(parts["entry"], rel=1e-9)
    assert res.resistance_Gohm["middle"] == pytest.approx(parts["neither"], rel=1e-9)
    assert res.resistance_Gohm["far"] == pytest.approx(parts["far"], rel=1e-9)
    assert res.prediction["conductances_pS"]["entry_raised"] == pytest.approx(g[1], rel=1e-12)
    assert res.prediction["share_percent"]["middle"] == pytest.approx(
        res.share_percent["middle"], rel=1e-9
    )


def test_inverse_warns_on_negative_resistance():
    with pytest.warns(QualityWarning, match="negative"):
        split_side_resistances(100, 101, 99, factor_entry=2, factor_far=2)


@pytest.mark.parametrize(
    ("g", "fe", "ff"),
    [
        ((100, 90, 95), 0.0, 2.0),
        ((100, 90, 95), 2.0, -1.0),
        ((100, 90, 95), 1.0, 2.0),
        ((-100, 90, 95), 2.0, 2.0),
        ((100, (90, -1), 95), 2.0, 2.0),
        ((100, 0, 95), 2.0, 2.0),
        ((100, (90, 1, 2), 95), 2.0, 2.0),
    ],
)
def test_bad_inverse_input(g, fe, ff):
    with pytest.raises(InputError):
        split_side_resistances(*g, factor_entry=fe, factor_far=ff)


# --------------------------------------------------------------------------- energetics
def test_ratio_free_energy():
    # ln(G1/G2) in kT; kJ/mol with R T, R = 8.31446261815324 J/(mol K) (CODATA 2018 via
    # scipy.constants; REFERENCE_VALUES §7).
    out = ratio_free_energy(300.0, 150.0, sd1_pS=6.0, sd2_pS=3.0)
    assert out.ln_ratio == pytest.approx(math.log(2), rel=1e-12)
    assert out.kJ_per_mol == pytest.approx(math.log(2) * 8.31446261815324 * 298.15 / 1000)
    assert constants.R == pytest.approx(8.31446261815324, rel=1e-15)
    assert out.ln_ratio_sd == pytest.approx(math.hypot(0.02, 0.02), rel=1e-12)
    assert ratio_free_energy(150.0, 300.0).ln_ratio == pytest.approx(-math.log(2))
    with pytest.raises(InputError):
        ratio_free_energy(-1.0, 2.0)


def test_no_warnings_on_clean_input(ring_cylinder):
    atoms, _, _, prof = ring_cylinder
    with warnings.catch_warnings():
        warnings.simplefilter("error", QualityWarning)
        series_resistance(prof, atoms=atoms, electrolyte="KCl", conc_mM=150)
