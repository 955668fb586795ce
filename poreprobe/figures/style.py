"""The house style of the figures (sizes, type, colours) and writing them to files.

Every ``plot_*`` function takes a result (the dataclass, or the dictionary its JSON
file holds, so figures can be redrawn from saved files without recomputing), draws
on ``ax`` if one is given or on a new figure otherwise, and returns the Axes.
:func:`save_figure` writes PNG, SVG or PDF by the file suffix.

House style
-----------
* **Sizes in millimetres** for journal columns: :data:`COLUMN_WIDTHS_MM` (85, 114 and
  174 mm; common practice for single, 1.5 and double columns, values from memory;
  check your journal). Default figure: one column, 85 x 62 mm.
* **Readable type at print size**: 7 pt text, 6 pt for annotations (journals ask
  for 5 to 8 pt at final size; common practice). SVG keeps text as editable text,
  PDF embeds TrueType fonts.
* **Colour-blind-safe colours**: the qualitative palette of Okabe and Ito (2008,
  "Color Universal Design"; hex values from memory) for lines and bands, each
  line also told apart by its dash pattern; the perceptually uniform, colour-vision-
  deficiency-optimised map ``cividis`` (Nunez, Anderton and Renslow 2018, PLoS ONE
  13:e0199239; from memory) for anything coloured by radius, also used for the
  coloured pore surfaces of :mod:`poreprobe.figures.viewer_mesh`.
* No fixed radius colour code: reference bands come only from the ion radii the
  user picks, and are labelled with the ion, the kind of radius and its value.

All radii shown are model-based estimates; the figures state the radius set where
the result records it.
"""

from __future__ import annotations

import functools
import io
import os

import matplotlib as mpl
import numpy as np
from matplotlib.figure import Figure

from poreprobe._validate import check_range
from poreprobe._version import __version__
from poreprobe.errors import InputError
from poreprobe.figures.kinds import FIGURE_SUFFIXES
from poreprobe.io.export import write_atomic

#: Column widths in mm (common practice for one, one-and-a-half and two journal columns).
COLUMN_WIDTHS_MM = {"single": 85.0, "onehalf": 114.0, "double": 174.0}
DEFAULT_WIDTH_MM = COLUMN_WIDTHS_MM["single"]
DEFAULT_HEIGHT_MM = 62.0
#: The capture figure carries its legend below the axes, so it is taller by default.
CAPTURE_HEIGHT_MM = 78.0
DEFAULT_DPI = 300
FONT_PT = 7.0
SMALL_FONT_PT = 6.0
LINE_PT = 1.0

