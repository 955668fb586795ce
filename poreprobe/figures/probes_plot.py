"""The probe-size scan figure: accessible-radius profiles coloured by probe radius."""

from __future__ import annotations

from collections.abc import Sequence

import matplotlib as mpl
import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import as_result_dict, floats, lookup, same_length
from poreprobe.figures.references import checked_references, draw_reference_bands
from poreprobe.figures.style import FONT_PT, RADIUS_CMAP, S_LABEL, axes_for, finish_axes, styled


def scan_arrays(scan) -> dict:
    """Accessible-radius profiles and capture curve of a probe-size scan or its JSON.

    ``passes`` and ``enters`` are None when the input does not say (e.g. the capture
    curve a match result carries).
    """
    d = as_result_dict(scan, "scan")
    p = floats(lookup(d, ["capture.probe_radius_A"], "scan"), "capture.probe_radius_A")
    c = floats(lookup(d, ["capture.capture_radius_A"], "scan"), "capture.capture_radius_A")
    same_length("capture.probe_radius_A", p, "capture.capture_radius_A", c)
    stop = lookup(d, ["capture.stop_s_A"], "scan", required=False)
    stop = np.full(p.shape, np.nan) if stop is None else floats(stop, "capture.stop_s_A")
    same_length("capture.probe_radius_A", p, "capture.stop_s_A", stop)
    flags = {}
    for name in ("passes", "enters"):
        value = lookup(d, [f"capture.{name}"], "scan", required=False)
        flags[name] = None if value is None else np.array(value, dtype=bool).reshape(-1)
        if flags[name] is not None:
            same_length("capture.probe_radius_A", p, f"capture.{name}", flags[name])
    s = lookup(d, ["profiles.s_A"], "scan", required=False)
    acc = lookup(d, ["profiles.accessible_radius_A"], "scan", required=False)
    if s is not None and acc is not None:
        s, acc = floats(s, "s_A"), floats(acc, "accessible_radius_A (probes x levels)", 2)
        same_length("s_A", s, "accessible_radius_A", acc)
        if acc.shape[0] != len(p):
            raise InputError(f"accessible_radius_A has {acc.shape[0]} rows for {len(p)} probes")
    return {
        "probe_radius_A": p,
        "capture_radius_A": c,
        "stop_s_A": stop,
        "passes": flags["passes"],
        "enters": flags["enters"],
        "s_A": s,
        "accessible_radius_A": acc,
        "radius_set": d.get("radius_set") or "",
    }


@styled
def plot_probes(
    scan,
    *,
    ax=None,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Accessible-radius profiles for each probe size, coloured by probe radius.

    Parameters
    ----------
    scan : ProbeScan or dict
        A probe-size scan or its JSON: ``s_A``, ``accessible_radius_A`` (one row
        per probe), ``capture.probe_radius_A``, ``capture.stop_s_A``,
        ``capture.passes``.
    ion_radii : sequence of (label, radius_A)
        Reference radii drawn as labelled bands, as in :func:`plot_profile`.

    Returns
    -------
    Axes
        A colour bar for the probe radius is added beside it.
    """
    data = scan_arrays(scan)
    if data["accessible_radius_A"] is None:
        raise InputError(
            "the scan JSON holds no accessible-radius profiles "
            "(profiles.s_A and profiles.accessible_radius_A)"
        )
    if not np.isfinite(data["accessible_radius_A"]).any():
        raise InputError("the scan's accessible-radius profiles hold no finite radius")
    ax = axes_for(ax, width_mm, height_mm)
    refs = checked_references(ion_radii)
    draw_reference_bands(ax, refs)
    p, s, acc = data["probe_radius_A"], data["s_A"], data["accessible_radius_A"]
    passes = data["passes"] if data["passes"] is not None else np.zeros(p.shape, bool)
    vmin, vmax = float(p.min()), float(p.max())
    norm = mpl.colors.Normalize(vmin, vmax if vmax > vmin else vmin + 1)
    cmap = mpl.colormaps[RADIUS_CMAP]
    for k in np.argsort(p):  # larger probes (shorter reach) drawn on top
        ax.plot(s, acc[k], color=cmap(norm(p[k])), linewidth=0.8, zorder=3)
        stop = data["stop_s_A"][k]
        finite = np.isfinite(acc[k])
        if not passes[k] and np.isfinite(stop) and finite.any():
            y = np.interp(stop, s[finite], acc[k, finite])
            ax.plot(
                [stop],
                [y],
                marker="o",
                markersize=2.5,
                color=cmap(norm(p[k])),
                markeredgecolor="black",
                markeredgewidth=0.4,
                zorder=4,
            )
    ax.plot(
        [],
        [],
        marker="o",
        markersize=2.5,
        color="white",
        markeredgecolor="black",
        markeredgewidth=0.4,
        linestyle="none",
        label="stop level s*(p)",
    )
    sm = mpl.cm.ScalarMappable(norm=norm, cmap=cmap)
    bar = ax.figure.colorbar(sm, ax=ax, pad=0.02, fraction=0.05, aspect=25)
    bar.set_label("Probe radius p (Å)")
    bar.ax.tick_params(labelsize=FONT_PT - 0.5, width=0.6, length=2)
    bar.outline.set_linewidth(0.6)
    covered = s[np.isfinite(acc).any(axis=0)]
    ax.set_xlim(covered[0], covered[-1])
    ax.set_ylim(0, max([np.nanmax(acc)] + [v for _, v in refs]) * 1.1)
    ax.set_xlabel(S_LABEL)
    ax.set_ylabel("Accessible radius (Å)")
    if refs or (~passes & np.isfinite(data["stop_s_A"])).any():
        ax.legend(loc="best")
    return finish_axes(ax)
