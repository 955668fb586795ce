"""The density map at the pore: two panels on one s axis.

Top: the model's radius profile and the map's (largest density-free sphere per plane at
the contour), with the expected band of their difference shaded around the model
profile and the unmodelled blobs marked at their s and distance from the axis (marker
area proportional to volume). Bottom: the map value on the centre line in RMS units,
with the contour. Drawn from a :class:`~poreprobe.density.mapcheck.MapCheck` or its JSON
(the ``density_map`` object of ``check``, or the whole ``mapcheck`` JSON).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import as_result_dict
from poreprobe.figures.style import (
    BAND_EDGE_COLOR,
    BAND_GREYS,
    FONT_PT,
    LINE_COLORS,
    LINE_PT,
    RADIUS_LABEL,
    S_LABEL,
    SMALL_FONT_PT,
    finish_axes,
    new_figure,
)

#: Default height of the two-panel figure (mm); one journal column wide.
MAP_HEIGHT_MM = 90.0


def _map_dict(result) -> dict:
    d = as_result_dict(result, "map check")
    if "density_map" in d and isinstance(d["density_map"], Mapping):
        d = dict(d["density_map"])
    if "profile" not in d or "map_radius_A" not in d.get("profile", {}):
        raise InputError("the result holds no map check (mapcheck JSON, or check with a map)")
    return d


def _array(values) -> np.ndarray:
    return np.array([np.nan if v is None else v for v in values], dtype=float)


def plot_map_check(result, *, width_mm: float | None = None, height_mm: float | None = None):
    """Draw the map check figure (module docstring); returns the Figure."""
    d = _map_dict(result)
    prof = d["profile"]
    s = _array(prof["s_A"])
    model_r = _array(prof["model_radius_A"])
    map_r = _array(prof["map_radius_A"])
    centre = _array(prof["centre_line_rms"])
    lo, hi = d.get("radius_band_A", (np.nan, np.nan))
    fig, ax = new_figure(width_mm=width_mm, height_mm=height_mm or MAP_HEIGHT_MM)
    fig.clear()
    top, bottom = fig.subplots(2, 1, sharex=True, height_ratios=(3, 2))
    colors = LINE_COLORS
    top.fill_between(
        s, model_r + lo, model_r + hi, color=BAND_GREYS[1], lw=0, label="expected band"
    )
    top.plot(s, model_r, color=colors[0], lw=LINE_PT, label="model")
    top.plot(s, map_r, color=colors[1], lw=LINE_PT, ls="--", label="map, at contour")
    blobs = d.get("blobs", [])
    if blobs:
        vol = np.array([b["volume_A3"] for b in blobs], dtype=float)
        top.scatter(
            [b["s_A"] for b in blobs],
            [b["radial_A"] for b in blobs],
            s=np.clip(vol, 4, 400) / 4.0,
            facecolor="none",
            edgecolor=colors[2],
            lw=0.8,
            label="unmodelled density",
            zorder=5,
        )
    top.set_ylabel(RADIUS_LABEL, fontsize=FONT_PT)
    top.set_ylim(bottom=0)
    top.legend(fontsize=SMALL_FONT_PT, frameon=False, loc="upper right")
    bottom.plot(s, centre, color=colors[0], lw=LINE_PT)
    contour = d.get("contour")
    info = d.get("map", {})
    if contour is not None and info.get("rms"):
        level = (contour - info["mean"]) / info["rms"]
        bottom.axhline(level, color=BAND_EDGE_COLOR, lw=0.6, ls=":", label="contour")
        bottom.legend(fontsize=SMALL_FONT_PT, frameon=False, loc="upper right")
    bottom.set_ylabel("Map on centre line (RMS)", fontsize=FONT_PT)
    bottom.set_xlabel(S_LABEL, fontsize=FONT_PT)
    for a in (top, bottom):
        finish_axes(a)
    top.set_title(
        f"model vs map (d = {d.get('resolution_A', float('nan')):g} Å); model-based estimates",
        fontsize=SMALL_FONT_PT,
    )
    return fig
