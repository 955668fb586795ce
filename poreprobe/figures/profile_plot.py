"""The radius-profile figure: pore radius along s, constrictions labelled with their lining."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import matplotlib as mpl
import numpy as np

from poreprobe.figures.data import profile_arrays, residue_summary, runs
from poreprobe.figures.references import checked_references, draw_reference_bands
from poreprobe.figures.style import (
    LINE_COLORS,
    OCCLUDED_COLOR,
    OKABE_ITO,
    OPEN_HATCH_COLOR,
    RADIUS_LABEL,
    S_LABEL,
    SMALL_FONT_PT,
    axes_for,
    finish_axes,
    styled,
)


@styled
def plot_profile(
    profile,
    *,
    ax=None,
    ion_radii: Sequence[tuple[str, float]] = (),
    constrictions: Sequence[Mapping] | None = None,
    label: str | None = None,
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Pore radius along s, with optional reference ion bands and lining residues.

    Parameters
    ----------
    profile : RadiusProfile or dict
        The result of :func:`poreprobe.radius_profile` or its JSON (``profile.s_A``,
        ``profile.radius_A``, ``min_radius_A``, ``min_s_A``, ``min_residues``,
        ``radius_set``).
    ax : Axes, optional
        Draw here; a new one-column figure otherwise.
    ion_radii : sequence of (label, radius_A)
        Reference radii, e.g. from :func:`ion_reference_radii`, drawn as labelled
        bands stacked from 0 (0 to the smallest, then up to the next, ...), each
        edged by a line at its radius.
    constrictions : sequence of dict, optional
        Constrictions to annotate, each with ``s_A``, ``radius_A`` and ``residues``
        (residue labels). Default: the narrowest point of the profile and the
        residues lining it.
    label : str, optional
        Legend label of the profile line.
    width_mm, height_mm : float, optional
        Size of a new figure.

    Returns
    -------
    Axes
    """
    data = profile_arrays(profile)
    ax = axes_for(ax, width_mm, height_mm)
    s, r = data["s_A"], data["radius_A"]
    refs = checked_references(ion_radii)
    draw_reference_bands(ax, refs)
    for i, j in runs(~np.isfinite(r)):
        lo = s[i] - (s[1] - s[0]) / 2 if len(s) > 1 else s[i]
        hi = s[j] + (s[1] - s[0]) / 2 if len(s) > 1 else s[j]
        ax.axvspan(
            lo,
            hi,
            facecolor="none",
            edgecolor=OPEN_HATCH_COLOR,
            hatch="//////",
            linewidth=0,
            zorder=0.7,
        )
    for n_run, (i, j) in enumerate(runs(data["occluded"])):
        half = (s[1] - s[0]) / 2 if len(s) > 1 else 0.0
        ax.axvspan(
            s[i] - half,
            s[j] + half,
            facecolor=OCCLUDED_COLOR,
            linewidth=0,
            zorder=0.8,
            label="occluded (no free point)" if n_run == 0 else None,
        )
    line_label = label or (
        f"pore radius ({data['radius_set']} radii)" if data["radius_set"] else "pore radius"
    )
    ax.plot(s, r, color=LINE_COLORS[0], zorder=3, label=line_label)
    if constrictions is None:
        constrictions = (
            [
                {
                    "s_A": data["min_s_A"],
                    "radius_A": data["min_radius_A"],
                    "residues": data["min_residues"],
                }
            ]
            if np.isfinite(data["min_radius_A"]) and not data["min_occluded"]
            else []
        )
    top = np.nanmax(np.concatenate([r, [v for _, v in refs]]))
    ax.set_xlim(s[0], s[-1])
    if np.isfinite(r).any() and (~np.isfinite(r)).any():
        ax.fill_between(
            [],
            [],
            facecolor="none",
            edgecolor=OPEN_HATCH_COLOR,
            hatch="//////",
            linewidth=0,
            label="open to bulk",
        )
    ax.set_ylim(0, top * 1.18)
    ax.set_xlabel(S_LABEL)
    ax.set_ylabel(RADIUS_LABEL)
    ax.legend(loc="best", handlelength=1.6)
    finish_axes(ax)
    _annotate_constrictions(ax, constrictions, s, r)
    return ax


