"""Hostile input and output targets, table-driven, across every command (issue 16).

Each case runs the command line on files made in its own temporary folder and asserts
the exit status, that stderr is exactly one line with no traceback, and that nothing in
the folder was created, replaced or truncated (SHA-256, inode, size and file type of
every entry before and after). Cases that must succeed (devices, FIFOs, links) check
what they wrote instead. Device nodes are made in the temporary folder (``os.mknod``
as root, else the case is skipped or uses a FIFO), never the machine's own ``/dev``.
Ctrl-C cases run the command as a subprocess on a pseudo-terminal (so the progress bar
shows), send SIGINT once the bar appears, and check the exit status 130, the one line
``poreprobe: interrupted``, no output files and no worker process left behind.

All structures are invented: ring stacks built by ``poreprobe.geometry.synthetic`` and
the bundled demo channel (``structures_demo/``), built by ``poreprobe.demo``.
"""

from __future__ import annotations

import fcntl
import hashlib
import json
import os
import pty
import re
import select
import shutil
import signal
import socket
import stat
import struct
import subprocess
import sys
import termios
import threading
import time
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


@pytest.fixture(scope="module")
def inputs(tmp_path_factory) -> Path:
    """One folder of input files, copied into every case's own folder."""
    d = tmp_path_factory.mktemp("hostile_inputs")
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


def _mknod(path: Path, major: int, minor: int, kind=stat.S_IFCHR) -> None:
    if not IS_ROOT:
        pytest.skip("device nodes need root")
    os.mknod(path, kind | 0o666, os.makedev(major, minor))


# --------------------------------------------------------------------------- the table
def S(name):
    """Placeholder for a file of the case folder."""
    return "{d}/" + name


