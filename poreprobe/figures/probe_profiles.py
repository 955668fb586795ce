"""Readable probe-scan figure: a handful of chosen probes, each with its own line and label.

The colour-bar figure (:func:`poreprobe.figures.probes_plot.plot_probes`) draws every probe in
nearly the same colour, so no line can be told from another. This one draws a few
chosen probes (by default: the smallest, the largest that passes, the smallest that
stops, the largest that still enters, and one between), each in its own colour and
dash pattern (Okabe & Ito 2008 palette, the house style) with a direct label at the end
of its line. A probe's stop level is marked only for probes that enter and stop; probes
that never enter are not drawn (the table under the figure lists them). Levels where a
probe's section opens wider than the searched region (NaN inside its reach) are bridged
by a thin dotted line of the same colour, so a line does not seem to end mid-pore.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from poreprobe.errors import InputError


def choose_probes(probe_radius_A, passes, enters, *, n_probes: int = 5) -> list[int]:
    """Indices of the probes worth drawing (sorted by radius), at most ``n_probes``.

    Picks, where they exist: the smallest probe that enters, the largest that passes,
    the smallest that enters but stops, the largest that enters, then fills up with
    probes evenly spaced among those that enter.
    """
    p = np.asarray(probe_radius_A, dtype=float)
    passes = np.asarray(passes, dtype=bool)
    enters = np.asarray(enters, dtype=bool)
    if not (p.shape == passes.shape == enters.shape):
        raise InputError("probe_radius_A, passes and enters must have the same length")
    if n_probes < 1:
        raise InputError(f"n_probes must be >= 1, got {n_probes}")
    entering = np.flatnonzero(enters)
    if entering.size == 0:
        return []
    picks = [int(entering[0])]
    passing = np.flatnonzero(passes & enters)
    if passing.size:
        picks.append(int(passing[-1]))
    stopping = np.flatnonzero(enters & ~passes)
    if stopping.size:
        picks.append(int(stopping[0]))
    picks.append(int(entering[-1]))
    for k in np.linspace(0, entering.size - 1, n_probes + 2).round().astype(int):
        if len(set(picks)) >= n_probes:
            break
        picks.append(int(entering[k]))
    return sorted(set(picks))[:n_probes]


def plot_probe_profiles(
    scan,
    *,
    n_probes: int = 5,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Small multiples: one panel per chosen probe, sharing the s and radius axes.

    Parameters
    ----------
    scan : ProbeScan or dict
        A probe-size scan or its JSON (as for :func:`poreprobe.figures.probes_plot.plot_probes`).
    n_probes : int
        How many probes to draw (1 to 7), one panel each.
    ion_radii : sequence of (label, radius_A)
        Reference radii drawn as grey bands in every panel.
    width_mm, height_mm : float, optional
        Figure size (default 85 mm wide, 20 mm per panel plus the axis label).

    Returns
    -------
    Figure
    """
    from poreprobe.figures import probes_plot, style

    if not 1 <= int(n_probes) <= 7:
        raise InputError(f"n_probes must be between 1 and 7, got {n_probes}")
    data = probes_plot.scan_arrays(scan)
    if data["accessible_radius_A"] is None:
        raise InputError("the scan holds no accessible-radius profiles")
    return style.styled(_draw)(data, int(n_probes), ion_radii, width_mm, height_mm)


def _draw(data, n_probes, ion_radii, width_mm, height_mm):
    from matplotlib.figure import Figure

    from poreprobe._validate import check_range
    from poreprobe.figures import references, style

    p, s, acc = data["probe_radius_A"], data["s_A"], data["accessible_radius_A"]
    finite_any = np.isfinite(acc).any(axis=1)
    passes = data["passes"] if data["passes"] is not None else np.zeros(p.shape, bool)
    enters = data["enters"] if data["enters"] is not None else finite_any
    chosen = choose_probes(p, passes, enters & finite_any, n_probes=n_probes)
    if not chosen:
        raise InputError("no probe of the scan enters the pore: nothing to draw")
    width = 85.0 if width_mm is None else check_range(width_mm, "width_mm", 20, 600)
    default_h = 14.0 + 20.0 * len(chosen)
    height = default_h if height_mm is None else check_range(height_mm, "height_mm", 20, 600)
    fig = Figure(figsize=(width / 25.4, height / 25.4), layout="constrained")
    axes = fig.subplots(len(chosen), 1, sharex=True, sharey=True, squeeze=False)[:, 0]
    refs = references.checked_references(ion_radii)
    top = max([np.nanmax(acc[chosen])] + [v for _, v in refs]) * 1.15
    for j, (ax, k) in enumerate(zip(axes, chosen, strict=True)):
        color = style.LINE_COLORS[j % len(style.LINE_COLORS)]
        references.draw_reference_bands(ax, refs)
        row = acc[k]
        ok = np.flatnonzero(np.isfinite(row))
        seg_s, seg_r = s[ok[0] : ok[-1] + 1], row[ok[0] : ok[-1] + 1]
        gaps = ~np.isfinite(seg_r)
        if gaps.any():  # open wider than the search region inside the reach: bridge
            filled = np.interp(seg_s, seg_s[~gaps], seg_r[~gaps])
            ax.plot(seg_s, filled, color=color, linewidth=0.5, linestyle=":", zorder=2.5)
        ax.plot(seg_s, seg_r, color=color, linewidth=1.0, zorder=3)
        stop = data["stop_s_A"][k]
        text = f"p = {p[k]:g} Å: passes"
        if not passes[k] and np.isfinite(stop):
            y = np.interp(stop, seg_s[~gaps], seg_r[~gaps])
            ax.plot(
                [stop],
                [y],
                marker="o",
                markersize=3,
                color=color,
                markeredgecolor="black",
                markeredgewidth=0.4,
                zorder=4,
            )
            text = f"p = {p[k]:g} Å: stops at s = {stop:.1f} Å"
        ax.text(
            0.01,
            0.93,
            text,
            transform=ax.transAxes,
            ha="left",
            va="top",
            fontsize=style.FONT_PT - 0.5,
            color="black",
        )
        ax.set_ylim(0, top)
        style.finish_axes(ax)
    covered = s[np.isfinite(acc[chosen]).any(axis=0)]
    axes[0].set_xlim(covered[0], covered[-1])
    axes[-1].set_xlabel(style.S_LABEL)
    fig.supylabel("Accessible radius (Å)", fontsize=style.FONT_PT)
    return fig
