"""Build the invented demo channels and write them into this folder (deterministic).

Run from anywhere: ``python structures_demo/build.py``. ``--check`` rebuilds into a
temporary folder and compares with the committed files byte for byte instead of
writing. The channel, HalK, is invented (see ``poreprobe/demo_channels.py``); no part
comes from a real structure or measurement.

Files: ``demo_channel`` (open state), ``demo_widened`` (the F73A entrance mutant) and
``demo_closed`` (closed state) as mmCIF and PDB, and ``demo_breathing.xtc``, 50 frames
of invented breathing motion of the open state (topology: ``demo_channel.pdb``). They
ship inside the package as ``poreprobe.demo_structures``.
"""

from __future__ import annotations

import argparse
import filecmp
import os
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))


def build(folder: str) -> list[str]:
    """Write every demo file into ``folder``; return the file names."""
    sys.path.insert(0, os.path.dirname(HERE))
    from poreprobe.demo.channels import write_demo_files

    return sorted(os.path.basename(p) for p in write_demo_files(folder).values())


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument(
        "--check", action="store_true", help="compare with the committed files instead of writing"
    )
    parser.add_argument(
        "--out", default=HERE, metavar="FOLDER", help="where to write (default: this folder)"
    )
    args = parser.parse_args(argv)
    if not args.check:
        print("wrote " + ", ".join(build(args.out)))
        return 0
    with tempfile.TemporaryDirectory() as tmp:
        names = build(tmp)
        same, differ, missing = filecmp.cmpfiles(HERE, tmp, names, shallow=False)
    if differ or missing:
        print("differ from a fresh build: " + ", ".join(differ + missing))
        return 1
    print("checked " + ", ".join(same))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
