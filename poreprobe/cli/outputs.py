"""Which options name files: the inputs a command reads and the outputs it writes.

Options declare their role through their argparse ``type``: :class:`OutputPath`
(a file the command writes), :class:`OutputFolder` (a folder it fills) and
:class:`InputPath` (a file it reads). :func:`plan_outputs` gathers the outputs of a
parsed command line into an :class:`~poreprobe.io.writer.OutputPlan` before any
work is done, so a bad output path fails in a second, not after the computation,
and all outputs are written together at the end.
"""

from __future__ import annotations

import argparse
import glob
import os

from poreprobe.errors import InputError
from poreprobe.io.writer import OutputPlan

_GLOB_CHARS = frozenset("*?[")


class OutputPath(str):
    """A file a command writes (argparse ``type``)."""

    __slots__ = ()


class OutputFolder(str):
    """A folder a command creates or fills (argparse ``type``)."""

    __slots__ = ()


class InputPath(str):
    """A file a command reads (argparse ``type``); may be a glob pattern for ``batch``."""

    __slots__ = ()


def _values(args: argparse.Namespace, kind: type) -> list[str]:
    out: list[str] = []
    for value in vars(args).values():
        items = value if isinstance(value, list | tuple) else [value]
        out.extend(str(v) for v in items if isinstance(v, kind))
    return out


def output_paths(args: argparse.Namespace) -> list[str]:
    """The output files named on the command line, in option order."""
    return _values(args, OutputPath)


def input_paths(args: argparse.Namespace) -> list[str]:
    """The input files named on the command line, glob patterns expanded."""
    paths: list[str] = []
    for item in _values(args, InputPath):
        if _GLOB_CHARS & set(item) and not os.path.exists(item):
            paths.extend(sorted(glob.glob(item, recursive=True)))
        else:
            paths.append(item)
    return list(dict.fromkeys(paths))


def check_inputs(args: argparse.Namespace) -> None:
    """Refuse an input that is a folder (one line naming it) before any work."""
    for path in _values(args, InputPath):
        if os.path.isdir(path):
            raise InputError(f"cannot read {path}: it is a directory, not a file")


def plan_outputs(args: argparse.Namespace, *, annotate=None) -> OutputPlan:
    """Check inputs and every output path of a parsed command line; the ready plan.

    Raises
    ------
    InputError
        An input is a folder, or an output cannot be written (see
        :func:`poreprobe.io.writer.check_output_path`), is the same file as an
        input, or two outputs name the same file.
    """
    check_inputs(args)
    plan = OutputPlan(input_paths(args), annotate=annotate)
    plan.add_all(output_paths(args))
    for folder in _values(args, OutputFolder):
        _plan_folder(plan, folder)
    return plan


def _plan_folder(plan: OutputPlan, folder: str) -> None:
    """Check an output folder; create it now and remove it again if the run fails."""
    if os.path.exists(folder) and not os.path.isdir(folder):
        raise InputError(f"cannot write into {folder}: it is not a folder")
    if os.path.isdir(folder):
        if not os.access(folder, os.W_OK | os.X_OK):
            raise InputError(f"cannot write into {folder}: the folder is read-only")
        return
    parent = os.path.dirname(os.path.abspath(folder))
    if not os.path.isdir(parent):
        raise InputError(f"cannot create {folder}: folder {parent} does not exist")
    try:
        os.mkdir(folder)
    except OSError as exc:
        raise InputError(f"cannot create {folder}: {exc.strerror or exc}") from None

    def remove_if_empty():
        if os.path.isdir(folder) and not os.listdir(folder):
            os.rmdir(folder)

    plan.on_abort(remove_if_empty)
