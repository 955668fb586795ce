"""One option vocabulary: the README's table against every command's parser.

Every option of every command is in the README's "Option vocabulary" table with the
commands that take it and its default; every option in the table exists. Options
that only act with another one are refused with one line naming both.
"""

from __future__ import annotations

import argparse
import re
from pathlib import Path

import pytest

from poreprobe.cli.main import build_parser, main

README = Path(__file__).resolve().parents[1] / "README.md"
UNIT_SUFFIXES = {"-A": "Å", "-mM": "mM", "-pA": "pA", "-mm": "mm", "-C": "°C"}


def _table() -> dict[str, dict]:
    text = README.read_text(encoding="utf-8")
    section = text.split("## Option vocabulary", 1)[1].split("\n## ", 1)[0]
    rows = {}
    for line in section.splitlines():
        m = re.match(r"\| `(--[\w-]+)` \| (.*?) \| (.*?) \| (.*?) \| (.*?) \|$", line)
        if m:
            option, meaning, unit, default, commands = m.groups()
            assert option not in rows, f"{option} twice in the table"
            rows[option] = {
                "meaning": meaning,
                "unit": unit,
                "default": default,
                "commands": [c.strip() for c in commands.split(",")],
            }
    return rows


def _shown(action: argparse.Action, value) -> str:
    if isinstance(action, argparse._StoreTrueAction | argparse._StoreFalseAction):
        return "off"
    if value is None:
        return "—"
    if isinstance(value, list | tuple):
        return " ".join(f"{v:g}" if isinstance(v, float) else str(v) for v in value)
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def _parsers() -> dict[str, dict[str, tuple[argparse.Action, object]]]:
    """{option: {command: (action, default)}} over every command."""
    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    options: dict[str, dict] = {}
    for command, sp in sub.choices.items():
        for action in sp._actions:
            if action.option_strings and action.dest != "help":
                assert len(action.option_strings) == 1, (
                    f"{command} {action.option_strings}: one name per option, no aliases"
                )
                options.setdefault(action.option_strings[0], {})[command] = (
                    action,
                    action.default,
                )
    return options


def test_every_option_is_in_the_table_with_its_commands_and_default():
    table, options = _table(), _parsers()
    assert set(table) == set(options), (
        f"missing from README: {sorted(set(options) - set(table))}; "
        f"not an option: {sorted(set(table) - set(options))}"
    )
    for option, per_command in options.items():
        row = table[option]
        assert row["commands"] == list(per_command), option
        assert row["meaning"] and row["meaning"] != "?", option
        shown = {c: _shown(a, d) for c, (a, d) in per_command.items()}
        main_default, *exceptions = row["default"].split("; ")
        expected = dict.fromkeys(per_command, main_default)
        for item in exceptions:
            commands, value = item.rsplit(": ", 1)
            for command in commands.split(", "):
                expected[command] = value
        assert shown == expected, option


def test_one_name_per_concept():
    """The same destination never hides behind two spellings, and unit suffixes match."""
    options = _parsers()
    dests: dict[str, str] = {}
    for option, per_command in options.items():
        for action, _ in per_command.values():
            assert dests.setdefault(action.dest, option) == option, action.dest
    table = _table()
    for option, row in table.items():
        for suffix, unit in UNIT_SUFFIXES.items():
            if option.endswith(suffix):
                assert row["unit"] == unit, option


@pytest.mark.parametrize(
    "argv, message",
    [
        (["profile", "{pdb}", "--dpi", "100"], "--dpi needs --figure"),
        (["profile", "{pdb}", "--axis-point", "0", "0", "0"], "--axis-point needs"),
        (
            ["profile", "{pdb}", "--axis-method", "symmetry", "--axis-direction", "0", "0", "1"],
            "--axis-direction needs --axis-method user or auto",
        ),
        (["scan", "{pdb}", "--figure-kind", "capture"], "--figure-kind needs --figure"),
        (["traj", "{pdb}", "--workers", "2"], "--workers needs --backend multiprocessing or dask"),
        (["traj", "{pdb}", "--spacing-A", "0.4"], "--spacing-A needs --probe-radius-A"),
        (["batch", "{pdb}", "--entry-end", "high"], "--entry-end needs --probe-radii-A"),
        (["batch", "{pdb}", "--ion", "Na"], "--ion needs --check"),
        (["export", "{pdb}", "--centerline", "{out}.cif", "--map-field", "clearance"], "--map"),
        (["match", "--current-pA", "5", "--conc-mM", "150", "--probe-radii-A", "1:2"], "STRUCTURE"),
        (
            ["resistance", "{pdb}", "--resistivity-ohm-m", "0.8", "--conc-mM", "100"],
            "--conc-mM needs --electrolyte",
        ),
        (["profile", "{pdb}", "--figure-ion-radii", "crystal"], "needs --figure-ion"),
    ],
)
def test_dependent_option_without_its_partner_is_one_line(tmp_path, capsys, argv, message):
    from poreprobe.demo.run import demo_path

    fill = {"pdb": str(demo_path("demo_channel", "pdb")), "out": str(tmp_path / "x")}
    assert main([word.format(**fill) for word in argv] + ["--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error: ") and message in err[0]
    assert not list(tmp_path.iterdir())


def test_abbreviations_are_refused(capsys):
    from poreprobe.demo.run import demo_path

    assert main(["profile", str(demo_path("demo_channel", "pdb")), "--step", "0.5"]) == 2
    assert "unrecognized arguments: --step" in capsys.readouterr().err
