"""Ctrl-C on running commands: exit 130, one line, nothing written, no worker left.

Each command runs as a subprocess on a pseudo-terminal (so the progress bar shows);
SIGINT goes to the process once the bar appears.
"""

from __future__ import annotations

import fcntl
import os
import pty
import re
import select
import signal
import struct
import subprocess
import sys
import termios
import time
from pathlib import Path

import pytest
from _hostile import (
    DEMO,
    ROOT,
    snapshot,
)


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
