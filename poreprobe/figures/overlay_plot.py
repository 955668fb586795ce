"""Several radius profiles (or trajectory means with a ± SD band) on one axis."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import (
    as_result_dict,
    is_trajectory,
    nan_mean_sd,
    profile_arrays,
    trajectory_arrays,
)
from poreprobe.figures.references import checked_references, draw_reference_bands
from poreprobe.figures.style import (
    LINE_COLORS,
    LINE_PT,
    LINE_STYLES,
    OKABE_ITO,
    RADIUS_LABEL,
    S_LABEL,
    axes_for,
    finish_axes,
    styled,
)


def common_grid(profiles: Sequence[dict]) -> tuple[np.ndarray, np.ndarray]:
    """Radii of several profiles interpolated onto one s grid (finest step, union range).

    Returns ``(s_A, radius_A)`` with ``radius_A`` of shape (n_profiles, n_levels);
    levels outside a profile's range, or next to an open plane, are NaN.
    """
    steps = [np.median(np.diff(p["s_A"])) for p in profiles if len(p["s_A"]) > 1]
    step = min(steps) if steps else 1.0
    lo = min(p["s_A"][0] for p in profiles)
    hi = max(p["s_A"][-1] for p in profiles)
    grid = lo + step * np.arange(int(np.floor((hi - lo) / step + 1e-9)) + 1)
    rows = []
    for p in profiles:
        rows.append(np.interp(grid, p["s_A"], p["radius_A"], left=np.nan, right=np.nan))
    return grid, np.array(rows)


@styled
def plot_overlay(
    results: Sequence,
    *,
    ax=None,
    labels: Sequence[str] | None = None,
    band: bool = False,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Several radius profiles on one axis, or a mean ± SD band.

    Parameters
    ----------
    results : sequence of RadiusProfile, profile JSON dicts or trajectory JSON dicts
        Profiles are drawn as lines (colour and dash pattern differ). A trajectory
        (``s_A`` and ``mean_radius_A``/``sd_radius_A`` or per-frame ``radius_A``) is
        drawn as its mean with a ± 1 SD band.
    labels : sequence of str, optional
        Legend labels, one per result (default: each result's source).
    band : bool
        Also draw the mean ± 1 SD over the profiles (interpolated onto a common
        s grid; needs at least two profiles).
    ion_radii : sequence of (label, radius_A)
        Reference radii drawn as labelled bands, as in :func:`plot_profile`.

    Returns
    -------
    Axes

    Notes
    -----
    Profiles are drawn in their own s coordinates: for different structures, put
    them on one axial frame first (same axis and origin).
    """
    if isinstance(results, Mapping) or hasattr(results, "to_dict"):
        results = [results]
    dicts = [as_result_dict(r, f"results[{k}]") for k, r in enumerate(results)]
    if not dicts:
        raise InputError("results must hold at least one profile or trajectory")
    if labels is not None and len(labels) != len(dicts):
        raise InputError(f"labels has {len(labels)} entries for {len(dicts)} results")
    ax = axes_for(ax, width_mm, height_mm)
    refs = checked_references(ion_radii)
    draw_reference_bands(ax, refs)
    profiles, lo, hi = [], np.inf, -np.inf
    top = max([v for _, v in refs], default=0.0)
    for k, d in enumerate(dicts):
        color = LINE_COLORS[k % len(LINE_COLORS)]
        name = labels[k] if labels is not None else (d.get("source") or f"result {k + 1}")
        if is_trajectory(d):
            t = trajectory_arrays(d)
            s, mean, sd = t["s_A"], t["mean_A"], t["sd_A"]
            ax.fill_between(
                s,
                mean - sd,
                mean + sd,
                color=color,
                alpha=0.3,
                linewidth=0,
                label=f"{name}: ± 1 SD",
                zorder=1,
            )
            ax.plot(
                s,
                mean,
                color=color,
                linestyle=LINE_STYLES[k % len(LINE_STYLES)],
                label=f"{name}: mean" + (f" of {t['n_frames']} frames" if t["n_frames"] else ""),
                zorder=3,
            )
            lo, hi = min(lo, s[0]), max(hi, s[-1])
            top = max(top, np.nanmax(mean + np.nan_to_num(sd)))
        else:
            p = profile_arrays(d)
            profiles.append(p)
            ax.plot(
                p["s_A"],
                p["radius_A"],
                color=color,
                linestyle=LINE_STYLES[k % len(LINE_STYLES)],
                linewidth=0.7 if band else LINE_PT,
                label=name,
                zorder=3,
            )
            lo, hi = min(lo, p["s_A"][0]), max(hi, p["s_A"][-1])
            top = max(top, np.nanmax(p["radius_A"]))
    if band:
        if len(profiles) < 2:
            raise InputError("band=True needs at least two profiles")
        grid, radii = common_grid(profiles)
        mean, sd = nan_mean_sd(radii)
        ax.fill_between(
            grid,
            mean - sd,
            mean + sd,
            color=OKABE_ITO["black"],
            alpha=0.15,
            linewidth=0,
            label=f"mean ± 1 SD ({len(profiles)} profiles)",
            zorder=1,
        )
        ax.plot(grid, mean, color=OKABE_ITO["black"], linewidth=LINE_PT, zorder=4)
        top = max(top, np.nanmax(mean + np.nan_to_num(sd)))
    ax.set_xlim(lo, hi)
    ax.set_ylim(0, top * 1.12)
    ax.set_xlabel(S_LABEL)
    ax.set_ylabel(RADIUS_LABEL)
    ax.legend(loc="upper left", handlelength=2.2)
    return finish_axes(ax)
