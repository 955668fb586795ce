"""Workers never share the parent's open trajectory file: an XTC read on 2 workers equals serial.

A pool that handed its forked workers the analysis object as inherited (not unpickled)
would leave every worker reading through the parent's one open XTC file, with one file
offset for all of them; reads then interleave and fail ("XTC read error") or return
frames of another worker. Each worker must unpickle its own copy (and open its own file).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from poreprobe.scale.parallel import block_slices, default_start_method
from poreprobe.scale.trajectory import profile_trajectory


@pytest.fixture(scope="module")
def long_xtc(tmp_path_factory):
    import MDAnalysis

    from poreprobe.demo.run import demo_path

    out = tmp_path_factory.mktemp("xtc") / "breathing_x3.xtc"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        u = MDAnalysis.Universe(demo_path("demo_channel", "pdb"), demo_path("demo_breathing"))
        with MDAnalysis.Writer(str(out), n_atoms=len(u.atoms)) as w:
            for _ in range(3):
                for _ts in u.trajectory:
                    w.write(u.atoms)
    return demo_path("demo_channel", "pdb"), str(out)


def test_xtc_on_two_workers_equals_serial(long_xtc):
    top, xtc = long_xtc
    kw = {"step_A": 0.5, "quiet": True}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        serial = profile_trajectory(top, xtc, backend="serial", **kw)
        pool = profile_trajectory(top, xtc, backend="multiprocessing", n_workers=2, n_parts=8, **kw)
    assert serial.n_frames == pool.n_frames == 150
    assert np.array_equal(serial.radius_A, pool.radius_A, equal_nan=True)
    assert np.array_equal(serial.frames, pool.frames)


def test_block_slices_and_start_method():
    assert [list(r) for r in block_slices(5, 2)] == [[0, 1, 2], [3, 4]] or [
        list(r) for r in block_slices(5, 2)
    ] == [[0, 1], [2, 3, 4]]
    assert sum(len(r) for r in block_slices(64, 4)) == 64 and len(block_slices(3, 8)) == 3
    assert default_start_method() in ("fork", "spawn")
