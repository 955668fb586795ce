"""The series-resistance figure: one bar per segment, share of the total."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import as_result_dict, float_or_nan, lookup
from poreprobe.figures.style import (
    FONT_PT,
    GRID_COLOR,
    OKABE_ITO,
    SMALL_FONT_PT,
    axes_for,
    finish_axes,
    styled,
)


def resistance_arrays(resistance) -> dict:
    """Segment names, resistances and shares of a series-resistance result or its JSON."""
    d = as_result_dict(resistance, "resistance")
    segments = lookup(d, ["segments"], "resistance")
    if not isinstance(segments, Sequence) or not segments:
        raise InputError("resistance JSON: segments must be a non-empty list")
    try:
        names = [str(seg["name"]) for seg in segments]
        r = np.array([float(seg["resistance_Gohm"]) for seg in segments])
        share = np.array([float(seg["share_percent"]) for seg in segments])
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(
            f"resistance JSON: every segment needs name, resistance_Gohm and share_percent ({exc})"
        ) from exc
    g = lookup(d, ["conductance_pS"], "resistance", required=False)
    total = lookup(d, ["total_resistance_Gohm", "resistance_Gohm"], "resistance", required=False)
    kinds = ["access" if seg.get("kind") == "access" else "pore" for seg in segments]
    return {
        "names": names,
        "resistance_Gohm": r,
        "share_percent": share,
        "kinds": kinds,
        "conductance_pS": float_or_nan(g),
        "total_Gohm": float(r.sum()) if total is None else float(total),
    }


@styled
def plot_resistance(
    resistance, *, ax=None, width_mm: float | None = None, height_mm: float | None = None
):
    """Series-resistance breakdown: one horizontal bar per segment, share of the total.

    Parameters
    ----------
    resistance : ConductanceEstimate or dict
        ``segments[]`` with ``name``, ``resistance_Gohm``, ``share_percent`` (and
        ``kind``: ``"access"`` or a pore segment), in order along the pore, and
        ``conductance_pS``. Access resistances are drawn light, pore segments
        dark; the largest share's label is bold.

    Returns
    -------
    Axes
    """
    data = resistance_arrays(resistance)
    ax = axes_for(ax, width_mm, height_mm)
    n = len(data["names"])
    y = np.arange(n)
    share = data["share_percent"]
    kinds = data["kinds"]
    colors = [OKABE_ITO["sky_blue"] if k == "access" else OKABE_ITO["blue"] for k in kinds]
    bars = ax.barh(y, share, height=0.62, color=colors, zorder=2)
    if "access" in kinds:
        for kind, label in (("access", "access resistance"), ("pore", "pore segment")):
            k = kinds.index(kind) if kind in kinds else None
            if k is not None:
                bars[k].set_label(label)
        ax.legend(loc="lower right")
    biggest = int(np.argmax(share))
    for k in range(n):
        ax.annotate(
            f"{data['resistance_Gohm'][k]:.3g} GΩ ({share[k]:.0f} %)",
            xy=(share[k], y[k]),
            xytext=(2, 0),
            textcoords="offset points",
            va="center",
            ha="left",
            fontsize=SMALL_FONT_PT,
            fontweight="bold" if k == biggest else "normal",
        )
    ax.set_yticks(y, data["names"])
    ax.invert_yaxis()
    ax.set_xlim(0, share.max() * 1.4)
    ax.set_xticks([t for t in ax.get_xticks() if 0 <= t <= min(100.0, share.max() * 1.4)])
    ax.set_xlabel("Share of the total resistance (%)")
    if np.isfinite(data["conductance_pS"]):
        ax.set_title(
            f"Total {data['total_Gohm']:.3g} GΩ; conductance "
            f"{data['conductance_pS']:.3g} pS\n(model estimate)",
            loc="left",
            fontsize=FONT_PT,
        )
    finish_axes(ax, ygrid=False)
    ax.spines["left"].set_visible(False)
    ax.tick_params(axis="y", length=0)
    ax.grid(axis="x", color=GRID_COLOR, linewidth=0.4, zorder=0)
    return ax
