"""Shared pieces of the hostile tests: invented input files, folder snapshots, devices.

All structures are invented: ring stacks built by ``poreprobe.geometry.synthetic`` and
the bundled demo channel (``structures_demo/``), built by ``poreprobe.demo``. Device
nodes are made in temporary folders (``os.mknod`` as root), never the machine's ``/dev``.
"""

from __future__ import annotations

import hashlib
import os
import re
import shutil
import stat
from pathlib import Path

import numpy as np
import pytest

from poreprobe.cli.main import main
from poreprobe.geometry import synthetic
from poreprobe.io.structure import concatenate_atoms
from poreprobe.io.structure_writer import write_structure

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "structures_demo"
IS_ROOT = hasattr(os, "geteuid") and os.geteuid() == 0
#: MDAnalysis caches XTC frame offsets next to the trajectory; not poreprobe's output.
MDA_CACHE = re.compile(r"^\..*_offsets\.(npz|lock)$")


# --------------------------------------------------------------------------- inputs
def _ring_stack(shift=0.0):
    z = np.arange(-8.0, 8.5, 1.0)
    atoms = synthetic.ring_stack(np.full(len(z), 6.0), z, chains=4)
    return atoms.with_coords(atoms.coords_A + shift)


def _set_first_coordinate(pdb_text: str, value: str) -> str:
    lines = pdb_text.splitlines()
    for i, line in enumerate(lines):
        if line.startswith(("ATOM", "HETATM")):
            lines[i] = line[:30] + f"{value:>8}" + line[38:]
            break
    return "\n".join(lines) + "\n"


def _multi_model(models: list[str]) -> str:
    out = []
    for k, text in enumerate(models, start=1):
        atoms = [ln for ln in text.splitlines() if ln.startswith(("ATOM", "HETATM"))]
        out += [f"MODEL     {k:4d}", *atoms, "ENDMDL"]
    return "\n".join([*out, "END"]) + "\n"


def _gro(atoms, nan=False) -> str:
    lines = ["invented ring stack", f"{len(atoms):5d}"]
    for i, (x, y, z) in enumerate(atoms.coords_A / 10.0):
        x = float("nan") if nan and i == 0 else x
        lines.append(f"{1:5d}{'RNG':<5}{'C':>5}{i + 1:5d}{x:8.3f}{y:8.3f}{z:8.3f}")
    lines.append("   5.00000   5.00000   5.00000")
    return "\n".join(lines) + "\n"


def build_inputs(d: Path) -> Path:
    """Fill folder ``d`` with the input files every hostile case starts from."""
    base = _ring_stack()
    write_structure(base, d / "c4.pdb")
    write_structure(base, d / "c4.cif")
    pdb = (d / "c4.pdb").read_text()
    (d / "nan.pdb").write_text(_set_first_coordinate(pdb, "nan"))
    (d / "inf.pdb").write_text(_set_first_coordinate(pdb, "inf"))
    cif = (d / "c4.cif").read_text()
    x = re.search(r"^ATOM\s+\d+\s+\S+\s+\S+\s+\S+\s+\S+\s+\S+\s+\S+\s+\S+\s+\S+\s+(\S+)", cif, re.M)
    (d / "nan.cif").write_text(cif[: x.start(1)] + "nan" + cif[x.end(1) :])
    (d / "big.cif").write_text(cif[: x.start(1)] + "1e30" + cif[x.end(1) :])
    (d / "nan.gro").write_text(_gro(base, nan=True))
    rows = "".join(f"C {a:.3f} {b:.3f} {c:.3f}\n" for a, b, c in base.coords_A[1:])
    (d / "nan.xyz").write_text(f"{len(base)}\ninvented\nC nan 0 0\n{rows}")
    write_structure(concatenate_atoms([base, base]), d / "dup.pdb")
    far = base.coords_A.copy()
    far[0] = [3000.0, 3000.0, 3000.0]
    write_structure(base.with_coords(far), d / "outlier.pdb")
    models = [(d / "c4.pdb").read_text()]
    for k in (1, 2):
        write_structure(_ring_stack(0.05 * k), d / "tmp.pdb")
        models.append((d / "tmp.pdb").read_text())
    (d / "tmp.pdb").unlink()
    (d / "traj.pdb").write_text(_multi_model(models))
    short = "\n".join(models[1].splitlines()[:-30])
    (d / "mixed.pdb").write_text(_multi_model([models[0], short]))
    (d / "nanframe.pdb").write_text(
        _multi_model([models[0], _set_first_coordinate(models[1], "nan")])
    )
    rng = np.random.default_rng(16)
    (d / "garbage.pdb").write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
    (d / "garbage.cif").write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
    (d / "garbage.map").write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
    (d / "garbage.xtc").write_bytes(rng.integers(0, 256, 4000, dtype=np.uint8).tobytes())
    (d / "empty.pdb").write_text("")
    (d / "bad.toml").write_text("[elements\nC = 'x'\n")
    (d / "nan.json").write_text(
        '{"source": "x", "profile": {"s_A": [0, 1, NaN], "radius_A": [1, 2, 3]}}'
    )
    (d / "not.json").write_text("this is not JSON\n")
    assert main(["profile", str(d / "c4.pdb"), "--quiet", "--json", str(d / "profile.json")]) == 0
    (d / "old.txt").write_text("a file that was here before\n")
    (d / "folder").mkdir()
    return d


# --------------------------------------------------------------------------- snapshots
def snapshot(folder: Path) -> dict:
    """Every entry under folder: type, inode, size, SHA-256 (files) or link target."""
    out = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        for name in dirnames + filenames:
            path = os.path.join(dirpath, name)
            if MDA_CACHE.match(name):
                continue
            st = os.lstat(path)
            entry = [stat.S_IFMT(st.st_mode), st.st_ino, st.st_size]
            if stat.S_ISREG(st.st_mode):
                entry.append(hashlib.sha256(Path(path).read_bytes()).hexdigest())
            elif stat.S_ISLNK(st.st_mode):
                entry.append(os.readlink(path))
            out[os.path.relpath(path, folder)] = tuple(entry)
    return out


def mknod(path: Path, major: int, minor: int, kind=stat.S_IFCHR) -> None:
    if not IS_ROOT:
        pytest.skip("device nodes need root")
    os.mknod(path, kind | 0o666, os.makedev(major, minor))


def case_folder(inputs: Path, tmp_path: Path) -> Path:
    """A fresh copy of the inputs for one case."""
    d = tmp_path / "case"
    shutil.copytree(inputs, d, symlinks=True)
    return d


def one_line(err: str) -> str:
    """The single line of stderr (no traceback, exactly one non-empty line)."""
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert "Traceback" not in err, err
    assert len(lines) == 1, err
    return lines[0]
