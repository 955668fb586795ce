"""The kymograph: pore radius over a trajectory, s against frame or time."""

from __future__ import annotations

import matplotlib as mpl
import numpy as np

from poreprobe.errors import InputError
from poreprobe.figures.data import trajectory_arrays
from poreprobe.figures.style import (
    FONT_PT,
    OPEN_COLOR,
    RADIUS_CMAP,
    RADIUS_LABEL,
    S_LABEL,
    axes_for,
    finish_axes,
    styled,
)


def _time_axis(time_ps: np.ndarray) -> tuple[np.ndarray, str]:
    """Times in the unit that suits their span: ps below 1 ns, ns below 1 µs, else µs."""
    span = float(np.nanmax(time_ps) - np.nanmin(time_ps)) if len(time_ps) else 0.0
    if span < 1e3:
        return time_ps, "Time (ps)"
    if span < 1e6:
        return time_ps / 1e3, "Time (ns)"
    return time_ps / 1e6, "Time (µs)"


@styled
def plot_kymograph(
    trajectory,
    *,
    ax=None,
    vmin_A: float | None = None,
    vmax_A: float | None = None,
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Pore radius over a trajectory: s versus frame (or time), coloured by radius.

    Parameters
    ----------
    trajectory : dict
        ``s_A`` and per-frame ``radius_A`` (frames x levels); optional ``time_ps``.
    vmin_A, vmax_A : float, optional
        Colour range (default: the data's range). Open planes are grey.

    Returns
    -------
    Axes
        A colour bar for the radius is added beside it.
    """
    t = trajectory_arrays(trajectory)
    if t["radius_A"] is None:
        raise InputError("trajectory JSON holds no per-frame radius_A (frames x levels)")
    ax = axes_for(ax, width_mm, height_mm)
    radius = t["radius_A"]
    if t["time_ps"] is not None and len(t["time_ps"]) == radius.shape[0]:
        x, xlabel = _time_axis(t["time_ps"])
    elif t["frames"] is not None and len(t["frames"]) == radius.shape[0]:
        x, xlabel = t["frames"], "Frame"
    else:
        x, xlabel = np.arange(radius.shape[0], dtype=float), "Frame"
    finite = radius[np.isfinite(radius)]
    if finite.size == 0:
        raise InputError("trajectory radius_A holds no finite radius")
    lo = float(finite.min()) if vmin_A is None else float(vmin_A)
    hi = float(finite.max()) if vmax_A is None else float(vmax_A)
    if hi <= lo:
        hi = lo + 1.0
    cmap = mpl.colormaps[RADIUS_CMAP].with_extremes(bad=OPEN_COLOR)
    mesh = ax.pcolormesh(
        x,
        t["s_A"],
        np.ma.masked_invalid(radius.T),
        cmap=cmap,
        norm=mpl.colors.Normalize(lo, hi),
        shading="nearest",
        rasterized=True,
    )
    bar = ax.figure.colorbar(mesh, ax=ax, pad=0.02, fraction=0.05, aspect=25)
    bar.set_label(RADIUS_LABEL + ("; grey: open" if (~np.isfinite(radius)).any() else ""))
    bar.ax.tick_params(labelsize=FONT_PT - 0.5, width=0.6, length=2)
    bar.outline.set_linewidth(0.6)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(S_LABEL)
    finish_axes(ax, ygrid=False)
    for side in ("top", "right"):
        ax.spines[side].set_visible(True)
    return ax
