"""Special output targets that must work: devices, FIFOs, links, stdout; provenance, warnings.

Device nodes are made in the test's own folder (``os.mknod`` as root, else a FIFO),
never the machine's ``/dev``.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import stat
import threading
import time
from pathlib import Path

import pytest
from _hostile import (
    IS_ROOT,
    case_folder,
    mknod,
    one_line,
)

from poreprobe.cli.main import main


# --------------------------------------------------------------------------- must succeed
def _device_null(d):
    if IS_ROOT:
        mknod(d / "null", 1, 3)  # like /dev/null
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
def test_special_targets_succeed(build, warning, hostile_inputs, tmp_path, capfd):
    d = case_folder(hostile_inputs, tmp_path)
    argv, check = build(d, capfd)
    assert main(argv) == 0
    captured = capfd.readouterr()
    if warning is None:
        assert captured.err == ""
    else:
        assert re.search(warning, one_line(captured.err)), captured.err
    if "/dev/stdout" in argv:  # what went to fd 1 was captured above
        assert json.loads(captured.out)["source"] == "c4.pdb"
    else:
        assert check()
    assert not [p for p in os.listdir(d) if p.startswith(".poreprobe-")]


def test_logged_and_python_warnings_recorded_with_quiet(
    hostile_inputs, tmp_path, capfd, monkeypatch
):
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
    d = case_folder(hostile_inputs, tmp_path)
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
