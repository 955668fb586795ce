"""Costs of the safety nets: stray atoms, the output plan and Ctrl-C.

Prints, for the invented demo channel (``structures_demo/demo_channel.pdb``, 2,220 atoms):

* wall time and peak memory (max RSS of a fresh ``poreprobe profile`` process) of the
  clean model and of copies with one and two stray atoms thousands of Å away, which
  the reader ignores with a warning (``poreprobe.io.sanity.drop_far_atoms``);
* the time of the output plan's commit for ``--json`` + ``--csv`` + ``--figure`` (temporary
  files, renames, provenance with the input's SHA-256), from inside one process;
* how long ``poreprobe traj`` (serial) takes to exit after SIGINT.

Run: python benchmarks/bench_hostile.py
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import tempfile
import time

from poreprobe.demo.run import demo_path
from poreprobe.io.structure import read_structure
from poreprobe.io.structure_writer import write_structure

CLI = [sys.executable, "-m", "poreprobe.cli.main"]


def run_measured(cmd: list[str]) -> tuple[float, float]:
    """Wall time (s) and peak RSS (MiB) of one fresh process (run alone, after the others)."""
    t0 = time.perf_counter()
    pid = os.fork()
    if pid == 0:  # the child: become the command, so ru_maxrss is its own
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, 1)
        os.dup2(devnull, 2)
        os.execv(cmd[0], cmd)
    _, status, usage = os.wait4(pid, 0)
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"failed: {' '.join(cmd)}")
    return time.perf_counter() - t0, usage.ru_maxrss / 1024.0


def stray_models(folder: str) -> dict[str, str]:
    atoms = read_structure(demo_path("demo_channel", "pdb"))
    out = {"clean": os.path.join(folder, "clean.pdb")}
    write_structure(atoms, out["clean"])
    for n in (1, 2):
        coords = atoms.coords_A.copy()
        coords[100] = [9000.0, 9000.0, 9000.0]
        if n == 2:
            coords[200] = [-9000.0, 9000.0, -9000.0]
        out[f"{n} stray"] = os.path.join(folder, f"stray{n}.pdb")
        write_structure(atoms.with_coords(coords), out[f"{n} stray"])
    return out


def commit_time_s(folder: str) -> float:
    """Seconds spent in OutputPlan.commit for JSON + CSV + PNG (in this process)."""
    from poreprobe.cli.main import main
    from poreprobe.io import writer

    spent = []
    original = writer.OutputPlan.commit

    def timed(self):
        t0 = time.perf_counter()
        original(self)
        spent.append(time.perf_counter() - t0)

    writer.OutputPlan.commit = timed
    try:
        out = os.path.join(folder, "out")
        main(
            [
                "profile",
                demo_path("demo_channel", "pdb"),
                "--quiet",
                "--json",
                out + ".json",
                "--csv",
                out + ".csv",
                "--figure",
                out + ".png",
            ]
        )
    finally:
        writer.OutputPlan.commit = original
    return spent[-1]


def sigint_exit_s(folder: str) -> float:
    cmd = [
        *CLI,
        "traj",
        demo_path("demo_channel", "pdb"),
        "--trajectory",
        demo_path("demo_breathing"),
        "--json",
        os.path.join(folder, "t.json"),
    ]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    time.sleep(3.0)  # well into the frames
    t0 = time.perf_counter()
    proc.send_signal(signal.SIGINT)
    code = proc.wait(timeout=60)
    if code != 130:
        raise SystemExit(f"traj exited {code} after SIGINT, expected 130")
    return time.perf_counter() - t0


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        models = stray_models(folder)
        print("profile of the demo channel (2,220 atoms), fresh process each:")
        for label, path in models.items():
            wall, rss = run_measured([*CLI, "profile", path, "--quiet"])
            print(f"  {label:8s}: {wall:5.2f} s wall, peak RSS {rss:6.0f} MiB")
        print(f"output plan commit (JSON + CSV + PNG, provenance): {commit_time_s(folder):.3f} s")
        print(f"traj (serial) exit after SIGINT: {sigint_exit_s(folder):.2f} s, exit status 130")


if __name__ == "__main__":
    main()
