"""Progress bars: shown on a terminal, silent with ``quiet`` or when not a TTY."""

from __future__ import annotations

import sys


def progress(iterable=None, *, total: int | None = None, desc: str = "", quiet: bool = False):
    """Wrap ``iterable`` in a tqdm bar on stderr when it is a terminal."""
    from tqdm import tqdm

    disable = quiet or not sys.stderr.isatty()
    return tqdm(iterable, total=total, desc=desc, disable=disable, leave=False, file=sys.stderr)
