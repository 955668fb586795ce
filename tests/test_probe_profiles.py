"""The small-multiples probe figure: which probes, one panel each, stop markers only where due."""

from __future__ import annotations

import numpy as np
import pytest

from poreprobe.errors import InputError
from poreprobe.figures.probe_profiles import choose_probes, plot_probe_profiles
from poreprobe.geometry.axis import PoreAxis
from poreprobe.geometry.probes import probe_scan
from poreprobe.geometry.synthetic import hourglass


def test_choose_probes_picks_the_telling_ones():
    p = np.arange(0.5, 4.01, 0.5)  # 8 probes
    passes = p <= 1.5
    enters = p <= 3.0
    picks = choose_probes(p, passes, enters, n_probes=4)
    # smallest entering, largest passing, smallest stopping, largest entering
    assert [p[k] for k in picks] == [0.5, 1.5, 2.0, 3.0]
    assert len(choose_probes(p, passes, enters, n_probes=6)) == 6
    assert all(enters[k] for k in choose_probes(p, passes, enters, n_probes=7))
    assert choose_probes(p, passes, np.zeros(8, bool)) == []
    with pytest.raises(InputError):
        choose_probes(p, passes, enters, n_probes=0)


def test_one_panel_per_probe_with_stop_markers_only_for_stopping_probes():
    atoms, _, _ = hourglass(r_waist_A=3.0, r_end_A=7.0, length_A=16.0, atoms_per_ring=24)
    axis = PoreAxis([0.0, 0.0, 0.0], [0.0, 0.0, 1.0], "user")
    scan = probe_scan(atoms, axis, probe_radii_A=[0.5, 1.0, 1.5, 2.5, 4.0, 6.5])
    fig = plot_probe_profiles(scan, n_probes=5)
    chosen = choose_probes(scan.probe_radius_A, scan.passes, scan.enters, n_probes=5)
    assert len(fig.axes) == len(chosen) >= 2
    for ax, k in zip(fig.axes, chosen, strict=True):
        markers = [ln for ln in ax.get_lines() if ln.get_marker() == "o"]
        stops = bool(scan.enters[k] and not scan.passes[k])
        assert len(markers) == (1 if stops else 0)
        label = " ".join(t.get_text() for t in ax.texts)
        assert f"p = {scan.probe_radius_A[k]:g} Å" in label
        assert ("stops" in label) == stops
    # a probe that never enters gets no panel
    assert all(scan.enters[k] for k in chosen)


def test_scan_command_draws_the_panels(tmp_path, capsys):
    from poreprobe.cli.main import main
    from poreprobe.demo.run import ENTRY, demo_path

    fig = tmp_path / "probes.svg"
    args = [
        "scan",
        demo_path("demo_channel"),
        "--entry",
        ENTRY,
        "--probe-radii-A",
        "1,2",
        "--figure",
        str(fig),
        "--figure-kind",
        "probes",
    ]
    assert main(args) == 0
    text = fig.read_text()
    assert "p = 1 Å" in text and "colorbar" not in text
