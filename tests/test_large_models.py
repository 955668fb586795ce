"""Large and messy models: stray atoms far away cannot blow up the planes or the memory.

The models are invented (poreprobe.geometry.synthetic.shell_channel); the speed targets
on 200,000 atoms are measured by benchmarks/bench_large_models.py.
"""

from __future__ import annotations

import json
import resource
import warnings

import numpy as np
import pytest

import poreprobe as pp
from poreprobe.cli.main import main
from poreprobe.geometry import synthetic
from poreprobe.io.sanity import drop_far_atoms
from poreprobe.io.structure import concatenate_atoms, make_atoms
from poreprobe.io.writer import write_structure


def with_strays(atoms, far_A=20_000.0):
    stray = make_atoms(
        [[0.0, 0.0, far_A], [far_A, 0.0, 0.0]],
        name=["CA", "CA"],
        resname=["GLY", "GLY"],
        resid=[900, 901],
        chain=["Z", "Z"],
    )
    return concatenate_atoms([atoms, stray])


def test_stray_atoms_do_not_change_the_profile():
    atoms = synthetic.shell_channel(2000, seed=1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        kept = drop_far_atoms(with_strays(atoms))
    ref = pp.radius_profile(atoms, pp.find_pore_axis(atoms), step_A=0.5)
    got = pp.radius_profile(kept, pp.find_pore_axis(kept), step_A=0.5)
    assert len(got.s_A) == len(ref.s_A) < 400
    assert got.min_radius_A == pytest.approx(ref.min_radius_A, abs=1e-9)


def test_cli_with_stray_atoms_stays_small(tmp_path, capsys):
    atoms = with_strays(synthetic.shell_channel(2000, seed=1))
    path = tmp_path / "messy.cif"
    write_structure(atoms, path)
    out = tmp_path / "p.json"
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    code = main(["profile", str(path), "--no-chemistry", "--step-A", "0.5", "--json", str(out)])
    assert code == 0
    grown_MB = (resource.getrusage(resource.RUSAGE_SELF).ru_maxrss - before) / 1024
    assert grown_MB < 500  # without the rule: about 2.5 GB and 90,000 planes
    data = json.loads(out.read_text())
    assert len(data["profile"]["s_A"]) < 400
    assert "far" in capsys.readouterr().err
    assert np.isfinite(data["min_radius_A"])
