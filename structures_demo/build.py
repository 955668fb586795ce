"""Write the invented demo models into this folder, byte for byte reproducibly.

Run from the repository root::

    python structures_demo/build.py

It writes, for the invented HalK channel of :mod:`poreprobe.demo`,

* ``demo_channel.pdb`` / ``.cif``: the open state;
* ``demo_channel_widened.pdb`` / ``.cif``: the F73A widened-entrance mutant;
* ``demo_channel_closed.pdb`` / ``.cif``: the closed state;
* ``demo_channel_breathing.xtc``: 50 frames of invented breathing motion of the
  open state (topology: ``demo_channel.pdb``).

The numbers are formatted with fixed precision and no dates, so running this
script again reproduces the committed files exactly (the test suite checks it).
The models are invented and carry no experimental information.
"""

from __future__ import annotations

import os
import sys


def main(folder: str | None = None) -> dict[str, str]:
    """Build the demo files into ``folder`` (default: the folder of this script)."""
    here = os.path.dirname(os.path.abspath(__file__))
    sys.path.insert(0, os.path.dirname(here))
    from poreprobe.demo import write_demo_files

    return write_demo_files(folder or here)


if __name__ == "__main__":
    for key, path in main(sys.argv[1] if len(sys.argv) > 1 else None).items():
        print(f"{key:12s} {os.path.relpath(path)}")