C4 = S("c4.pdb")
# (id, argv, expected exit status, stderr pattern, setup)
CASES = [
    # ---- bad input files
    ("missing-input", ["profile", S("none.pdb")], 2, r"no such file: .*none\.pdb", None),
    ("input-is-dir", ["profile", S("folder")], 2, r"cannot read .*folder: it is a directory", None),
    ("empty-input", ["profile", S("empty.pdb")], 2, r"empty\.pdb is empty", None),
    ("garbage-pdb", ["profile", S("garbage.pdb")], 2, r"garbage\.pdb", None),
    ("garbage-cif", ["profile", S("garbage.cif")], 2, r"garbage\.cif", None),
    ("nan-pdb", ["profile", S("nan.pdb")], 2, r"non-finite coordinate", None),
    ("inf-pdb", ["profile", S("inf.pdb")], 2, r"non-finite coordinate", None),
    (
        "nan-cif",
        ["profile", S("nan.cif")],
        2,
        r"atom A:\w+\d+ \w+ \(atom 1\) has a non-finite",
        None,
    ),
    ("huge-cif", ["profile", S("big.cif")], 2, r"beyond ±100000 Å", None),
    ("nan-gro", ["profile", S("nan.gro")], 2, r"nan\.gro, frame 0: atom .* non-finite", None),
    ("nan-xyz", ["profile", S("nan.xyz")], 2, r"nan\.xyz, frame 0: atom .* non-finite", None),
    (
        "altloc-absent",
        ["profile", C4, "--altloc", "Z"],
        2,
        r"--altloc Z: c4\.pdb has no alternate locations",
        None,
    ),
    ("altloc-word", ["profile", C4, "--altloc", "best"], 2, r"altloc", None),
    ("model-range", ["profile", C4, "--model", "5"], 2, r"model must be between 0 and 0", None),
    ("select-empty", ["profile", C4, "--select", "resname XYZ"], 2, r"matches no atoms", None),
    ("select-bad", ["profile", C4, "--select", "name ((("], 2, r"bad selection", None),
    ("radii-missing", ["profile", C4, "--radii-file", S("none.toml")], 2, r"none\.toml", None),
    ("radii-dir", ["profile", C4, "--radii-file", S("folder")], 2, r"it is a directory", None),
    ("radii-garbage", ["profile", C4, "--radii-file", S("bad.toml")], 2, r"bad\.toml", None),
    # ---- out-of-range option values
    ("step-zero", ["profile", C4, "--step-A", "0"], 2, r"step_A", None),
    ("step-negative", ["profile", C4, "--step-A", "-1"], 2, r"step_A", None),
    ("step-nan", ["profile", C4, "--step-A", "nan"], 2, r"step_A", None),
    ("max-radius-negative", ["profile", C4, "--max-radius-A", "-5"], 2, r"max_radius_A", None),
    ("axis-zero", ["profile", C4, "--axis-direction", "0", "0", "0"], 2, r"direction", None),
    ("frame-negative", ["profile", C4, "--frame", "-1"], 2, r"frame", None),
    ("step-text", ["profile", C4, "--step-A", "wide"], 2, r"invalid float value", None),
    ("figure-suffix", ["profile", C4, "--figure", S("fig.txt")], 2, r"fig\.txt", None),
    ("figure-dpi", ["profile", C4, "--figure", S("fig.png"), "--dpi", "0"], 2, r"dpi", None),
    ("scan-probe-start", ["scan", C4, "--probe-radii-A", "0:1:0.1"], 2, r"START must be > 0", None),
    ("scan-probe-order", ["scan", C4, "--probe-radii-A", "5:1"], 2, r"STOP must be >= START", None),
    ("scan-probe-text", ["scan", C4, "--probe-radii-A", "a:b"], 2, r"must be numbers", None),
    ("scan-probe-many", ["scan", C4, "--probe-radii-A", "0.1:50:0.001"], 2, r"limit 1000", None),
    ("match-current", ["match", "--current-pA", "-1", "--conc-mM", "150"], 2, r"current", None),
    ("match-conc", ["match", "--current-pA", "5", "--conc-mM", "0"], 2, r"conc", None),
    (
        "match-temperature",
        ["match", "--current-pA", "5", "--conc-mM", "150", "--temperature-C", "500"],
        2,
        r"temperature",
        None,
    ),
    ("resistance-nothing", ["resistance"], 2, r"give a STRUCTURE", None),
    (
        "resistance-g",
        [
            "resistance",
            "--from-conductances",
            "1,2",
            "--raised-entry-factor",
            "2",
            "--raised-far-factor",
            "2",
        ],
        2,
        r"three",
        None,
    ),
    ("check-ion", ["check", C4, "--ion", "Xx"], 2, r"Xx", None),
    ("compare-one", ["compare", C4], 2, r"at least two structures", None),
    ("compare-missing", ["compare", C4, S("none.pdb")], 2, r"no such file", None),
    (
        "traj-mixed-models",
        ["traj", S("mixed.pdb"), "--select", "all", "--quiet"],
        2,
        r"do not all hold the same atoms",
        None,
    ),
    (
        "traj-nan-frame",
        ["traj", S("nanframe.pdb"), "--select", "all", "--quiet"],
        2,
        r"non-finite coordinate",
        None,
    ),
    (
        "traj-garbage",
        ["traj", C4, "--trajectory", S("garbage.xtc"), "--select", "all", "--quiet"],
        2,
        r"cannot read .*garbage\.xtc",
        None,
    ),
    (
        "traj-start",
        ["traj", S("traj.pdb"), "--select", "all", "--quiet", "--frame-start", "100"],
        2,
        r"no frames",
        None,
    ),
    (
        "traj-step-zero",
        ["traj", S("traj.pdb"), "--select", "all", "--quiet", "--frame-step", "0"],
        2,
        r"step",
        None,
    ),
    (
        "traj-workers",
        ["traj", S("traj.pdb"), "--workers", "0", "--backend", "multiprocessing"],
        2,
        r"workers",
        None,
    ),
    (
        "batch-no-match",
        ["batch", S("nothing*.pdb")],
        2,
        r"pattern .*nothing\*\.pdb matches no files",
        None,
    ),
    (
        "batch-scheduler",
        ["batch", C4, "--scheduler", "tcp://x:1", "--backend", "multiprocessing"],
        2,
        r"--scheduler needs",
        None,
    ),
    ("export-nothing", ["export", C4], 2, r"nothing to export", None),
    ("export-mesh-probe", ["export", C4, "--mesh", S("m.ply")], 2, r"needs --probe-radius-A", None),
    ("export-map-suffix", ["export", C4, "--map", S("m.txt")], 2, r"m\.txt", None),
    (
        "plot-nan-json",
        ["plot", "profile", S("nan.json"), "--figure", S("f.png")],
        2,
        r"holds NaN",
        None,
    ),
    (
        "plot-not-json",
        ["plot", "profile", S("not.json"), "--figure", S("f.png")],
        2,
        r"is not a JSON file",
        None,
    ),
    (
        "plot-dir",
        ["plot", "profile", S("folder"), "--figure", S("f.png")],
        2,
        r"it is a directory",
        None,
    ),
    (
        "plot-same-file",
        ["plot", "profile", S("profile.json"), "--figure", S("profile.json")],
        2,
        r"same file as the input",
        None,
    ),
    ("mapcheck-no-resolution", ["mapcheck", C4, S("none.map")], 2, r"needs --resolution-A", None),
    (
        "mapcheck-missing-map",
        ["mapcheck", C4, S("none.map"), "--resolution-A", "3"],
        2,
        r"none\.map",
        None,
    ),
    (
        "mapcheck-map-is-dir",
        ["mapcheck", C4, S("folder"), "--resolution-A", "3"],
        2,
        r"cannot read .*folder: it is a directory",
        None,
    ),
    (
        "mapcheck-garbage-map",
        ["mapcheck", C4, S("garbage.map"), "--resolution-A", "3"],
        2,
        r"garbage\.map",
        None,
    ),
    (
        "check-map-is-input",
        ["check", C4, "--density-map", S("garbage.map"), "--resolution-A", "3", "--json", C4],
        2,
        r"same file as the input",
        None,
    ),
    ("demo-out-file", ["demo", "--out", S("old.txt")], 2, r"not a folder", None),
    ("demo-out-parent", ["demo", "--out", S("no/such/out")], 2, r"does not exist", None),
    # ---- output targets that must be refused before computing
    (
        "json-no-folder",
        ["profile", C4, "--json", S("none/out.json")],
        2,
        r"folder .*none does not exist",
        None,
    ),
    (
        "json-is-dir",
        ["profile", C4, "--json", S("folder")],
        2,
        r"cannot write .*folder: it is a directory",
        None,
    ),
    ("json-is-input", ["profile", C4, "--json", C4], 2, r"same file as the input", None),
    (
        "json-link-to-input",
        ["profile", C4, "--json", S("link.json")],
        2,
        r"cannot write .*link\.json: it is the same file",
        "link_input",
    ),
    (
        "json-hardlink-input",
        ["profile", C4, "--json", S("hard.pdb")],
        2,
        r"same file as the input",
        "hardlink_input",
    ),
    (
        "csv-is-trajectory",
        ["traj", S("traj.pdb"), "--select", "all", "--quiet", "--csv", S("traj.pdb")],
        2,
        r"same file as the input",
        None,
    ),
    (
        "two-same-name",
        ["profile", C4, "--json", S("a.out"), "--csv", S("./a.out")],
        2,
        r"two outputs name the same file",
        None,
    ),
    (
        "two-same-link",
        ["profile", C4, "--json", S("old.txt"), "--csv", S("oldlink.txt")],
        2,
        r"two outputs name the same file",
        "link_old",
    ),
    (
        "name-too-long",
        ["profile", C4, "--json", S("x" * 300 + ".json")],
        2,
        r"cannot write .*(too long)",
        None,
    ),
    ("block-device", ["profile", C4, "--json", S("blk")], 2, r"block device", "block"),
    ("socket", ["profile", C4, "--json", S("sock")], 2, r"socket", "socket"),
    (
        "export-two-same",
        ["export", C4, "--map", S("a.map"), "--mesh", S("a.ply"), "--probe-radius-A", "1"],
        2,
        r"two outputs name the same file: .*a\.map and .*a\.ply",
        "link_map",
    ),
    ("read-only-file", ["profile", C4, "--json", S("old.txt")], 2, r"read-only", "readonly_file"),
    (
        "read-only-folder",
        ["profile", C4, "--json", S("ro/out.json")],
        2,
        r"read-only",
        "readonly_folder",
    ),
    # ---- several outputs; one fails late (writing a full device): nothing replaced
    (
        "late-failure-profile",
        ["profile", C4, "--json", S("old.txt"), "--csv", S("full")],
        2,
        r"cannot write .*full: No space left",
        "full",
    ),
    (
        "late-failure-export",
        ["export", C4, "--map", S("old.map"), "--centerline", S("full.cif"), "--spacing-A", "1"],
        2,
        r"cannot write .*full\.cif: No space left",
        "full_cif",
    ),
    (
        "late-failure-traj",
        [
            "traj",
            S("traj.pdb"),
            "--select",
            "all",
            "--quiet",
            "--json",
            S("old.txt"),
            "--frames-csv",
            S("full"),
        ],
        2,
        r"No space left",
        "full",
    ),
]


