"""The capture figure: capture radius c(p) against probe radius, with a measured band."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import as_result_dict, float_or_nan, lookup
from poreprobe.figures.probes_plot import scan_arrays
from poreprobe.figures.references import checked_references, ion_label
from poreprobe.figures.style import (
    CAPTURE_HEIGHT_MM,
    LINE_PT,
    LINE_STYLES,
    OKABE_ITO,
    axes_for,
    finish_axes,
    legend_below,
    styled,
)


def match_arrays(match) -> dict:
    """Measured capture radius band and matching probe intervals of a match result."""
    d = as_result_dict(match, "match")
    c = float(lookup(d, ["capture_radius_A"], "match"))
    sd = lookup(d, ["capture_radius_sd_A"], "match", required=False)
    best = lookup(d, ["probe_radius_A_best"], "match", required=False)
    intervals = lookup(d, ["probe_radius_A_intervals"], "match", required=False) or []
    ivals = []
    for iv in intervals:
        if len(iv) != 2:
            raise InputError(f"probe_radius_A_intervals entries must be [low, high], got {iv!r}")
        ivals.append((float(iv[0]), float(iv[1])))
    ion = d.get("ion") or ""
    refs = []
    for item in lookup(d, ["match.ion_radii"], "match", required=False) or []:
        if isinstance(item, Mapping) and item.get("radius_A") is not None:
            kind = str(item.get("kind", ""))
            kind = "Stokes" if kind.lower() == "stokes" else kind
            refs.append(
                (
                    f"{ion_label(str(ion))} {kind} radius {float(item['radius_A']):.2f} Å",
                    float(item["radius_A"]),
                )
            )
    return {
        "capture_radius_A": c,
        "capture_radius_sd_A": float_or_nan(sd),
        "probe_radius_A_best": float_or_nan(best),
        "intervals": ivals,
        "ion": ion,
        "ion_radii": refs,
        "has_curve": lookup(d, ["match.curve.probe_radius_A"], "match", required=False) is not None,
    }


@styled
def plot_capture(
    scan=None,
    *,
    match=None,
    ax=None,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Capture radius versus probe radius, with the measured band and the matching probes.

    Parameters
    ----------
    scan : ProbeScan or dict, optional
        ``capture.probe_radius_A``, ``capture.capture_radius_A``, ``capture.passes``
        (and ``capture.enters``). Optional when ``match`` carries the curve it was
        matched against (``match.curve``).
    match : dict, optional
        A match result or its JSON: ``capture_radius_A`` ± ``capture_radius_sd_A``
        is drawn as a horizontal band, each of ``probe_radius_A_intervals`` as a
        vertical shaded interval, ``probe_radius_A_best`` as a marked line, and the
        ion radii it compared (``match.ion_radii``) as labelled vertical lines.
    ion_radii : sequence of (label, radius_A)
        Reference probe sizes drawn as labelled vertical lines (instead of the
        match's ion radii).

    Returns
    -------
    Axes
    """
    if scan is None:
        if match is None:
            raise InputError("plot_capture needs a scan, or a match that carries its curve")
        scan = {
            "capture": lookup(
                as_result_dict(match, "match"), ["match.curve"], "match (without a scan)"
            )
        }
    data = scan_arrays(scan)
    ax = axes_for(
        ax, width_mm, CAPTURE_HEIGHT_MM if height_mm is None and ax is None else height_mm
    )
    p, c = data["probe_radius_A"], data["capture_radius_A"]
    order = np.argsort(p)
    top = float(np.nanmax(c)) if np.isfinite(c).any() else 1.0
    refs = checked_references(ion_radii)
    if match is not None:
        m = match_arrays(match)
        mc, msd = m["capture_radius_A"], m["capture_radius_sd_A"]
        if np.isfinite(msd) and msd > 0:
            ax.axhspan(
                mc - msd,
                mc + msd,
                color=OKABE_ITO["sky_blue"],
                alpha=0.35,
                linewidth=0,
                zorder=0.5,
                label=f"measured {mc:.2f} ± {msd:.2f} Å",
            )
        ax.axhline(
            mc,
            color=OKABE_ITO["blue"],
            linewidth=0.7,
            linestyle="--",
            zorder=1,
            label=None if np.isfinite(msd) and msd > 0 else f"measured {mc:.2f} Å",
        )
        for k, (lo, hi) in enumerate(m["intervals"]):
            ax.axvspan(
                lo,
                hi,
                color=OKABE_ITO["orange"],
                alpha=0.3,
                linewidth=0,
                zorder=0.6,
                label=f"matching probe radii ({len(m['intervals'])} intervals)"
                if k == 0 and len(m["intervals"]) > 1
                else ("matching probe radii" if k == 0 else None),
            )
        if np.isfinite(m["probe_radius_A_best"]):
            ax.axvline(
                m["probe_radius_A_best"],
                color=OKABE_ITO["vermillion"],
                linewidth=0.8,
                zorder=2,
                label=f"top-ranked match p = {m['probe_radius_A_best']:.2f} Å",
            )
        top = max(top, mc + (msd if np.isfinite(msd) else 0))
        if not refs:
            refs = m["ion_radii"]
    for k, (label, value) in enumerate(refs):
        ax.axvline(
            value,
            color="0.35",
            linewidth=0.6,
            linestyle=LINE_STYLES[(k + 1) % len(LINE_STYLES)],
            zorder=1,
            label=label,
        )
    ax.plot(p[order], c[order], color="black", linewidth=LINE_PT, zorder=3)
    _capture_markers(
        ax,
        p[order],
        c[order],
        None if data["passes"] is None else data["passes"][order],
        None if data["enters"] is None else data["enters"][order],
    )
    pad = 0.03 * (p.max() - p.min() or 1.0)
    ax.set_xlim(p.min() - pad, p.max() + pad)
    ax.set_ylim(0, top * 1.15)
    ax.set_xlabel("Probe radius p (Å)")
    ax.set_ylabel("Capture radius c(p) (Å)")
    legend_below(ax)
    return finish_axes(ax)


def _capture_markers(ax, p, c, passes, enters):
    """Filled: the probe stops in the pore; open: it passes; cross: it never enters."""
    if passes is None:
        ax.plot(p, c, "o", color="black", markersize=2.2, zorder=4, label="scanned probe radii")
        return
    enters = np.ones(p.shape, bool) if enters is None else enters
    groups = [
        (enters & ~passes, {"color": "black"}, "probe stops in the pore"),
        (
            passes,
            {"markerfacecolor": "white", "markeredgecolor": "black", "markeredgewidth": 0.6},
            "probe passes (bottleneck)",
        ),
        (~enters & ~passes, {"color": "black", "marker": "x"}, "probe does not enter (c = 0)"),
    ]
    for mask, style, label in groups:
        if mask.any():
            style = {"marker": "o", **style}
            ax.plot(
                p[mask], c[mask], linestyle="none", markersize=2.6, zorder=4, label=label, **style
            )
