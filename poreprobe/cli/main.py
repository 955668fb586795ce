"""Command-line interface: a thin layer over the Python API.

Each command lives in its own module ``poreprobe/cli/<name>.py`` exposing ``register(subparsers)``,
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

#: Every command: name -> (its module, the one-line summary ``poreprobe --help`` lists).
#: A command's module is imported only when that command runs or shows its help, so
#: ``poreprobe --help`` imports no computing code at all (tests/test_cli_startup.py
#: checks that each module's own summary is the one listed here).
COMMANDS = {
    "demo": ("poreprobe.cli.demo", "run the main job on the bundled invented demo channels"),
    "profile": ("poreprobe.cli.profile", "radius profile along the pore axis (Å)"),
    "scan": (
        "poreprobe.cli.scan",
        "probe-size scan: capture radius and accessible radius per probe (Å)",
    ),
    "match": (
        "poreprobe.cli.match",
        "capture radius of a diffusion-limited current (Å), optionally matched "
        "against a structure's probe-size scan",
    ),
    "resistance": (
        "poreprobe.cli.resistance",
        "series-resistance breakdown of the pore and its conductance (pS)",
    ),
    "check": (
        "poreprobe.cli.check",
        "is this model ready? lining residues, model checks, permeation verdict",
    ),
    "mapcheck": (
        "poreprobe.cli.mapcheck",
        "the model against its density map at the pore: unmodelled density, side-chain "
        "support, the pore radius in the map",
    ),
    "compare": (
        "poreprobe.cli.compare",
        "compare the pores of two or more models on one axial frame",
    ),
    "plot": ("poreprobe.cli.plot", "draw a figure (PNG, SVG or PDF) from saved JSON results"),
    "export": (
        "poreprobe.cli.export",
        "pore map (CCP4/MRC), surface and tube (PLY/OBJ/glTF), centre line (mmCIF) "
        "for molecular viewers",
    ),
    "traj": (
        "poreprobe.cli.traj",
        "radius profiles over trajectory frames or models, with statistics",
    ),
    "batch": ("poreprobe.cli.batch", "narrowest radius of many models, one summary table"),
    "report": (
        "poreprobe.cli.report",
        "one self-contained HTML report (and PDF) to share: provenance, checks, "
        "profile, scan, bench match, resistance, bands",
    ),
}


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose errors are one line and exit code 2.

    Options are never abbreviated: an option is the whole name the README's
    vocabulary table gives, and what the user typed can be read off the line
    (:func:`poreprobe.cli.dependencies.given_options`).
    """

    def __init__(self, *args, **kwargs):
        kwargs.setdefault("allow_abbrev", False)
        super().__init__(*args, **kwargs)

    def error(self, message):  # noqa: D102
        sys.stderr.write(f"poreprobe: error: {message}\n")
        raise SystemExit(2)


def build_parser(command: str | None = None) -> argparse.ArgumentParser:
    """The argument parser.

    Parameters
    ----------
    command : str, optional
        The command whose module is loaded and whose options are registered; the
        others appear only by name and summary. ``None`` (default) registers every
        command in full (what the documentation and tests walk).
    """
    parser = OneLineParser(
        prog="poreprobe",
        description="Ion-channel pore geometry from structural models. All numbers are "
        "model-based estimates (they depend on the radius set and the model).",
    )
    parser.add_argument("--version", action="version", version=f"poreprobe {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=OneLineParser)
    for name, (module, summary) in COMMANDS.items():
        if command is None or name == command:
            importlib.import_module(module).register(sub)
        else:
            sub.add_parser(name, help=summary, add_help=False)
    return parser


def _subparsers(parser: argparse.ArgumentParser) -> argparse._SubParsersAction:
    """The sub-parsers action of the top-level parser (argparse keeps it private)."""
    return next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))


def _command_in(argv: list[str]) -> str:
    """The command named on the command line ('' when none is: top-level help or usage)."""
    for word in argv:
        if not word.startswith("-"):
            return word if word in COMMANDS else ""
    return ""


def main(argv=None) -> int:
    """Run the command line; returns the exit code (130 after Ctrl-C)."""
    try:
        return _main(list(sys.argv[1:] if argv is None else argv))
    except KeyboardInterrupt:
        return _interrupted()


def _main(argv: list[str]) -> int:
    parser = build_parser(_command_in(argv))
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help, --version, or a one-line usage error
        return int(exc.code or 0)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    args.argv = argv  # the words as given (a report records its command line)
    from poreprobe.cli.dependencies import given_options

    command_parser = _subparsers(parser).choices[args.command]
    args.given = given_options(command_parser, argv[argv.index(args.command) + 1 :])
    # MDAnalysis logs optional-dependency notices on import; keep stderr to our own lines
    logging.getLogger("MDAnalysis").setLevel(logging.ERROR)
    return _run(args, argv)


def _run(args: argparse.Namespace, argv: list[str]) -> int:
    """Run one parsed command inside its output plan; errors become one line."""
    from poreprobe.cli.outputs import input_paths
    from poreprobe.io.provenance import RunRecord

    record = RunRecord(
        argv, vars(args), input_paths(args), quiet=bool(getattr(args, "quiet", False))
    )
    # broken readers of damaged files complain from __del__; the error line says it all
    old_hook, sys.unraisablehook = sys.unraisablehook, _ignore_unraisable
    log_handler = record.log_handler()  # logged warnings join the same collector
    logging.getLogger().addHandler(log_handler)
    try:
        with warnings.catch_warnings():
            warnings.showwarning = record.show_warning
            return _run_planned(args, record)
    finally:
        logging.getLogger().removeHandler(log_handler)
        sys.unraisablehook = old_hook


def _run_planned(args: argparse.Namespace, record) -> int:
    from poreprobe.cli.dependencies import check_dependent_options
    from poreprobe.cli.outputs import plan_outputs

    try:
        check_dependent_options(args.command, args, args.given)
        with plan_outputs(args, annotate=record.annotate) as plan:
            code = int(args.func(args) or 0)
            plan.commit()
        return code
    except PoreprobeError as exc:
        _error(str(exc))
        return 2
    except OSError as exc:
        _error(f"{exc.strerror or exc}: {exc.filename or ''}".rstrip(": "))
        return 2
    except KeyboardInterrupt:
        return _interrupted()


def _interrupted() -> int:
    """Ctrl-C: one line, exit status 130 (128 + SIGINT), nothing written."""
    _close_progress_bars()
    sys.stderr.write("poreprobe: interrupted\n")
    return 130


def _close_progress_bars() -> None:
    """Clear progress bars still on the terminal, so our line starts a clean line."""
    tqdm_module = sys.modules.get("tqdm")
    if tqdm_module is None:
        return
    for bar in list(getattr(tqdm_module.tqdm, "_instances", ())):
        try:
            bar.close()
        except Exception:  # noqa: BLE001 - a bar that cannot close is left as it is
            pass
    try:
        if sys.stderr.isatty():  # a bar caught half-drawn: back to the line start, erase it
            sys.stderr.write("\r\033[K")
    except (OSError, ValueError):
        pass


def _ignore_unraisable(unraisable) -> None:
    """Silence 'Exception ignored in ...' reports (garbage-collected broken readers)."""


def _error(message: str) -> None:
    """One line on stderr, whatever the message holds."""
    text = " ".join(str(message).split()) or "unknown error"
    _close_progress_bars()
    sys.stderr.write(f"poreprobe: error: {text}\n")


if __name__ == "__main__":  # pragma: no cover
    raise SystemExit(main())