def _setup(kind, d: Path):
    if kind is None:
        return
    if kind == "link_input":
        os.symlink(d / "c4.pdb", d / "link.json")
    elif kind == "hardlink_input":
        os.link(d / "c4.pdb", d / "hard.pdb")
    elif kind == "link_map":  # a.ply -> a.map, which does not exist yet
        os.symlink("a.map", d / "a.ply")
    elif kind == "link_old":
        os.symlink("old.txt", d / "oldlink.txt")
    elif kind == "block":
        _mknod(d / "blk", 7, 0, stat.S_IFBLK)  # a loop device node; never opened
    elif kind == "socket":
        sock = socket.socket(socket.AF_UNIX, socket.SOCK_STREAM)
        sock.bind(str(d / "sock"))
        sock.close()
    elif kind == "readonly_file":
        if IS_ROOT:
            pytest.skip("root may write read-only files")
        os.chmod(d / "old.txt", 0o444)
    elif kind == "readonly_folder":
        if IS_ROOT:
            pytest.skip("root may write read-only folders")
        (d / "ro").mkdir()
        os.chmod(d / "ro", 0o555)
    elif kind in ("full", "full_cif"):
        _mknod(d / ("full" if kind == "full" else "full.cif"), 1, 7)  # like /dev/full: ENOSPC
        (d / "old.map").write_bytes(b"an older map\n")
    else:  # pragma: no cover
        raise AssertionError(kind)