#: Heights (points above the marker) tried in turn for a constriction's label.
_LABEL_OFFSETS_PT = (22, 40, 58)
#: Two constrictions joined by a stretch no wider than this (Å) above both are one.
_SAME_CONSTRICTION_A = 0.1


def _same_constriction(s_A, radius_A, a: tuple, b: tuple) -> bool:
    """Whether the profile between constrictions a and b stays within a hair of both."""
    lo, hi = sorted((a[0], b[0]))
    between = radius_A[(s_A >= lo) & (s_A <= hi)]
    return (
        bool(between.size)
        and np.all(np.isfinite(between))
        and float(between.max()) <= max(a[1], b[1]) + _SAME_CONSTRICTION_A
    )


def _annotate_constrictions(ax, constrictions: Sequence[Mapping], s_A, radius_A) -> None:
    """Mark each constriction; label it (radius, lining residues) where the label fits.

    The most prominent constrictions (``prominence_A``, as the check command
    reports it; else the narrowest) are labelled first. A constriction joined to
    a labelled one by a stretch no more than 0.1 Å wider (ripples of one narrow
    stretch) keeps its marker only. A label that would overlap one already placed
    is lifted to the next height in :data:`_LABEL_OFFSETS_PT`, and left out (the
    marker stays) when no height is free.
    """
    ranked = sorted(
        constrictions, key=lambda c: (-float(c.get("prominence_A") or 0.0), float(c["radius_A"]))
    )
    items = [(float(c["s_A"]), float(c["radius_A"]), list(c.get("residues") or ())) for c in ranked]
    if not items:
        return
    renderer = _renderer(ax.figure)
    lo, hi = ax.get_xlim()
    placed, labelled = [], []
    for item in items:
        s_c, r_c, residues = item
        ax.plot(
            [s_c],
            [r_c],
            marker="v",
            color=OKABE_ITO["vermillion"],
            zorder=4,
            markersize=4,
            linestyle="none",
        )
        if any(_same_constriction(s_A, radius_A, item, other) for other in labelled):
            continue
        labelled.append(item)
        text = f"{r_c:.2f} Å" + ("\n" + residue_summary(residues) if residues else "")
        where = (s_c - lo) / (hi - lo) if hi > lo else 0.5
        ha = "left" if where < 0.2 else "right" if where > 0.8 else "center"
        for offset in _LABEL_OFFSETS_PT:
            note = ax.annotate(
                text,
                xy=(s_c, r_c),
                xytext=(0, offset),
                textcoords="offset points",
                ha=ha,
                va="bottom",
                fontsize=SMALL_FONT_PT,
                zorder=5,
                bbox={
                    "boxstyle": "square,pad=0.15",
                    "facecolor": "white",
                    "alpha": 0.85,
                    "edgecolor": "none",
                },
                arrowprops={
                    "arrowstyle": "-",
                    "linewidth": 0.5,
                    "color": "0.3",
                    "shrinkA": 0,
                    "shrinkB": 3,
                },
            )
            if renderer is None:
                break
            # the text alone (an Annotation's own extent includes its leader line)
            note.update_positions(renderer)
            box = mpl.text.Text.get_window_extent(note, renderer).padded(2)
            if not any(box.overlaps(other) for other in placed):
                placed.append(box)
                break
            note.remove()


def _renderer(fig):
    """A renderer for measuring text, after the layout engine has placed the axes."""
    if not hasattr(fig.canvas, "get_renderer"):
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
    engine = fig.get_layout_engine()
    if engine is not None:
        engine.execute(fig)
    return fig.canvas.get_renderer() if hasattr(fig.canvas, "get_renderer") else None
