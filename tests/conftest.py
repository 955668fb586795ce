"""Shared fixtures: open test data reached by file name, and small invented channels."""

from __future__ import annotations

import os

import numpy as np
import pytest

from poreprobe.geometry import synthetic
from poreprobe.io.structure_writer import write_structure


def mdanalysis_test_file(name: str) -> str:
    """Path of a file in the MDAnalysisTests data folder, by its own file name."""
    tests_pkg = pytest.importorskip("MDAnalysisTests")
    path = os.path.join(os.path.dirname(tests_pkg.__file__), "data", name)
    if not os.path.exists(path):
        pytest.skip(f"{name} not shipped by this MDAnalysisTests")
    return path


@pytest.fixture(scope="session")
def gramicidin_pdb() -> str:
    """PDB entry 1GRM (gramicidin A, NMR), one model, from the MDAnalysisTests data folder."""
    return mdanalysis_test_file("1grm_single.pdb")


@pytest.fixture()
def c4_cylinder_pdb(tmp_path) -> str:
    """A four-chain ring-stack cylinder (ring radius 6 Å, 21 rings) written as PDB."""
    radii = np.full(21, 6.0)
    z = np.arange(-10.0, 10.5, 1.0)
    path = tmp_path / "c4.pdb"
    write_structure(synthetic.ring_stack(radii, z, chains=4), path)
    return str(path)


@pytest.fixture(scope="session")
def hostile_inputs(tmp_path_factory):
    """The input files of the hostile tests (invented structures, damaged copies), built once."""
    from _hostile import build_inputs

    return build_inputs(tmp_path_factory.mktemp("hostile_inputs"))