def _case_folder(inputs: Path, tmp_path: Path) -> Path:
    d = tmp_path / "case"
    shutil.copytree(inputs, d, symlinks=True)
    return d


def _fill(argv, d: Path) -> list[str]:
    return [a.replace("{d}", str(d)) for a in argv]


def _one_line(err: str) -> str:
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert "Traceback" not in err, err
    assert len(lines) == 1, err
    return lines[0]


@pytest.mark.parametrize(
    ("argv", "code", "pattern", "setup"), [c[1:] for c in CASES], ids=[c[0] for c in CASES]
)
def test_hostile_case(argv, code, pattern, setup, inputs, tmp_path, capfd):
    d = _case_folder(inputs, tmp_path)
    _setup(setup, d)
    before = snapshot(d)
    assert main(_fill(argv, d)) == code
    err = capfd.readouterr().err
    line = _one_line(err)
    assert line.startswith("poreprobe: error: "), line
    assert re.search(pattern, line), line
    assert ".poreprobe-" not in line  # errors name the user's path, not a temporary file
    assert snapshot(d) == before  # nothing created, replaced or truncated


def test_every_file_option_is_planned():
    """Each option naming a file has a role type, so the output plan sees it."""
    from poreprobe.cli.main import _subparsers, build_parser
    from poreprobe.cli.outputs import InputPath, OutputFolder, OutputPath

    file_words = ("FILE", "TOML", "FOLDER", "STRUCTURE", "FILES", "INPUT", "MAP")
    checked = 0
    for name, sub in _subparsers(build_parser()).choices.items():
        for action in sub._actions:
            metavar = action.metavar if isinstance(action.metavar, str) else ""
            if metavar in file_words:
                assert action.type in (InputPath, OutputPath, OutputFolder), (name, action.dest)
                checked += 1
    assert checked >= 30


def test_table_is_large_enough():
    assert len(CASES) + len(SUCCESS_CASES) + len(SIGINT_CASES) >= 60


