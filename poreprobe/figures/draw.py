"""One figure kind from result JSON dictionaries (what ``poreprobe plot`` draws)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from poreprobe._validate import check_choice
from poreprobe.errors import InputError
from poreprobe.figures.capture_plot import match_arrays, plot_capture
from poreprobe.figures.data import as_result_dict, is_trajectory
from poreprobe.figures.kinds import FIGURE_KINDS
from poreprobe.figures.kymograph_plot import plot_kymograph
from poreprobe.figures.overlay_plot import plot_overlay
from poreprobe.figures.probes_plot import plot_probes
from poreprobe.figures.profile_plot import plot_profile
from poreprobe.figures.resistance_plot import plot_resistance


def _classify(results: Sequence[dict]) -> dict[str, list[dict]]:
    kinds: dict[str, list[dict]] = {
        "profile": [],
        "trajectory": [],
        "scan": [],
        "match": [],
        "resistance": [],
        "check": [],
    }
    for d in results:
        if "per_frame" in d and is_trajectory(d):  # before scan: it may carry a capture block
            kinds["trajectory"].append(d)
        elif "segments" in d and "conductance_pS" in d:
            kinds["resistance"].append(d)
        elif isinstance(d.get("capture"), Mapping) and "probe_radius_A" in d["capture"]:
            kinds["scan"].append(d)
        elif "capture_radius_A" in d and (
            "capture_radius_sd_A" in d or "probe_radius_A_intervals" in d
        ):
            kinds["match"].append(d)
        elif "constrictions" in d or "lining" in d:
            kinds["check"].append(d)
        elif "profile" in d:
            kinds["profile"].append(d)
        elif is_trajectory(d):
            kinds["trajectory"].append(d)
        else:
            raise InputError(
                "cannot tell which poreprobe command wrote this JSON "
                f"(keys: {', '.join(list(d)[:8])})"
            )
    return kinds


def _one(items: list, what: str, kind: str):
    if len(items) != 1:
        raise InputError(f"figure {kind!r} needs exactly one {what} JSON, got {len(items)}")
    return items[0]


def _constrictions_from_check(check: Mapping) -> list[dict] | None:
    """The check command's constrictions (s_A, radius_A, residues, prominence_A)."""
    items = check.get("constrictions")
    if not items:
        return None
    try:
        return [
            {
                "s_A": float(c["s_A"]),
                "radius_A": float(c["radius_A"]),
                "residues": [str(r) for r in c.get("residues") or ()],
                "prominence_A": c.get("prominence_A"),
            }
            for c in items
        ]
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(f"check JSON: every constriction needs s_A and radius_A ({exc})") from exc


def draw_figure(
    kind: str,
    results: Sequence,
    *,
    width_mm: float | None = None,
    height_mm: float | None = None,
    ion_radii: Sequence[tuple[str, float]] = (),
    labels: Sequence[str] | None = None,
    band: bool = False,
):
    """Draw one figure kind from result JSON dictionaries (what ``poreprobe plot`` does).

    Parameters
    ----------
    kind : {"profile", "overlay", "probes", "capture", "resistance", "kymograph"}
    results : sequence of dict or result objects
        ``profile``: one profile (plus optionally one check result with
        ``constrictions``); ``overlay``: profiles and/or trajectories; ``probes``:
        one scan; ``capture``: one scan, optionally one match; ``resistance``: one
        resistance result; ``kymograph``: one trajectory.
    ion_radii : sequence of (label, radius_A)
        Reference bands (profile, overlay, probes) or lines (capture).
    labels, band
        Passed to :func:`plot_overlay`.

    Returns
    -------
    Axes
    """
    kind = check_choice(kind, "kind", FIGURE_KINDS)
    dicts = [as_result_dict(r, f"input {k + 1}") for k, r in enumerate(results)]
    if not dicts:
        raise InputError(f"figure {kind!r} needs at least one input")
    groups = _classify(dicts)
    size = {"width_mm": width_mm, "height_mm": height_mm}
    if kind == "profile":
        if len(groups["check"]) > 1:
            raise InputError("figure 'profile' takes at most one check JSON")
        check = groups["check"][0] if groups["check"] else None
        # a check result carries its own profile: it can stand alone
        profile = (
            check
            if check is not None and not groups["profile"] and "profile" in check
            else _one(groups["profile"], "profile", kind)
        )
        return plot_profile(
            profile,
            ion_radii=ion_radii,
            constrictions=_constrictions_from_check(check) if check else None,
            **size,
        )
    if kind == "overlay":
        return plot_overlay(dicts, labels=labels, band=band, ion_radii=ion_radii, **size)
    if kind == "probes":
        return plot_probes(_one(groups["scan"], "scan", kind), ion_radii=ion_radii, **size)
    if kind == "capture":
        if len(groups["match"]) > 1:
            raise InputError("figure 'capture' takes at most one match JSON")
        match = groups["match"][0] if groups["match"] else None
        if not groups["scan"] and match is not None and match_arrays(match)["has_curve"]:
            scan = None  # the match carries the curve it matched
        else:
            scan = _one(groups["scan"], "scan", kind)
        return plot_capture(scan, match=match, ion_radii=ion_radii, **size)
    if kind == "resistance":
        return plot_resistance(_one(groups["resistance"], "resistance", kind), **size)
    return plot_kymograph(_one(groups["trajectory"], "trajectory", kind), **size)
