"""Biological assemblies read from REMARK 350 / pdbx_struct_assembly (poreprobe.io.assembly).

Entries (copied from the shared real-structure folder into tests/data/):

* 5VKE: KcsA with Fab, one channel subunit (chain C) and the Fab (A, B) in the
  asymmetric unit; REMARK 350 builds the tetramer with 4 operators. Cuello, Cortes and
  Perozo 2017, "The gating cycle of a K+ channel at atomic resolution", eLife 6 (JRNL).
* 4XNW: P2Y1 receptor, two copies in the crystal, assemblies 1 (chain A) and 2 (chain C).
  Zhang et al. 2015, "Two disparate ligand-binding sites in the human P2Y1 receptor",
  Nature 520:317 (JRNL).
* 3PJS: full-length KcsA with Fabs, whole octamer deposited. Uysal et al. 2011, PNAS
  108:11896 (JRNL).
"""

from __future__ import annotations

import json
import os
import warnings

import numpy as np
import pytest

import poreprobe as pp
from poreprobe.cli.main import main

DATA = os.path.join(os.path.dirname(__file__), "data")


def entry(name: str) -> str:
    return os.path.join(DATA, f"{name}.pdb.gz")


def read(name: str, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pp.read_structure(entry(name), **kw)


def test_one_subunit_entry_builds_the_tetramer_with_unique_readable_chains():
    with pytest.warns(pp.AssemblyWarning, match="built assembly 1"):
        atoms = pp.read_structure(entry("5vke"))
    deposited = read("5vke", assembly="deposited")
    info = atoms.assembly
    assert info.built and info.used == "1" and info.requested == "auto"
    assert len(info.operators) == 4 and info.n_copies == 12
    chains = sorted(set(atoms.chain.tolist()))
    assert chains == sorted(f"{c}{k}" for c in "ABC" for k in range(1, 5))
    assert dict(info.chain_renames)["C3"] == "C"
    assert len(atoms) == 4 * len(deposited)
    # each copy of the channel chain is the deposited chain moved rigidly
    dep_c = deposited.coords_A[deposited.chain == "C"]
    for k in range(1, 5):
        copy = atoms.coords_A[atoms.chain == f"C{k}"]
        assert copy.shape == dep_c.shape
        d_dep = np.linalg.norm(dep_c[:50, None] - dep_c[None, :50], axis=2)
        d_copy = np.linalg.norm(copy[:50, None] - copy[None, :50], axis=2)
        np.testing.assert_allclose(d_copy, d_dep, atol=1e-3)
    assert any("assembly" in note for note in atoms.notes)


def test_deposited_and_numbered_choices():
    dep = read("4xnw", assembly="deposited")
    assert sorted(set(dep.chain.tolist())) == ["A", "C"]
    assert dep.assembly.used == "deposited" and not dep.assembly.built
    first = read("4xnw")
    assert sorted(set(first.chain.tolist())) == ["A"]
    assert first.assembly.declared == ("1", "2")
    second = read("4xnw", assembly="2")
    assert sorted(set(second.chain.tolist())) == ["C"]


def test_assembly_equal_to_deposited_is_not_rebuilt():
    with warnings.catch_warnings():
        warnings.simplefilter("error", pp.AssemblyWarning)
        atoms = pp.read_structure(entry("3pjs"))
    assert not atoms.assembly.built and atoms.assembly.used == "1"
    assert "deposited model" in atoms.assembly.note


def test_bad_assembly_choice_is_an_input_error():
    with pytest.raises(pp.InputError, match="not declared"):
        read("4xnw", assembly="7")
    with pytest.raises(pp.InputError, match="assembly must be"):
        read("4xnw", assembly="")


def test_cli_bad_assembly_exits_2_without_output(tmp_path, capsys):
    out = tmp_path / "p.json"
    assert main(["profile", entry("4xnw"), "--assembly", "9", "--json", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error:")
    assert not out.exists()


def test_cli_json_records_the_assembly(tmp_path):
    out = tmp_path / "p.json"
    code = main(
        ["profile", entry("5vke"), "--no-chemistry", "--quiet", "--step-A", "0.5"]
        + ["--json", str(out)]
    )
    assert code == 0
    data = json.loads(out.read_text())
    assert data["assembly"]["used"] == "1" and data["assembly"]["built"] is True
    assert data["assembly"]["chain_renames"]["C2"] == "C"


def test_mmcif_conversion_keeps_the_assembly(tmp_path):
    gemmi = pytest.importorskip("gemmi")
    st = gemmi.read_structure(entry("5vke"))
    st.setup_entities()
    cif = tmp_path / "5vke.cif"
    st.make_mmcif_document().write_file(str(cif))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        from_cif = pp.read_structure(str(cif))
    from_pdb = read("5vke")
    assert from_cif.assembly.built and len(from_cif.assembly.operators) == 4
    assert sorted(set(from_cif.chain.tolist())) == sorted(set(from_pdb.chain.tolist()))
    order_pdb = np.lexsort((from_pdb.name, from_pdb.resid, from_pdb.chain))
    order_cif = np.lexsort((from_cif.name, from_cif.resid, from_cif.chain))
    np.testing.assert_allclose(
        from_cif.coords_A[order_cif], from_pdb.coords_A[order_pdb], atol=1e-3
    )


def test_batch_rows_record_the_assembly(tmp_path):
    out = tmp_path / "b.json"
    assert main(["batch", entry("5vke"), entry("3pjs"), "--quiet", "--json", str(out)]) == 0
    rows = {os.path.basename(r["path"]): r for r in json.loads(out.read_text())["rows"]}
    assert rows["5vke.pdb.gz"]["assembly"] == "1 (built)"
    assert rows["3pjs.pdb.gz"]["assembly"] == "1"
