"""The dewetting flag rule on invented per-plane data."""

from __future__ import annotations

import numpy as np
import pytest

from poreprobe.chemistry.dewetting import dewetting_flags
from poreprobe.errors import InputError


def _planes(n=60, step=0.5):
    s = np.arange(n) * step
    labels = [["A:LEU10", "B:LEU10"] for _ in range(n)]
    return s, labels


def test_narrow_hydrophobic_run_long_enough_is_flagged():
    s, labels = _planes()
    radius = np.full(len(s), 8.0)
    radius[10:30] = 3.0  # 20 planes x 0.5 Å = 10 Å narrow
    polar = np.zeros(len(s))
    flags = dewetting_flags(s, radius, polar, labels)
    assert len(flags) == 1
    f = flags[0]
    assert (f.s_start_A, f.s_end_A, f.length_A) == (5.0, 14.5, 10.0)
    assert f.residues == ("LEU10 x2",) and f.min_radius_A == 3.0


def test_short_polar_or_open_runs_are_not():
    s, labels = _planes()
    radius = np.full(len(s), 8.0)
    radius[10:24] = 3.0  # 7 Å: shorter than the 8 Å default
    assert dewetting_flags(s, radius, np.zeros(len(s)), labels) == ()
    radius[10:30] = 3.0
    polar = np.zeros(len(s))
    polar[20] = 0.5  # one polar plane splits the run into 5 Å pieces
    assert dewetting_flags(s, radius, polar, labels) == ()
    radius[20] = np.nan  # an open plane also breaks it
    assert dewetting_flags(s, radius, np.zeros(len(s)), labels) == ()
    # thresholds are the user's to set
    assert len(dewetting_flags(s, radius, polar, labels, length_A=4.0)) == 2


def test_bad_thresholds_are_refused():
    s, labels = _planes()
    with pytest.raises(InputError, match="dewetting_radius_A must be > 0"):
        dewetting_flags(s, s, s, labels, radius_threshold_A=0)
    with pytest.raises(InputError, match="polar_fraction must be between"):
        dewetting_flags(s, s, s, labels, max_polar_fraction=2)
