"""Start-up cost of the command line, as ratios to importing poreprobe's core libraries.

Each figure is the median wall time of fresh interpreters, measured in one run and
interleaved so that a busy machine slows every case alike:

* ``base``: ``python -c "import gemmi, numpy, scipy.spatial"`` (the libraries every
  command needs);
* ``poreprobe --help`` and ``poreprobe COMMAND --help`` for every command;
* ``poreprobe profile`` of an invented 12,000-atom channel
  (``poreprobe.geometry.synthetic.shell_channel``), imports and computation together;
* ``poreprobe profile`` of a real channel of about that size: GLIC, PDB 6F7A (11,682
  atoms; Zabara et al. 2018, Nat. Commun. 9:544), from ``tests/data``.

Targets: ``--help`` at most 1.3 x base; the 12,000-atom profile at most 2 x base.

Run: python benchmarks/bench_startup.py [--repeat N]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time

from poreprobe.cli.main import COMMANDS
from poreprobe.geometry import synthetic
from poreprobe.io.structure_writer import write_structure

CLI = [sys.executable, "-m", "poreprobe"]
HELP_TARGET = 1.3
PROFILE_TARGET = 2.0


def wall_s(cmd: list[str]) -> float:
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - t0


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7, help="interpreters per case (median)")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        model = os.path.join(tmp, "channel12k.pdb")
        write_structure(synthetic.shell_channel(12_000, seed=1), model)
        cases = {"base": [sys.executable, "-c", "import gemmi, numpy, scipy.spatial"]}
        cases["--help"] = [*CLI, "--help"]
        for name in COMMANDS:
            cases[f"{name} --help"] = [*CLI, name, "--help"]
        cases["profile 12k atoms"] = [*CLI, "profile", model, "--quiet"]
        glic = os.path.join(os.path.dirname(__file__), "..", "tests", "data", "6f7a.pdb.gz")
        if os.path.isfile(glic):
            cases["profile GLIC 6F7A"] = [*CLI, "profile", glic, "--quiet"]
        times: dict[str, list[float]] = {name: [] for name in cases}
        for _ in range(args.repeat):
            for name, cmd in cases.items():
                times[name].append(wall_s(cmd))
    median = {name: statistics.median(t) for name, t in times.items()}
    base = median["base"]
    print(f"{os.cpu_count()} cores; median of {args.repeat} fresh interpreters per case")
    print(f"{'case':<22} {'wall s':>7} {'x base':>7}  target")
    for name, t in median.items():
        target = ""
        if name == "--help":
            target = f"<= {HELP_TARGET:g}: {'met' if t / base <= HELP_TARGET else 'MISSED'}"
        elif name.startswith("profile ") and not name.endswith("--help"):
            target = f"<= {PROFILE_TARGET:g}: {'met' if t / base <= PROFILE_TARGET else 'MISSED'}"
        print(f"{name:<22} {t:7.3f} {t / base:7.2f}  {target}")


if __name__ == "__main__":
    main()