# --------------------------------------------------------------------------- must succeed
def _device_null(d):
    if IS_ROOT:
        _mknod(d / "null", 1, 3)  # like /dev/null
    else:
        os.mkfifo(d / "null")
        _drain(d / "null")


def _drain(fifo: Path, store: list | None = None):
    def read():
        with open(fifo, "rb") as fh:
            data = fh.read()
        if store is not None:
            store.append(data)

    threading.Thread(target=read, daemon=True).start()


def case_device_outputs(d, capfd):
    _device_null(d)
    kind = stat.S_IFMT(os.lstat(d / "null").st_mode)
    ino = os.lstat(d / "null").st_ino
    argv = ["profile", f"{d}/c4.pdb", "--quiet", "--json", f"{d}/null"]
    if IS_ROOT:  # a character device may take several outputs
        argv += ["--csv", f"{d}/null"]
    return (
        argv,
        lambda: (
            stat.S_IFMT(os.lstat(d / "null").st_mode) == kind and os.lstat(d / "null").st_ino == ino
        ),
    )


def case_fifo(d, capfd):
    os.mkfifo(d / "pipe")
    got: list = []
    _drain(d / "pipe", got)

    def check():
        for _ in range(100):
            if got:
                break
            time.sleep(0.02)
        doc = json.loads(got[0])
        return stat.S_ISFIFO(os.lstat(d / "pipe").st_mode) and "provenance" in doc

    return ["profile", f"{d}/c4.pdb", "--quiet", "--json", f"{d}/pipe"], check


def case_symlink(d, capfd):
    os.symlink("old.txt", d / "link.json")
    ino = os.lstat(d / "link.json").st_ino

    def check():
        st = os.lstat(d / "link.json")
        doc = json.loads((d / "old.txt").read_text())
        return stat.S_ISLNK(st.st_mode) and st.st_ino == ino and doc["source"] == "c4.pdb"

    return ["profile", f"{d}/c4.pdb", "--quiet", "--json", f"{d}/link.json"], check


def case_dangling_symlink(d, capfd):
    os.symlink("made.json", d / "dangling.json")

    def check():
        return os.path.islink(d / "dangling.json") and json.loads((d / "made.json").read_text())

    return ["profile", f"{d}/c4.pdb", "--quiet", "--json", f"{d}/dangling.json"], check


def case_stdout(d, capfd):
    def check():
        out = capfd.readouterr().out
        return json.loads(out)["source"] == "c4.pdb"

    return ["profile", f"{d}/c4.pdb", "--quiet", "--json", "/dev/stdout"], check


