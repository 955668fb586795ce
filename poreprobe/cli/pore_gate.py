"""Commands stop with one line (exit status 0) when the model encloses no pore.

See :mod:`poreprobe.geometry.pore_presence` for the criterion. A model without a
pore is a result, not an error: the command prints one line, writes its JSON (if
asked) with ``"pore_found": false`` and ``"min_radius_A": null``, and exits with 0.
"""

from __future__ import annotations

import argparse


class NoPoreFound(Exception):  # noqa: N818 (a result, not an error)
    """Raised inside a command when the model encloses no pore (caught by ``main``).

    Attributes
    ----------
    line : str
        The one line the command prints.
    result : dict
        The JSON the command writes.
    """

    def __init__(self, line: str, result: dict):
        super().__init__(line)
        self.line = line
        self.result = result


def require_pore(args: argparse.Namespace, atoms, radii_A, axis, prof=None, radius_set=""):
    """The model's :class:`PorePresence`; raise :class:`NoPoreFound` when it has no pore.

    ``prof`` is the command's own radius profile when it has one; otherwise a profile
    with planes every 0.5 Å is computed for the decision. An axis the user gave
    (point and direction, or two selections) is not tested.
    """
    from poreprobe._version import __version__
    from poreprobe.geometry.pore_presence import applies_to, pore_presence, presence_not_tested

    if not applies_to(axis):
        return presence_not_tested("the axis was given by the user")
    if prof is None:
        from poreprobe.geometry.profile import radius_profile

        prof = radius_profile(
            atoms,
            axis,
            radii_A=radii_A,
            step_A=0.5,
            margin_A=getattr(args, "margin_A", 2.0),
            max_radius_A=getattr(args, "max_radius_A", 20.0),
        )
    presence = pore_presence(prof, atoms.coords_A, radii_A)
    if presence.pore_found:
        return presence
    result = {
        "version": __version__,
        "source": atoms.source,
        "caveat": "model-based estimates, not measurements",
        "pore_found": False,
        "min_radius_A": None,
        "min_s_A": None,
        "pore_presence": presence.to_dict(),
        "radius_set": radius_set or getattr(prof, "radius_set", ""),
        "axis": axis.to_dict(),
        "assembly": None if atoms.assembly is None else atoms.assembly.to_dict(),
    }
    raise NoPoreFound(f"{atoms.source}: {presence.message()}", result)


def report_no_pore(args: argparse.Namespace, exc: NoPoreFound) -> int:
    """Write the JSON (if asked), print the one line, return exit status 0."""
    from poreprobe.cli.common import say

    if getattr(args, "json", None):
        from poreprobe.io.export import to_json

        to_json(exc.result, args.json)
    say(args, exc.line)
    return 0