#: Okabe & Ito (2008) colour-blind-safe palette (hex values from memory).
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
}
#: Order in which lines take colours (yellow is left out: too faint on white).
LINE_COLORS = tuple(
    OKABE_ITO[k]
    for k in ("blue", "vermillion", "bluish_green", "reddish_purple", "orange", "sky_blue", "black")
)
#: Greys of the reference bands, from the band nearest 0 (darkest: tightest) outwards;
#: neutral, so they never compete with the data's colours.
BAND_GREYS = ("#cfcfcf", "#e0e0e0", "#ececec", "#f5f5f5")
BAND_EDGE_COLOR = "#7f7f7f"
LINE_STYLES = ("-", "--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)), (0, (1, 1)), (0, (8, 2)))
#: Perceptual colour map for radii (figures and coloured surfaces).
RADIUS_CMAP = "cividis"
OPEN_COLOR = "#d9d9d9"
#: Open planes on the profile figure are hatched, so they never read as a radius band.
OPEN_HATCH_COLOR = "#a6a6a6"
#: Fill behind occluded profile planes (no free point: radius 0).
OCCLUDED_COLOR = "#e0c8c8"
GRID_COLOR = "#e6e6e6"


S_LABEL = "Position along the pore axis, s (Å)"
RADIUS_LABEL = "Pore radius (Å)"


def _font_family() -> list[str]:
    from matplotlib import font_manager

    installed = {f.name for f in font_manager.fontManager.ttflist}
    wanted = ["Arial", "Helvetica", "Liberation Sans", "DejaVu Sans"]
    return [name for name in wanted if name in installed] or ["sans-serif"]


@functools.cache
def house_rc() -> dict:
    """The rcParams of the house style (fonts, line widths, vector text)."""
    return {
        "font.family": [*_font_family(), "sans-serif"],  # per-glyph fallback
        "font.sans-serif": _font_family(),
        "font.size": FONT_PT,
        "axes.titlesize": FONT_PT,
        "axes.labelsize": FONT_PT,
        "xtick.labelsize": FONT_PT - 0.5,
        "ytick.labelsize": FONT_PT - 0.5,
        "legend.fontsize": SMALL_FONT_PT,
        "legend.title_fontsize": SMALL_FONT_PT,
        "axes.linewidth": 0.6,
        "lines.linewidth": LINE_PT,
        "lines.markersize": 3.0,
        "xtick.major.width": 0.6,
        "ytick.major.width": 0.6,
        "xtick.major.size": 2.5,
        "ytick.major.size": 2.5,
        "xtick.direction": "out",
        "ytick.direction": "out",
        "axes.spines.top": False,
        "axes.spines.right": False,
        "axes.prop_cycle": mpl.cycler(color=list(LINE_COLORS)),
        "legend.frameon": True,
        "legend.framealpha": 0.85,
        "legend.edgecolor": "none",
        "legend.fancybox": False,
        "legend.borderpad": 0.3,
        "svg.fonttype": "none",
        "svg.hashsalt": "poreprobe",
        "pdf.fonttype": 42,
        "image.cmap": RADIUS_CMAP,
        "axes.unicode_minus": True,
    }


def styled(func):
    """Run a plot function inside the house rcParams."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with mpl.rc_context(house_rc()):
            return func(*args, **kwargs)

    return wrapper


def check_size_mm(width_mm, height_mm) -> tuple[float, float]:
    width = DEFAULT_WIDTH_MM if width_mm is None else check_range(width_mm, "width_mm", 20, 600)
    height = (
        DEFAULT_HEIGHT_MM if height_mm is None else check_range(height_mm, "height_mm", 20, 600)
    )
    return width, height


def new_figure(*, width_mm: float | None = None, height_mm: float | None = None):
    """A figure of the given size in mm with one Axes in the house style.

    Parameters
    ----------
    width_mm, height_mm : float, optional
        Size in mm (20 to 600); default one journal column, 85 x 62 mm.

    Returns
    -------
    (Figure, Axes)
    """
    width, height = check_size_mm(width_mm, height_mm)
    with mpl.rc_context(house_rc()):
        fig = Figure(figsize=(width / 25.4, height / 25.4), layout="constrained")
        fig.get_layout_engine().set(w_pad=1.5 / 72, h_pad=1.5 / 72)
        ax = fig.add_subplot()
    return fig, ax


def axes_for(ax, width_mm=None, height_mm=None):
    if ax is None:
        return new_figure(width_mm=width_mm, height_mm=height_mm)[1]
    if not hasattr(ax, "figure") or not hasattr(ax, "plot"):
        raise InputError(f"ax must be a matplotlib Axes, got {type(ax).__name__}")
    return ax


def legend_below(ax, ncols: int = 2):
    """A legend under the axes (for figures whose data fill the plot area)."""
    return ax.legend(
        loc="upper center",
        bbox_to_anchor=(0.5, -0.2),
        ncols=ncols,
        frameon=False,
        handlelength=1.8,
        columnspacing=1.2,
    )


def finish_axes(ax, *, ygrid: bool = True):
    """Ticks, spines and grid of the house style (explicit, so they survive outside rc)."""
    ax.tick_params(labelsize=FONT_PT - 0.5, width=0.6, length=2.5, direction="out")
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    if ygrid:
        ax.grid(axis="y", color=GRID_COLOR, linewidth=0.4, zorder=0)
        ax.set_axisbelow(True)
    return ax


def figure_format(path) -> str:
    """``"png"``, ``"svg"`` or ``"pdf"`` from a file name's suffix (InputError otherwise)."""
    suffix = os.path.splitext(os.fspath(path))[1].lower()
    if suffix not in FIGURE_SUFFIXES:
        raise InputError(
            f"figure file must end in {', '.join(FIGURE_SUFFIXES)}; got {os.fspath(path)!r}"
        )
    return FIGURE_SUFFIXES[suffix]


def check_figure_options(
    path, *, width_mm: float | None = None, height_mm: float | None = None, dpi: float = DEFAULT_DPI
) -> None:
    """Validate a figure file name, size (mm) and resolution before drawing."""
    figure_format(path)
    check_size_mm(width_mm, height_mm)
    check_range(dpi, "dpi", 50, 2400)


def save_figure(fig_or_ax, path, *, dpi: float = DEFAULT_DPI) -> None:
    """Write a figure as PNG, SVG or PDF (by the suffix), atomically.

    Parameters
    ----------
    fig_or_ax : Figure or Axes
    path : str or os.PathLike
        ``.png``, ``.svg`` or ``.pdf``.
    dpi : float
        Resolution of PNG output (and of any raster part of a vector file), 50 to 2400.
    """
    fmt = figure_format(path)
    dpi = check_range(dpi, "dpi", 50, 2400)
    fig = (
        fig_or_ax.figure
        if hasattr(fig_or_ax, "figure") and not isinstance(fig_or_ax, Figure)
        else fig_or_ax
    )
    if not isinstance(fig, Figure):
        raise InputError(f"expected a matplotlib Figure or Axes, got {type(fig_or_ax).__name__}")
    metadata = {
        "png": {"Software": f"poreprobe {__version__}"},
        "svg": {"Date": None, "Creator": f"poreprobe {__version__}"},
        "pdf": {"CreationDate": None, "Creator": f"poreprobe {__version__}"},
    }[fmt]
    buf = io.BytesIO()
    with mpl.rc_context(house_rc()):
        fig.savefig(buf, format=fmt, dpi=dpi, metadata=metadata)
    write_atomic(path, buf.getvalue())


def radius_colors(radius_A, *, vmin_A: float, vmax_A: float) -> np.ndarray:
    """RGB colours (uint8, shape (n, 3)) of radii on the house radius colour map.

    NaN maps to the neutral grey used for open planes. Shared with the coloured
    pore surfaces so that figures and 3-D exports read the same way.
    """
    vals = np.asarray(radius_A, dtype=float).reshape(-1)
    if not (np.isfinite(vmin_A) and np.isfinite(vmax_A)) or vmax_A <= vmin_A:
        raise InputError(
            f"colour range must be finite with vmax_A > vmin_A, got {vmin_A}, {vmax_A}"
        )
    cmap = mpl.colormaps[RADIUS_CMAP]
    rgba = cmap(np.clip((vals - vmin_A) / (vmax_A - vmin_A), 0, 1))
    rgba[~np.isfinite(vals)] = mpl.colors.to_rgba(OPEN_COLOR)
    return np.round(rgba[:, :3] * 255).astype(np.uint8)
