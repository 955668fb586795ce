"""The output plan as a library: one-file writes, links, devices, all-or-nothing commits."""

from __future__ import annotations

import hashlib
import json
import os
import stat

import pytest

from poreprobe.errors import InputError
from poreprobe.io.export import to_csv, to_json
from poreprobe.io.provenance import RunRecord, json_safe
from poreprobe.io.writer import TEMP_PREFIX, OutputPlan, check_output_path, write_output

IS_ROOT = hasattr(os, "geteuid") and os.geteuid() == 0


def test_library_write_outside_a_plan_is_atomic_and_keeps_mode(tmp_path):
    target = tmp_path / "a.json"
    target.write_text("old\n")
    os.chmod(target, 0o640)
    to_json({"x": 1.5, "nan": float("nan")}, target)
    assert json.loads(target.read_text()) == {"x": 1.5, "nan": None}
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o640
    assert not [p for p in os.listdir(tmp_path) if p.startswith(TEMP_PREFIX)]


def test_link_loop_and_nul_are_one_error(tmp_path):
    os.symlink("b", tmp_path / "a")
    os.symlink("a", tmp_path / "b")
    with pytest.raises(InputError, match="too many levels of symbolic links"):
        check_output_path(tmp_path / "a")
    with pytest.raises(InputError, match="NUL"):
        check_output_path(str(tmp_path / "x\0y"))
    with pytest.raises(InputError, match="non-empty"):
        check_output_path("  ")


def test_stdin_is_refused_and_stdout_is_written_through(capfd):
    with pytest.raises(InputError, match="standard input"):
        check_output_path("/dev/stdin")
    out = check_output_path("/dev/stdout")
    assert (out.mode, out.fd) == ("fd", 1)
    write_output("/dev/stdout", "through fd 1\n")
    assert capfd.readouterr().out == "through fd 1\n"


@pytest.mark.skipif(not IS_ROOT, reason="device nodes need root")
def test_device_written_through_outside_a_plan(tmp_path):
    node = tmp_path / "null"
    os.mknod(node, stat.S_IFCHR | 0o666, os.makedev(1, 3))  # like /dev/null
    ino = os.lstat(node).st_ino
    to_csv(("a",), [(1.0,)], node)
    assert stat.S_ISCHR(os.lstat(node).st_mode) and os.lstat(node).st_ino == ino


@pytest.mark.skipif(not IS_ROOT, reason="device nodes need root")
def test_failed_commit_leaves_every_target_as_it_was(tmp_path):
    full = tmp_path / "full"
    os.mknod(full, stat.S_IFCHR | 0o666, os.makedev(1, 7))  # like /dev/full
    kept = tmp_path / "kept.json"
    kept.write_text("before\n")
    inode = os.stat(kept).st_ino
    with OutputPlan() as plan:
        plan.add_all([kept, tmp_path / "new.csv", full])
        write_output(kept, "after\n")
        write_output(tmp_path / "new.csv", "a\n")
        write_output(full, "x" * 10)
        with pytest.raises(InputError, match=f"cannot write {full}: No space left"):
            plan.commit()
    assert kept.read_text() == "before\n" and os.stat(kept).st_ino == inode
    assert sorted(os.listdir(tmp_path)) == ["full", "kept.json"]


def test_abandoned_plan_writes_nothing_and_runs_its_hooks(tmp_path):
    hooks = []
    with pytest.raises(RuntimeError):
        with OutputPlan() as plan:
            plan.on_abort(lambda: hooks.append("undone"))
            write_output(tmp_path / "a.txt", "never\n")
            raise RuntimeError("the computation failed")
    assert hooks == ["undone"] and os.listdir(tmp_path) == []


def test_record_annotates_json_and_csv(tmp_path):
    data = tmp_path / "in.pdb"
    data.write_bytes(b"ATOM\n")
    record = RunRecord(
        ["profile", str(data)], {"step_A": 0.2, "path": tmp_path}, [data], quiet=True
    )
    record.warn("first   line\nwrapped")
    record.warn("first line wrapped")  # the same line once
    doc = json.loads(record.annotate("json", "", {"warnings": ["own"], "x": 1}))
    assert doc["warnings"] == ["own", "first line wrapped"]
    assert doc["provenance"]["options"] == {"step_A": 0.2, "path": str(tmp_path)}
    expected = hashlib.sha256(b"ATOM\n").hexdigest()
    assert doc["provenance"]["input_sha256"] == {str(data): expected}
    text = record.annotate("csv", "a,b\n1,2\n")
    assert text.splitlines()[-2:] == ["a,b", "1,2"]
    assert "# warning: first line wrapped" in text.splitlines()
    assert json_safe({"v": float("inf"), "t": (1, "x")}) == {"v": None, "t": [1, "x"]}


def test_link_into_a_missing_folder_names_where_it_points(tmp_path):
    os.symlink("gone/out.json", tmp_path / "link.json")
    with pytest.raises(
        InputError, match=r"link\.json: it links into folder .*gone, which does not"
    ):
        check_output_path(tmp_path / "link.json")
