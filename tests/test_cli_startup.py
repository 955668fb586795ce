"""The command line starts fast: help imports no heavy library, commands load lazily."""

import importlib
import json
import subprocess
import sys

import pytest

from poreprobe.cli.main import COMMANDS, build_parser

#: Libraries that cost a large share of a second or more to import; help must not load them.
HEAVY = ("matplotlib", "dask", "distributed", "MDAnalysis", "skimage", "scipy.signal")

_PROBE = """
import contextlib, io, json, sys
from poreprobe.cli.main import main
with contextlib.redirect_stdout(io.StringIO()):
    code = main(sys.argv[1:])
heavy = {heavy!r}
print(json.dumps([code, sorted(m for m in sys.modules if m in heavy)]))
"""


def loaded_after(argv: list[str]) -> tuple[int, list[str]]:
    """Exit code and the heavy modules a fresh interpreter holds after ``poreprobe ARGV``."""
    out = subprocess.run(
        [sys.executable, "-c", _PROBE.format(heavy=HEAVY), *argv],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
    code, heavy = json.loads(out.splitlines()[-1])
    return code, heavy


def test_top_level_help_imports_no_heavy_library():
    code, heavy = loaded_after(["--help"])
    assert code == 0
    assert heavy == []


@pytest.mark.parametrize("command", list(COMMANDS))
def test_command_help_imports_no_heavy_library(command):
    code, heavy = loaded_after([command, "--help"])
    assert code == 0
    assert heavy == []


def test_top_level_help_loads_no_command_module():
    out = subprocess.run(
        [
            sys.executable,
            "-c",
            "import contextlib, io, sys\n"
            "from poreprobe.cli.main import main\n"
            "with contextlib.redirect_stdout(io.StringIO()): main(['--help'])\n"
            "print(sorted(m for m in sys.modules if m.startswith('poreprobe.')))",
        ],
        check=True,
        capture_output=True,
        text=True,
    ).stdout
    loaded = eval(out.strip())  # a printed list of module names
    assert "poreprobe.cli.main" in loaded
    assert not [m for m in loaded if m.split(".")[1] in ("geometry", "bench", "checks")]


@pytest.mark.parametrize("command", list(COMMANDS))
def test_listed_summary_is_the_commands_own(command):
    """The summary ``poreprobe --help`` shows without loading a command is the one it registers."""
    module, summary = COMMANDS[command]
    importlib.import_module(module)
    full = build_parser()
    sub = next(a for a in full._actions if a.dest == "command")
    listed = {a.dest: a.help for a in sub._choices_actions}
    assert listed[command] == summary
