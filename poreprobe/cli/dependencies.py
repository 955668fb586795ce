"""Options that only make sense together with another one.

An option given where it cannot act (``--axis-point`` with the symmetry axis,
``--dpi`` without ``--figure``) is an error with one line naming both options,
never silently ignored. What counts is what the user typed: :func:`given_options`
reads it off the command line (the parsers take no abbreviations), so an option
left at its default is never blamed.
"""

from __future__ import annotations

import argparse
from collections.abc import Callable
from dataclasses import dataclass

from poreprobe.errors import InputError


@dataclass(frozen=True)
class Needs:
    """Option ``dest`` acts only when ``holds(args)``; ``what`` says what it needs."""

    dest: str
    what: str
    holds: Callable[[argparse.Namespace], bool]


def _figure(args) -> bool:
    return bool(getattr(args, "figure", None))


def _not_serial(args) -> bool:
    return args.backend != "serial" or bool(getattr(args, "scheduler", None))


_AXIS_USER = ("auto", "user")
_AXIS_SELECTIONS = ("auto", "selections")

#: Every rule, for every command that has the option.
RULES: tuple[Needs, ...] = (
    Needs(
        "axis_point",
        "--axis-direction (a user axis)",
        lambda a: a.axis_direction is not None and a.axis_method in _AXIS_USER,
    ),
    Needs(
        "axis_direction",
        "--axis-method user or auto",
        lambda a: a.axis_method in _AXIS_USER and a.axis_selections is None,
    ),
    Needs(
        "axis_selections",
        "--axis-method selections or auto",
        lambda a: a.axis_method in _AXIS_SELECTIONS,
    ),
    Needs("figure_kind", "--figure", _figure),
    Needs("dpi", "--figure", _figure),
    Needs("width_mm", "--figure", _figure),
    Needs("height_mm", "--figure", _figure),
    Needs("figure_ion", "--figure", _figure),
    Needs("figure_ion_radii", "--figure-ion", lambda a: bool(a.figure_ion)),
    Needs("workers", "--backend multiprocessing or dask", _not_serial),
    Needs("parts", "--backend multiprocessing or dask", _not_serial),
    Needs("conc_sd_mM", "--conc-mM", lambda a: a.conc_mM is not None),
    Needs(
        "diffusion_sd_m2_per_s",
        "--diffusion-m2-per-s",
        lambda a: a.diffusion_m2_per_s is not None,
    ),
    Needs(
        "relative_viscosity_sd",
        "--relative-viscosity or --viscogen",
        lambda a: a.relative_viscosity is not None or a.viscogen is not None,
    ),
    Needs("map_field", "--map", lambda a: bool(a.map)),
    Needs("mesh_colors", "--mesh", lambda a: bool(a.mesh)),
    Needs("radius_range_A", "--mesh", lambda a: bool(a.mesh)),
    Needs("lining_distance_A", "--centerline", lambda a: bool(getattr(a, "centerline", True))),
    Needs("chemistry_csv", "the chemistry (drop --no-chemistry)", lambda a: not a.no_chemistry),
    Needs("ion", "--check", lambda a: getattr(a, "check", True) is not False),
    Needs("error_source", "--ensemble", lambda a: bool(a.ensemble)),
    Needs(
        "coordinate_error_A",
        "--error-source uniform",
        lambda a: bool(a.ensemble) and a.error_source == "uniform",
    ),
)


def _resolution_source(args) -> bool:
    return bool(getattr(args, "ensemble", 0)) and args.error_source == "resolution"


#: Rules of one command only: (command, rule).
COMMAND_RULES: tuple[tuple[str, Needs], ...] = (
    (
        "resistance",
        Needs(
            "conc_mM",
            "--electrolyte, not --conductivity-S-m or --resistivity-ohm-m",
            lambda a: a.conductivity_S_m is None and a.resistivity_ohm_m is None,
        ),
    ),
    ("export", Needs("probe_radius_A", "--mesh", lambda a: bool(a.mesh))),
    *(
        ("check", Needs(dest, "--density-map", lambda a: bool(a.density_map)))
        for dest in ("contour", "lumen_margin_A", "min_support")
    ),
    (
        "check",
        Needs(
            "resolution_A",
            "--density-map or --error-source resolution",
            lambda a: bool(a.density_map) or _resolution_source(a),
        ),
    ),
    *(
        (command, Needs("resolution_A", "--error-source resolution", _resolution_source))
        for command in ("profile", "scan", "match", "report")
    ),
    *(
        (command, Needs("seed", "--ensemble", lambda a: bool(a.ensemble)))
        for command in ("profile", "scan", "check", "report")
    ),
    ("report", Needs("current_sd_pA", "--current-pA", lambda a: a.current_pA is not None)),
    ("export", Needs("entry_end", "--map with --map-field reach", lambda a: bool(a.map))),
    *(
        ("traj", Needs(dest, "--probe-radius-A", lambda a: a.probe_radius_A is not None))
        for dest in ("entry_end", "spacing_A", "search_radius_A")
    ),
    *(
        ("batch", Needs(dest, "--probe-radii-A", lambda a: a.probe_radii_A is not None))
        for dest in ("entry_end", "spacing_A", "search_radius_A")
    ),
    *(
        ("match", Needs(dest, "STRUCTURE", lambda a: a.structure is not None))
        for dest in (
            "probe_radii_A",
            "entry_end",
            "spacing_A",
            "search_radius_A",
            "trajectory",
            "model",
            "frame",
            "select",
            "axis_method",
            "entry",
        )
    ),
)


def given_options(parser: argparse.ArgumentParser, argv: list[str]) -> dict[str, str]:
    """The options typed on the command line: ``{dest: option string}``.

    ``parser`` is the command's own sub-parser; ``argv`` the words after the
    command name. Values are not parsed here; words after ``--`` are ignored.
    """
    by_string = {}
    for action in parser._actions:  # argparse offers no public view of its options
        for text in action.option_strings:
            by_string[text] = action.dest
    given = {}
    for word in argv:
        if word == "--":
            break
        text = word.split("=", 1)[0]
        if text in by_string:
            given[by_string[text]] = text
    return given


def check_dependent_options(command: str, args: argparse.Namespace, given: dict[str, str]) -> None:
    """Raise InputError for the first given option whose partner is missing.

    Parameters
    ----------
    command : str
        The command's name (for the command-specific rules).
    args : argparse.Namespace
        The parsed options.
    given : dict
        ``{dest: option string}`` from :func:`given_options`.
    """
    rules = RULES + tuple(rule for name, rule in COMMAND_RULES if name == command)
    for rule in rules:
        if rule.dest in given and not rule.holds(args):
            raise InputError(f"{given[rule.dest]} needs {rule.what}")