def case_traj_capture_figure(d, capfd):
    def check():
        doc = json.loads((d / "t.json").read_text())
        png = (d / "t.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        return doc["capture"]["probe_radius_A"] == 1.0 and png and (d / "t.csv").exists()

    argv = [
        "traj",
        f"{d}/traj.pdb",
        "--select",
        "all",
        "--quiet",
        "--quiet",
        "--probe-radius-A",
        "1",
    ]
    return argv + ["--figure", f"{d}/t.png", "--json", f"{d}/t.json", "--csv", f"{d}/t.csv"], check


def case_provenance(d, capfd):
    def check():
        doc = json.loads((d / "p.json").read_text())
        prov = doc["provenance"]
        sha = hashlib.sha256((d / "c4.pdb").read_bytes()).hexdigest()
        csv_lines = (d / "p.csv").read_text().splitlines()
        return (
            prov["input_sha256"] == {f"{d}/c4.pdb": sha}
            and prov["options"]["step_A"] == 0.5
            and prov["command_line"][:2] == ["poreprobe", "profile"]
            and set(prov["library_versions"]) == {"numpy", "scipy", "gemmi", "MDAnalysis"}
            and prov["utc_time"].endswith("Z")
            and doc["warnings"] == []
            and any(sha in ln for ln in csv_lines if ln.startswith("# provenance: input"))
        )

    argv = ["profile", f"{d}/c4.pdb", "--quiet", "--step-A", "0.5"]
    return argv + ["--json", f"{d}/p.json", "--csv", f"{d}/p.csv"], check


def case_duplicates(d, capfd):
    def check():
        doc = json.loads((d / "dup.json").read_text())
        return any("atoms sit exactly on another atom" in w for w in doc["warnings"])

    return ["profile", f"{d}/dup.pdb", "--json", f"{d}/dup.json"], check


def case_outlier(d, capfd):
    def check():
        doc = json.loads((d / "far.json").read_text())
        return any("far" in w for w in doc["warnings"]) and doc["axis"]["method"].startswith(
            "symmetry"
        )

    return ["profile", f"{d}/outlier.pdb", "--json", f"{d}/far.json", "--quiet"], check


# (id, builder, expected warning pattern on stderr or None for an empty stderr)
SUCCESS_CASES = [
    ("device-outputs", case_device_outputs, None),
    ("fifo-output", case_fifo, None),
    ("symlink-output", case_symlink, None),
    ("dangling-symlink", case_dangling_symlink, None),
    ("stdout-output", case_stdout, None),
    ("traj-capture-figure", case_traj_capture_figure, None),
    ("provenance", case_provenance, None),
    ("duplicated-copy", case_duplicates, r"^poreprobe: warning: dup\.pdb: 408 atoms sit exactly"),
    ("outlier-quiet", case_outlier, None),
]


@pytest.mark.parametrize(
    ("build", "warning"), [c[1:] for c in SUCCESS_CASES], ids=[c[0] for c in SUCCESS_CASES]
)
def test_special_targets_succeed(build, warning, inputs, tmp_path, capfd):
    d = _case_folder(inputs, tmp_path)
    argv, check = build(d, capfd)
    assert main(argv) == 0
    captured = capfd.readouterr()
    if warning is None:
        assert captured.err == ""
    else:
        assert re.search(warning, _one_line(captured.err)), captured.err
    if "/dev/stdout" in argv:  # what went to fd 1 was captured above
        assert json.loads(captured.out)["source"] == "c4.pdb"
    else:
        assert check()
    assert not [p for p in os.listdir(d) if p.startswith(".poreprobe-")]


# --------------------------------------------------------------------------- Ctrl-C
def _session_alive(sid: int) -> list[int]:
    """Live (not zombie) processes of session ``sid``."""
    alive = []
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            text = Path(f"/proc/{entry}/stat").read_text()
        except OSError:
            continue
        fields = text[text.rindex(")") + 2 :].split()
        if int(fields[3]) == sid and fields[0] != "Z":
            alive.append(int(entry))
    return alive


def _read_pty(master: int) -> bytes:
    """What the terminal received in the next 0.1 s (b"" once it is closed)."""
    try:
        if select.select([master], [], [], 0.1)[0]:
            return os.read(master, 4096)
    except OSError:  # EIO: the process and its terminal are gone
        pass
    return b""


def _screen_lines(raw: bytes) -> list[str]:
    """Lines as a terminal leaves them: ANSI codes dropped, the last \\r segment kept."""
    text = re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", raw.decode("utf-8", "replace"))
    lines = text.replace("\r\n", "\n").split("\n")
    shown = [next((p.strip() for p in reversed(ln.split("\r")) if p.strip()), "") for ln in lines]
    return [ln for ln in shown if ln]


TRAJ = [str(DEMO / "demo_channel.pdb"), "--trajectory", str(DEMO / "demo_breathing.xtc")]
SIGINT_CASES = [
    ("traj-serial", ["traj", *TRAJ]),
    ("traj-multiprocessing", ["traj", *TRAJ, "--backend", "multiprocessing", "--workers", "2"]),
    ("traj-dask", ["traj", *TRAJ, "--backend", "dask", "--workers", "2"]),
    ("scan-serial", ["scan", str(DEMO / "demo_channel.pdb"), "--probe-radii-A", "0.5:6:0.1"]),
    ("batch-multiprocessing", ["batch", str(DEMO / "*.cif"), "--backend", "multiprocessing"]),
    ("batch-dask", ["batch", str(DEMO / "*.cif"), "--backend", "dask"]),
]


@pytest.mark.parametrize("argv", [c[1] for c in SIGINT_CASES], ids=[c[0] for c in SIGINT_CASES])
def test_ctrl_c(argv, tmp_path):
    outs = ["--json", str(tmp_path / "r.json"), "--csv", str(tmp_path / "r.csv")]
    before = snapshot(tmp_path)
    master, slave = pty.openpty()
    # a terminal 80 columns wide (a new pseudo-terminal has 0, and no bar fits in 0)
    fcntl.ioctl(slave, termios.TIOCSWINSZ, struct.pack("HHHH", 24, 80, 0, 0))
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    proc = subprocess.Popen(
        [sys.executable, "-m", "poreprobe.cli.main", *argv, *outs],
        stdin=subprocess.DEVNULL,
        stdout=subprocess.DEVNULL,
        stderr=slave,
        env=env,
        cwd=tmp_path,
        start_new_session=True,
    )
    os.close(slave)
    raw = b""
    deadline = time.monotonic() + 60
    try:
        while b"%|" not in raw and proc.poll() is None and time.monotonic() < deadline:
            raw += _read_pty(master)
        assert b"%|" in raw, f"no progress bar: {raw!r}"
        os.kill(proc.pid, signal.SIGINT)
        while time.monotonic() < deadline:
            chunk = _read_pty(master)
            raw += chunk
            if proc.poll() is not None and not chunk:
                break
    finally:
        os.close(master)
        if proc.poll() is None:
            proc.kill()
            raise AssertionError(f"not stopped by SIGINT: {raw!r}")
    assert proc.returncode == 130
    after_bar = _screen_lines(raw.split(b"%|")[-1])
    lines = [ln for ln in after_bar if "%|" not in ln and "it/s" not in ln and "s/it" not in ln]
    assert lines[-1:] == ["poreprobe: interrupted"], raw
    assert not [ln for ln in lines[:-1] if not ln.endswith("]")], raw  # only bar remnants
    assert "Traceback" not in raw.decode("utf-8", "replace")
    assert snapshot(tmp_path) == before  # no partial or temporary file
    for _ in range(50):  # worker processes and dask clusters shut down
        if not _session_alive(proc.pid):
            break
        time.sleep(0.1)
    assert not _session_alive(proc.pid)


@pytest.mark.parametrize("where", ["file", "folder"])
def test_read_only_targets_refused(where, inputs, tmp_path, capfd, monkeypatch):
    """Read-only files and folders are refused (as root too: os.access answers as if not root)."""
    import poreprobe.io.writer as writer

    d = _case_folder(inputs, tmp_path)
    target = d / "old.txt" if where == "file" else d / "folder" / "out.json"
    locked = target if where == "file" else target.parent
    real_access = os.access
    monkeypatch.setattr(
        writer.os,
        "access",
        lambda p, mode: False if Path(p) == locked and mode & os.W_OK else real_access(p, mode),
    )
    before = snapshot(d)
    assert main(["profile", str(d / "c4.pdb"), "--quiet", "--json", str(target)]) == 2
    line = _one_line(capfd.readouterr().err)
    assert re.search(rf"cannot write {re.escape(str(target))}: .*read-only", line), line
    assert snapshot(d) == before


def test_logged_and_python_warnings_recorded_with_quiet(inputs, tmp_path, capfd, monkeypatch):
    """--quiet hides warnings on the terminal, the JSON keeps them (logging and warnings.warn)."""
    import logging
    import warnings

    import poreprobe.cli.profile as profile_cmd
    from poreprobe.errors import QualityWarning

    compute = profile_cmd.compute

    def noisy(args):
        logging.getLogger("poreprobe").warning("a logged warning")
        warnings.warn("a Python warning", QualityWarning, stacklevel=1)
        return compute(args)

    monkeypatch.setattr(profile_cmd, "compute", noisy)
    d = _case_folder(inputs, tmp_path)
    out = d / "w.json"
    assert (
        main(
            ["profile", str(d / "c4.pdb"), "--quiet", "--json", str(out), "--csv", str(d / "w.csv")]
        )
        == 0
    )
    assert capfd.readouterr().err == ""
    assert json.loads(out.read_text())["warnings"] == ["a logged warning", "a Python warning"]
    comments = [ln for ln in (d / "w.csv").read_text().splitlines() if ln.startswith("# warning:")]
    assert comments == ["# warning: a logged warning", "# warning: a Python warning"]
