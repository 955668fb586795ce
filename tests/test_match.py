"""Matching a measured capture radius against analytic capture curves."""

import types
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from poreprobe.bench.ions import get_ion
from poreprobe.bench.match import match_capture_radius, match_scan
from poreprobe.errors import InputError, QualityWarning

P = np.linspace(0.0, 5.0, 11)  # probe radii 0, 0.5, ..., 5 Å


def quiet_match(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", QualityWarning)
        return match_capture_radius(*args, **kwargs)


def test_linear_curve_interval_and_best():
    # c(p) = 6 - p: the band 3 ± 0.5 is met for p in [2.5, 3.5], exactly at p = 3.
    m = match_capture_radius(P, 6.0 - P, 3.0, 0.5)
    assert len(m.intervals_A) == 1
    assert m.intervals_A[0] == pytest.approx((2.5, 3.5), abs=1e-12)
    assert m.best_probe_radius_A == pytest.approx(3.0, abs=1e-12)
    assert m.best_exact and m.crossings_A == pytest.approx((3.0,), abs=1e-12)
    assert m.intervals_at_scan_end == ((False, False),)


def test_interval_ends_between_samples():
    # c(p) = 6 - p sampled every 0.5 Å; band 3.2 ± 0.15 -> p in [2.65, 2.95], off-grid.
    m = match_capture_radius(P, 6.0 - P, 3.2, 0.15)
    assert m.intervals_A[0] == pytest.approx((2.65, 2.95), abs=1e-12)
    assert m.best_probe_radius_A == pytest.approx(2.8, abs=1e-12)


def test_piecewise_linear_between_samples_of_a_curve():
    # c(p) = 8 / (1 + p) sampled at 0, 1, 2, 3: the match follows the straight segments,
    # e.g. on [1, 2] c goes 4 -> 8/3, so c = 3 at p = 1 + (4 - 3) / (4 - 8/3) = 1.75.
    p = np.array([0.0, 1.0, 2.0, 3.0])
    m = match_capture_radius(p, 8.0 / (1.0 + p), 3.0, 0.0)
    assert m.best_probe_radius_A == pytest.approx(1.75, abs=1e-12)
    np.testing.assert_allclose(m.intervals_A, [[1.75, 1.75]], rtol=0, atol=1e-12)


def test_hump_has_two_intervals_and_warns():
    p = np.array([0.0, 1.0, 2.0])
    c = np.array([1.0, 3.0, 1.0])
    with pytest.warns(QualityWarning, match="2 probe radii"):
        m = match_capture_radius(p, c, 2.0, 0.5)
    np.testing.assert_allclose(m.intervals_A, [[0.25, 0.75], [1.25, 1.75]], rtol=0, atol=1e-12)
    assert m.crossings_A == pytest.approx((0.5, 1.5), abs=1e-12)
    assert m.best_probe_radius_A == pytest.approx(0.5, abs=1e-12)


def test_flat_curve_on_target():
    p = np.array([1.0, 2.0, 3.0])
    m = match_capture_radius(p, np.full(3, 2.0), 2.0, 0.1)
    assert m.intervals_A == ((1.0, 3.0),)
    assert m.intervals_at_scan_end == ((True, True),)
    assert m.crossings_A == (1.0,)


def test_touching_vertex_is_one_crossing():
    # c = |p - 1| + 1 touches 1 at p = 1 only.
    p = np.array([0.0, 1.0, 2.0])
    m = match_capture_radius(p, np.abs(p - 1.0) + 1.0, 1.0, 0.0)
    assert m.crossings_A == (1.0,)
    assert m.intervals_A == ((1.0, 1.0),)


def test_no_overlap_gives_nearest_point():
    with pytest.warns(QualityWarning, match="no scanned probe radius"):
        m = match_capture_radius(P, 2.0 - 0.3 * P, 5.0, 0.5)
    assert m.intervals_A == ()
    assert not m.within_band and not m.best_exact
    assert m.best_probe_radius_A == 0.0
    assert m.best_capture_radius_A == pytest.approx(2.0)


def test_band_reaching_scan_end_is_flagged():
    m = match_capture_radius(P, 6.0 - P, 1.5, 0.6)  # p in [3.9, 5.1] -> clipped at 5
    assert m.intervals_A[0] == pytest.approx((3.9, 5.0), abs=1e-12)
    assert m.intervals_at_scan_end == ((False, True),)


def test_zero_capture_for_large_probes():
    # Probes that never enter report capture radius 0 (scan contract); the band near 0
    # is met only at and beyond the last entering probe.
    c = np.where(P <= 3.0, 3.0 - P, 0.0)
    m = match_capture_radius(P, c, 0.2, 0.1)
    assert m.intervals_A[0] == pytest.approx((2.7, 2.9), abs=1e-12)


def test_ion_radii_comparison():
    # K+: Shannon crystal 1.38 Å, Nightingale hydrated 3.31 Å (ion table), Stokes from D.
    k = get_ion("K")
    m = match_capture_radius(P, 6.0 - P, 6.0 - 1.38, 0.2, ion="K")
    by_kind = {c.kind: c for c in m.ion_radii}
    assert by_kind["crystal"].capture_radius_A == pytest.approx(4.62, abs=1e-12)
    assert by_kind["crystal"].deviation_sd == pytest.approx(0.0, abs=1e-9)
    assert by_kind["crystal"].within_band
    stokes = by_kind["Stokes"]
    assert stokes.radius_A == pytest.approx(k.stokes_radius_A)
    assert stokes.deviation_sd == pytest.approx((1.38 - k.stokes_radius_A) / 0.2, rel=1e-9)
    assert stokes.within_band == (abs(1.38 - k.stokes_radius_A) <= 0.2)
    assert not by_kind["hydrated"].within_band
    assert by_kind["hydrated"].deviation_sd == pytest.approx((1.38 - 3.31) / 0.2, rel=1e-9)
    assert "hydrated" not in m.fitting_ion_radii and "crystal" in m.fitting_ion_radii


def test_ion_radius_outside_scan():
    p = np.linspace(2.0, 5.0, 7)
    m = quiet_match(p, 6.0 - p, 2.5, 0.2, ion="Na")
    crystal = next(c for c in m.ion_radii if c.kind == "crystal")
    assert not crystal.in_scan_range and not crystal.within_band
    assert np.isnan(crystal.capture_radius_A)
    assert crystal.to_dict()["capture_radius_A"] is None


@settings(max_examples=60, deadline=None)
@given(
    values=st.lists(st.floats(0.0, 10.0), min_size=2, max_size=12),
    r=st.floats(0.1, 10.0),
    sd=st.floats(0.0, 2.0),
)
def test_intervals_equal_brute_force(values, r, sd):
    # Property: a point is inside a reported interval iff the interpolated curve is in
    # the band (checked on a dense grid away from interval edges).
    c = np.asarray(values)
    p = np.arange(c.size, dtype=float) * 0.5
    m = quiet_match(p, c, r, sd)
    x = np.linspace(p[0], p[-1], 2001)
    y = np.interp(x, p, c)
    inside_band = (y >= r - sd) & (y <= r + sd)
    inside_iv = np.zeros_like(x, dtype=bool)
    near_edge = np.zeros_like(x, dtype=bool)
    for a, b in m.intervals_A:
        inside_iv |= (x >= a) & (x <= b)
        near_edge |= (np.abs(x - a) < 1e-6) | (np.abs(x - b) < 1e-6)
    assert (inside_band == inside_iv)[~near_edge].all()
    for x0 in m.crossings_A:
        assert np.interp(x0, p, c) == pytest.approx(r, abs=1e-9)
    assert np.interp(m.best_probe_radius_A, p, c) == pytest.approx(
        m.best_capture_radius_A, abs=1e-9
    )
    if m.ranked_intervals:
        # the representative p lies in the top-ranked interval, which is the widest
        top = m.ranked_intervals[0]
        assert top.low_A - 1e-9 <= m.best_probe_radius_A <= top.high_A + 1e-9
        assert top.width_A >= max(iv.width_A for iv in m.ranked_intervals) - 1e-9
        assert [iv.rank for iv in m.ranked_intervals] == list(range(1, len(m.intervals_A) + 1))
    elif not m.best_exact:
        assert np.abs(y - r).min() >= abs(m.best_capture_radius_A - r) - 1e-9


@pytest.mark.parametrize(
    "p, c, r, sd, message",
    [
        ([0, 1, 2], [3, 2], 1.0, 0.1, "same length"),
        ([0], [3], 1.0, 0.1, "at least 2"),
        ([0, 2, 1], [3, 2, 1], 1.0, 0.1, "strictly increasing"),
        ([0, 1, 2], [3, np.nan, 1], 1.0, 0.1, "NaN"),
        ([0, 1, 2], [3, -2, 1], 1.0, 0.1, ">= 0"),
        ([0, 1, 2], [3, 2, 1], 0.0, 0.1, "measured_A"),
        ([0, 1, 2], [3, 2, 1], -1.0, 0.1, "measured_A"),
        ([0, 1, 2], [3, 2, 1], 1.0, -0.1, "sd_A"),
    ],
)
def test_bad_input(p, c, r, sd, message):
    with pytest.raises(InputError, match=message):
        match_capture_radius(p, c, r, sd)


def test_match_scan_duck_typed():
    scan = types.SimpleNamespace(probe_radius_A=P, capture_radius_A=6.0 - P, source="demo")
    m = match_scan(scan, 3.0, 0.5, ion="K")
    assert m.source == "demo" and m.best_probe_radius_A == pytest.approx(3.0)
    with pytest.raises(InputError, match="probe_radius_A"):
        match_scan(object(), 3.0, 0.5)


def test_match_scan_drops_undefined_probes():
    c = 6.0 - P
    c[4] = np.nan
    scan = types.SimpleNamespace(probe_radius_A=P, capture_radius_A=c)
    with pytest.warns(QualityWarning, match="undefined for probe radii 2 "):
        m = match_scan(scan, 3.0, 0.5)
    assert m.probe_radius_A.size == P.size - 1 and 2.0 not in m.probe_radius_A
    assert m.best_probe_radius_A == pytest.approx(3.0)


def test_to_dict_keys_and_read_only():
    m = match_capture_radius(P, 6.0 - P, 3.0, 0.5, ion="K")
    d = m.to_dict()
    assert d["probe_radius_A_best"] == pytest.approx(3.0)
    assert d["probe_radius_A_intervals"] == [pytest.approx([2.5, 3.5])]
    assert len(d["ion_radii"]) == 3
    with pytest.raises(ValueError):
        m.capture_radius_A[0] = 1.0


def test_non_monotonic_curve_lists_every_interval_ranked():
    # A curve that touches the band in one spike point (p = 1) and crosses it over a wide
    # stretch later (p 2.5-3.5): the spike must not be "the best".
    p = np.array([0.0, 0.9, 1.0, 1.1, 2.0, 3.0, 4.0, 4.5, 5.0])
    c = np.array([0.0, 0.0, 1.0, 0.2, 0.2, 1.0, 1.8, 1.0, 0.2])
    stop = np.array([9.0, 8.5, 8.0, 7.5, 7.0, 6.0, 5.0, 4.0, 3.0])
    passes = p <= 2.5
    with pytest.warns(QualityWarning, match="ranked widest first"):
        m = match_capture_radius(p, c, 1.0, 0.2, stop_s_A=stop, passes=passes, bottleneck_A=2.5)
    # intervals where 0.8 <= c <= 1.2: around the spike [0.98, 1.025], on the rise
    # [2.75, 3.25], on the fall [4.375, 4.625]
    np.testing.assert_allclose(
        m.intervals_A, [[0.98, 1.025], [2.75, 3.25], [4.375, 4.625]], rtol=0, atol=1e-12
    )
    ranks = [(iv.rank, iv.low_A) for iv in m.ranked_intervals]
    assert ranks == [(1, pytest.approx(2.75)), (2, pytest.approx(4.375)), (3, pytest.approx(0.98))]
    top = m.ranked_intervals[0]
    assert m.best_probe_radius_A == pytest.approx(3.0) and m.best_exact
    assert top.crossing_A == pytest.approx(3.0)
    assert top.passes == "none"  # 2.75-3.25 Å probes are all wider than B = 2.5 Å
    assert m.ranked_intervals[2].passes == "all"  # the spike's probes are below B
    np.testing.assert_allclose(top.stop_s_A, [6.25, 5.75])
    d = m.to_dict()
    assert [iv["rank"] for iv in d["intervals"]] == [1, 2, 3]
    assert "widest interval first" in d["ranking"]
    assert d["intervals"][0]["passes"] == "none"


def test_equal_widths_rank_by_the_centre_capture_radius():
    p = np.array([0.0, 1.0, 2.0, 3.0, 4.0])
    c = np.array([0.0, 2.0, 0.0, 2.2, 0.0])  # two humps; the band 1.0 +- 0.2
    m = quiet_match(p, c, 1.0, 0.2)
    widths = np.array([iv.width_A for iv in m.ranked_intervals])
    assert len(widths) == 4 and (np.diff(widths) <= 1e-9).all()
    first, second = m.ranked_intervals[0], m.ranked_intervals[1]
    if abs(first.width_A - second.width_A) < 1e-9:
        assert abs(first.centre_capture_radius_A - 1.0) <= abs(second.centre_capture_radius_A - 1.0)


def test_match_figure_shades_every_interval():
    import matplotlib

    matplotlib.use("Agg")
    from poreprobe.figures import capture_plot as plots

    p = np.array([0.0, 1.0, 1.5, 2.0, 3.0, 4.0, 4.5, 5.0])
    c = np.array([0.0, 1.0, 0.2, 0.2, 1.0, 1.8, 1.0, 0.2])
    m = quiet_match(p, c, 1.0, 0.2)
    result = {
        "capture_radius_A": 1.0,
        "capture_radius_sd_A": 0.2,
        "probe_radius_A_best": m.best_probe_radius_A,
        "probe_radius_A_intervals": [list(iv) for iv in m.intervals_A],
        "match": m.to_dict(),
    }
    scan = {"capture": {"probe_radius_A": p.tolist(), "capture_radius_A": c.tolist()}}
    ax = plots.plot_capture(scan, match=result)
    spans = [
        pt.get_path().get_extents(pt.get_transform()).transformed(ax.transData.inverted())
        for pt in ax.patches
    ]
    labels = [pt.get_label() for pt in ax.patches]
    assert "matching probe radii (3 intervals)" in labels
    xs = sorted((round(b.x0, 6), round(b.x1, 6)) for b in spans if b.y1 - b.y0 > 0.5)
    for lo, hi in m.intervals_A:
        assert any(abs(a - lo) < 1e-6 and abs(b - hi) < 1e-6 for a, b in xs), (lo, hi, xs)
