"""Hostile command lines, table-driven, across every command (issue 16).

Each case runs the command line on files made in its own temporary folder and asserts
the exit status, that stderr is exactly one line with no traceback, and that nothing in
the folder was created, replaced or truncated (SHA-256, inode, size and file type of
every entry before and after). Special output targets that must work are in
``test_hostile_targets.py``, Ctrl-C in ``test_hostile_sigint.py``; the input files are
built by ``tests/_hostile.py`` (invented structures only).
"""

from __future__ import annotations

import os
import re
import socket
import stat
from pathlib import Path

import pytest
from _hostile import (
    IS_ROOT,
    case_folder,
    mknod,
    one_line,
    snapshot,
)

from poreprobe.cli.main import main


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
        mknod(d / "blk", 7, 0, stat.S_IFBLK)  # a loop device node; never opened
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
        mknod(d / ("full" if kind == "full" else "full.cif"), 1, 7)  # like /dev/full: ENOSPC
        (d / "old.map").write_bytes(b"an older map\n")
    else:  # pragma: no cover
        raise AssertionError(kind)


def _fill(argv, d: Path) -> list[str]:
    return [a.replace("{d}", str(d)) for a in argv]


@pytest.mark.parametrize(
    ("argv", "code", "pattern", "setup"), [c[1:] for c in CASES], ids=[c[0] for c in CASES]
)
def test_hostile_case(argv, code, pattern, setup, hostile_inputs, tmp_path, capfd):
    d = case_folder(hostile_inputs, tmp_path)
    _setup(setup, d)
    before = snapshot(d)
    assert main(_fill(argv, d)) == code
    err = capfd.readouterr().err
    line = one_line(err)
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
    assert len(CASES) >= 60  # plus the special targets and Ctrl-C cases of the sibling files


@pytest.mark.parametrize("where", ["file", "folder"])
def test_read_only_targets_refused(where, hostile_inputs, tmp_path, capfd, monkeypatch):
    """Read-only files and folders are refused (as root too: os.access answers as if not root)."""
    import poreprobe.io.writer as writer

    d = case_folder(hostile_inputs, tmp_path)
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
    line = one_line(capfd.readouterr().err)
    assert re.search(rf"cannot write {re.escape(str(target))}: .*read-only", line), line
    assert snapshot(d) == before
