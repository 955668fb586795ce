"""Command-line interface: a thin layer over the Python API.

Each command lives in its own ``cli_<name>.py`` module exposing ``register(subparsers)``,
which adds a sub-parser whose ``func`` default takes the parsed arguments and returns
an exit code. Errors a user can cause become one line ``poreprobe: error: ...`` on
stderr and exit code 2.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import sys
import warnings

from poreprobe._version import __version__
from poreprobe.errors import PoreprobeError

#: Command modules, in the order ``poreprobe --help`` lists them.
COMMAND_MODULES = (
    "poreprobe.cli.demo",
    "poreprobe.cli.profile",
    "poreprobe.cli.scan",
    "poreprobe.cli.match",
    "poreprobe.cli.resistance",
    "poreprobe.cli.check",
    "poreprobe.cli.compare",
    "poreprobe.cli.plot",
    "poreprobe.cli.export",
    "poreprobe.cli.traj",
    "poreprobe.cli.batch",
)


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line and exit code 2."""

    def error(self, message):  # noqa: D102
        sys.stderr.write(f"poreprobe: error: {message}\n")
        raise SystemExit(2)


def _show_warning(message, category, filename, lineno, file=None, line=None):
    sys.stderr.write(f"poreprobe: warning: {message}\n")


def build_parser() -> argparse.ArgumentParser:
    """The full argument parser with every registered command."""
    parser = OneLineParser(
        prog="poreprobe",
        description="Ion-channel pore geometry from structural models. All numbers are "
        "model-based estimates (they depend on the radius set and the model).",
    )
    parser.add_argument("--version", action="version", version=f"poreprobe {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=OneLineParser)
    for name in COMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv=None) -> int:
    """Run the command line; returns the exit code."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help, --version, or a one-line usage error
        return int(exc.code or 0)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    logging.basicConfig(level=logging.WARNING, format="poreprobe: %(message)s")
    # MDAnalysis logs optional-dependency notices on import; keep stderr to our own lines
    logging.getLogger("MDAnalysis").setLevel(logging.ERROR)
    with warnings.catch_warnings():
        warnings.showwarning = _show_warning
        if getattr(args, "quiet", False):
            warnings.simplefilter("ignore")
        try:
            return int(args.func(args) or 0)
        except PoreprobeError as exc:
            sys.stderr.write(f"poreprobe: error: {exc}\n")
            return 2
        except OSError as exc:
            sys.stderr.write(f"poreprobe: error: {exc.strerror or exc}: {exc.filename or ''}\n")
            return 2


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
