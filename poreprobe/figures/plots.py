"""Figures for papers, drawn in one house style (the only module importing matplotlib).

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
  coloured pore surfaces of :mod:`poreprobe.figures.viewer_export`.
* No fixed radius colour code: reference bands come only from the ion radii the
  user picks, and are labelled with the ion, the kind of radius and its value.

All radii shown are model-based estimates; the figures state the radius set where
the result records it.
"""

from __future__ import annotations

import functools
import io
import os
import re
from collections.abc import Mapping, Sequence

import matplotlib as mpl
import numpy as np
from matplotlib.figure import Figure

from poreprobe._validate import check_choice, check_range
from poreprobe._version import __version__
from poreprobe.bench.ions import get_ion
from poreprobe.errors import InputError
from poreprobe.figures.kinds import FIGURE_KINDS, FIGURE_SUFFIXES
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
#: Fill behind occluded planes (no free point: radius 0).
OCCLUDED_COLOR = "#e0c8c8"
GRID_COLOR = "#e6e6e6"

ION_RADIUS_KINDS = ("crystal", "hydrated", "stokes")

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
        "font.family": "sans-serif",
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


def _styled(func):
    """Run a plot function inside the house rcParams."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with mpl.rc_context(house_rc()):
            return func(*args, **kwargs)

    return wrapper


# --------------------------------------------------------------------------- figures & files


def _check_size_mm(width_mm, height_mm) -> tuple[float, float]:
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
    width, height = _check_size_mm(width_mm, height_mm)
    with mpl.rc_context(house_rc()):
        fig = Figure(figsize=(width / 25.4, height / 25.4), layout="constrained")
        fig.get_layout_engine().set(w_pad=1.5 / 72, h_pad=1.5 / 72)
        ax = fig.add_subplot()
    return fig, ax


def _axes(ax, width_mm=None, height_mm=None):
    if ax is None:
        return new_figure(width_mm=width_mm, height_mm=height_mm)[1]
    if not hasattr(ax, "figure") or not hasattr(ax, "plot"):
        raise InputError(f"ax must be a matplotlib Axes, got {type(ax).__name__}")
    return ax


def _legend_below(ax, ncols: int = 2):
    """A legend under the axes (for figures whose data fill the plot area)."""
    return ax.legend(
        loc="upper center",
        bbox_to_anchor=(0.5, -0.2),
        ncols=ncols,
        frameon=False,
        handlelength=1.8,
        columnspacing=1.2,
    )


def _finish(ax, *, ygrid: bool = True):
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
    _check_size_mm(width_mm, height_mm)
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


# --------------------------------------------------------------------------- reading results


def as_result_dict(result, what: str = "result") -> dict:
    """The JSON-ready dictionary of a result object, or the dictionary itself."""
    if hasattr(result, "to_dict"):
        import json

        from poreprobe.io.export import to_json

        return json.loads(to_json(result))
    if isinstance(result, Mapping):
        return dict(result)
    raise InputError(
        f"{what} must be a poreprobe result or its JSON dictionary, got {type(result).__name__}"
    )


def _lookup(d: Mapping, paths: Sequence[str], what: str, *, required: bool = True):
    """First of several dotted key paths present in ``d``."""
    for path in paths:
        node = d
        for key in path.split("."):
            if not isinstance(node, Mapping) or key not in node:
                break
            node = node[key]
        else:
            return node
    if required:
        raise InputError(
            f"{what}: none of the keys {', '.join(paths)} is present "
            "(is this the right kind of poreprobe JSON?)"
        )
    return None


def _floats(values, what: str, ndim: int = 1) -> np.ndarray:
    try:
        arr = np.array(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{what} must be numbers (null for undefined)") from exc
    if arr.ndim != ndim:
        raise InputError(f"{what} must be a {ndim}-D array, got shape {arr.shape}")
    return arr


def _same_length(name_a, a, name_b, b):
    if a.shape[-1] != b.shape[-1]:
        raise InputError(f"{name_a} has {a.shape[-1]} values but {name_b} has {b.shape[-1]}")


def profile_arrays(profile) -> dict:
    """s, radius and narrowest-point fields of a profile result or its JSON."""
    d = as_result_dict(profile, "profile")
    s = _floats(_lookup(d, ["profile.s_A"], "profile"), "profile.s_A")
    r = _floats(_lookup(d, ["profile.radius_A"], "profile"), "profile.radius_A")
    _same_length("profile.s_A", s, "profile.radius_A", r)
    if not np.isfinite(r).any():
        raise InputError("profile.radius_A holds no finite radius (every plane open)")
    return {
        "s_A": s,
        "radius_A": r,
        "min_radius_A": _float_or_nan(d.get("min_radius_A")),
        "min_s_A": _float_or_nan(d.get("min_s_A")),
        "min_residues": list(d.get("min_residues") or ()),
        "radius_set": d.get("radius_set") or "",
        "source": d.get("source") or "",
        "max_radius_A": _float_or_nan(d.get("max_radius_A")),
        "occluded": _occluded_flags(d, len(s)),
        "min_occluded": bool(d.get("min_occluded") or False),
    }


def _occluded_flags(d, n: int) -> np.ndarray:
    """Per-plane occluded flags of a profile's JSON (all False when absent)."""
    flags = (d.get("profile") or {}).get("occluded")
    if flags is None or len(flags) != n:
        return np.zeros(n, dtype=bool)
    return np.asarray(flags, dtype=bool)


def _float_or_nan(value) -> float:
    return float("nan") if value is None else float(value)


def residue_summary(labels: Sequence[str], *, limit: int = 3) -> str:
    """Condense residue labels ``"A:LEU12"`` over chains: ``"LEU12 x4, THR75 x4"``."""
    counts: dict[str, int] = {}
    for label in labels:
        key = str(label).split(":", 1)[-1]
        counts[key] = counts.get(key, 0) + 1
    parts = [f"{k} ×{n}" if n > 1 else k for k, n in counts.items()]
    if len(parts) > limit:
        parts = parts[:limit] + [f"+{len(parts) - limit} more"]
    return ", ".join(parts)


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Start and end (inclusive) indices of runs of True."""
    edges = np.diff(np.concatenate([[0], mask.astype(int), [0]]))
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1, strict=True))


def ion_reference_radii(
    ions: Sequence[str] | str | None, kinds: Sequence[str] | str = ("crystal", "hydrated")
) -> list[tuple[str, float]]:
    """Labelled reference radii (label, Å) from :mod:`poreprobe.bench.ions`.

    Parameters
    ----------
    ions : str or sequence of str
        Ion names (``"K"``, ``"Na+"``, ...).
    kinds : str or sequence of {"crystal", "hydrated", "stokes"}
        Which radii; a comma-separated string is accepted.
    """
    if not ions:
        return []
    if isinstance(ions, str):
        ions = [ions]
    if isinstance(kinds, str):
        kinds = [k for k in kinds.split(",") if k.strip()]
    if not kinds:
        raise InputError(f"ion radius kinds must name one or more of {', '.join(ION_RADIUS_KINDS)}")
    out = []
    for name in ions:
        ion = get_ion(name)
        for kind in kinds:
            kind = check_choice(kind.strip(), "ion radius kind", ION_RADIUS_KINDS)
            value = getattr(ion, f"{kind}_radius_A")
            kind_label = "Stokes" if kind == "stokes" else kind
            out.append(
                (f"{_ion_label(ion.symbol)} {kind_label} radius {value:.2f} Å", float(value))
            )
    return out


def _ion_label(symbol: str) -> str:
    m = re.fullmatch(r"([A-Za-z]+)(\d*)([+-])", symbol)
    if not m:
        return symbol
    sup = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
    return m.group(1) + (m.group(2) + m.group(3)).translate(sup)


def _checked_references(ion_radii) -> list[tuple[str, float]]:
    refs = []
    for ref in ion_radii:
        try:
            label, value = ref
            value = float(value)
        except (TypeError, ValueError) as exc:
            raise InputError(f"ion_radii entries must be (label, radius_A), got {ref!r}") from exc
        if not np.isfinite(value) or value <= 0:
            raise InputError(f"ion_radii entries need a radius_A > 0, got {ref!r}")
        refs.append((str(label), value))
    return refs


def _draw_reference_bands(ax, references):
    """Stacked grey bands up to each reference radius, each edged by a line at its radius.

    The bands are stacked from the smallest radius up (0 to the first, the first
    to the second, ...), darkest nearest 0, so each shade appears once and matches
    its legend entry.
    """
    lower = 0.0
    order = sorted(range(len(references)), key=lambda i: references[i][1])
    for rank, k in enumerate(order):
        label, value = references[k]
        if value > lower:
            ax.axhspan(
                lower,
                value,
                color=BAND_GREYS[min(rank, len(BAND_GREYS) - 1)],
                linewidth=0,
                zorder=0.5,
                label=label,
            )
        ax.axhline(value, color=BAND_EDGE_COLOR, linewidth=0.5, zorder=0.6)
        lower = max(lower, value)


# --------------------------------------------------------------------------- profile


@_styled
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
    ax = _axes(ax, width_mm, height_mm)
    s, r = data["s_A"], data["radius_A"]
    refs = _checked_references(ion_radii)
    _draw_reference_bands(ax, refs)
    for i, j in _runs(~np.isfinite(r)):
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
    occ = data["occluded"]
    for n_run, (i, j) in enumerate(_runs(occ)):
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
    _finish(ax)
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


# --------------------------------------------------------------------------- overlay

#: Where a trajectory result (the traj command's JSON) keeps each array.
_TRAJ_KEYS = {
    "s_A": ["s_A"],
    "radius_A": ["per_frame.radius_A"],
    "mean_A": ["per_plane.mean_radius_A"],
    "sd_A": ["per_plane.sd_radius_A"],
    "time_ps": ["per_frame.time_ps"],
    "frames": ["per_frame.frame"],
}


def trajectory_arrays(trajectory) -> dict:
    """s grid, per-frame radii, mean and SD of a trajectory result or its JSON.

    Reads ``s_A``, ``per_frame.radius_A`` (frames x levels), ``per_plane.mean_radius_A``
    and ``per_plane.sd_radius_A``, ``per_frame.time_ps`` and ``per_frame.frame``. Mean
    and SD are computed from the frames when absent (NaN where fewer than two frames
    are enclosed).
    """
    d = as_result_dict(trajectory, "trajectory")
    found = {
        k: _lookup(d, paths, "trajectory", required=k == "s_A") for k, paths in _TRAJ_KEYS.items()
    }
    s = _floats(found["s_A"], "s_A")
    radius = found["radius_A"]
    radius = None if radius is None else _floats(radius, "per_frame.radius_A (frames x levels)", 2)
    if radius is not None:
        _same_length("s_A", s, "per_frame.radius_A", radius)
    mean, sd = found["mean_A"], found["sd_A"]
    if mean is None or sd is None:
        if radius is None:
            raise InputError(
                "trajectory JSON holds neither per_frame.radius_A nor "
                "per_plane.mean_radius_A and per_plane.sd_radius_A"
            )
        mean, sd = _nan_mean_sd(radius)
    mean, sd = _floats(mean, "mean_radius_A"), _floats(sd, "sd_radius_A")
    _same_length("s_A", s, "mean_radius_A", mean)
    _same_length("s_A", s, "sd_radius_A", sd)
    n = radius.shape[0] if radius is not None else d.get("n_frames")
    time, frames = found["time_ps"], found["frames"]
    return {
        "s_A": s,
        "radius_A": radius,
        "mean_A": mean,
        "sd_A": sd,
        "n_frames": n,
        "time_ps": None if time is None else _floats(time, "time_ps"),
        "frames": None if frames is None else _floats(frames, "frames"),
        "radius_set": d.get("radius_set") or "",
        "source": d.get("source") or "",
    }


def _nan_mean_sd(radius: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean and sample SD per column over rows, NaN where fewer than two values are finite."""
    ok = np.isfinite(radius)
    n = ok.sum(axis=0)
    total = np.where(ok, radius, 0.0).sum(axis=0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(n > 1, total / n, np.nan)
        dev = np.where(ok, radius - mean, 0.0)
        sd = np.where(n > 1, np.sqrt((dev**2).sum(axis=0) / (n - 1)), np.nan)
    return mean, sd


def _is_trajectory(d: Mapping) -> bool:
    if "profile" in d or "s_A" not in d:
        return False
    return any(
        _lookup(d, _TRAJ_KEYS[k], "", required=False) is not None for k in ("radius_A", "mean_A")
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


@_styled
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
    ax = _axes(ax, width_mm, height_mm)
    refs = _checked_references(ion_radii)
    _draw_reference_bands(ax, refs)
    profiles, lo, hi = [], np.inf, -np.inf
    top = max([v for _, v in refs], default=0.0)
    for k, d in enumerate(dicts):
        color = LINE_COLORS[k % len(LINE_COLORS)]
        name = labels[k] if labels is not None else (d.get("source") or f"result {k + 1}")
        if _is_trajectory(d):
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
        mean, sd = _nan_mean_sd(radii)
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
    return _finish(ax)


# --------------------------------------------------------------------------- probe scan


def scan_arrays(scan) -> dict:
    """Accessible-radius profiles and capture curve of a probe-size scan or its JSON.

    ``passes`` and ``enters`` are None when the input does not say (e.g. the capture
    curve a match result carries).
    """
    d = as_result_dict(scan, "scan")
    p = _floats(_lookup(d, ["capture.probe_radius_A"], "scan"), "capture.probe_radius_A")
    c = _floats(_lookup(d, ["capture.capture_radius_A"], "scan"), "capture.capture_radius_A")
    _same_length("capture.probe_radius_A", p, "capture.capture_radius_A", c)
    stop = _lookup(d, ["capture.stop_s_A"], "scan", required=False)
    stop = np.full(p.shape, np.nan) if stop is None else _floats(stop, "capture.stop_s_A")
    _same_length("capture.probe_radius_A", p, "capture.stop_s_A", stop)
    flags = {}
    for name in ("passes", "enters"):
        value = _lookup(d, [f"capture.{name}"], "scan", required=False)
        flags[name] = None if value is None else np.array(value, dtype=bool).reshape(-1)
        if flags[name] is not None:
            _same_length("capture.probe_radius_A", p, f"capture.{name}", flags[name])
    s = _lookup(d, ["profiles.s_A"], "scan", required=False)
    acc = _lookup(d, ["profiles.accessible_radius_A"], "scan", required=False)
    if s is not None and acc is not None:
        s, acc = _floats(s, "s_A"), _floats(acc, "accessible_radius_A (probes x levels)", 2)
        _same_length("s_A", s, "accessible_radius_A", acc)
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


@_styled
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
    ax = _axes(ax, width_mm, height_mm)
    refs = _checked_references(ion_radii)
    _draw_reference_bands(ax, refs)
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
    return _finish(ax)


# --------------------------------------------------------------------------- capture


def match_arrays(match) -> dict:
    """Measured capture radius band and matching probe intervals of a match result."""
    d = as_result_dict(match, "match")
    c = float(_lookup(d, ["capture_radius_A"], "match"))
    sd = _lookup(d, ["capture_radius_sd_A"], "match", required=False)
    best = _lookup(d, ["probe_radius_A_best"], "match", required=False)
    intervals = _lookup(d, ["probe_radius_A_intervals"], "match", required=False) or []
    ivals = []
    for iv in intervals:
        if len(iv) != 2:
            raise InputError(f"probe_radius_A_intervals entries must be [low, high], got {iv!r}")
        ivals.append((float(iv[0]), float(iv[1])))
    ion = d.get("ion") or ""
    refs = []
    for item in _lookup(d, ["match.ion_radii"], "match", required=False) or []:
        if isinstance(item, Mapping) and item.get("radius_A") is not None:
            kind = str(item.get("kind", ""))
            kind = "Stokes" if kind.lower() == "stokes" else kind
            refs.append(
                (
                    f"{_ion_label(str(ion))} {kind} radius {float(item['radius_A']):.2f} Å",
                    float(item["radius_A"]),
                )
            )
    return {
        "capture_radius_A": c,
        "capture_radius_sd_A": _float_or_nan(sd),
        "probe_radius_A_best": _float_or_nan(best),
        "intervals": ivals,
        "ion": ion,
        "ion_radii": refs,
        "has_curve": _lookup(d, ["match.curve.probe_radius_A"], "match", required=False)
        is not None,
    }


@_styled
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
            "capture": _lookup(
                as_result_dict(match, "match"), ["match.curve"], "match (without a scan)"
            )
        }
    data = scan_arrays(scan)
    ax = _axes(ax, width_mm, CAPTURE_HEIGHT_MM if height_mm is None and ax is None else height_mm)
    p, c = data["probe_radius_A"], data["capture_radius_A"]
    order = np.argsort(p)
    top = float(np.nanmax(c)) if np.isfinite(c).any() else 1.0
    refs = _checked_references(ion_radii)
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
    _legend_below(ax)
    return _finish(ax)


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


# --------------------------------------------------------------------------- resistance


def resistance_arrays(resistance) -> dict:
    """Segment names, resistances and shares of a series-resistance result or its JSON."""
    d = as_result_dict(resistance, "resistance")
    segments = _lookup(d, ["segments"], "resistance")
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
    g = _lookup(d, ["conductance_pS"], "resistance", required=False)
    total = _lookup(d, ["total_resistance_Gohm", "resistance_Gohm"], "resistance", required=False)
    kinds = ["access" if seg.get("kind") == "access" else "pore" for seg in segments]
    return {
        "names": names,
        "resistance_Gohm": r,
        "share_percent": share,
        "kinds": kinds,
        "conductance_pS": _float_or_nan(g),
        "total_Gohm": float(r.sum()) if total is None else float(total),
    }


@_styled
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
    ax = _axes(ax, width_mm, height_mm)
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
    _finish(ax, ygrid=False)
    ax.spines["left"].set_visible(False)
    ax.tick_params(axis="y", length=0)
    ax.grid(axis="x", color=GRID_COLOR, linewidth=0.4, zorder=0)
    return ax


# --------------------------------------------------------------------------- kymograph


def _time_axis(time_ps: np.ndarray) -> tuple[np.ndarray, str]:
    """Times in the unit that suits their span: ps below 1 ns, ns below 1 µs, else µs."""
    span = float(np.nanmax(time_ps) - np.nanmin(time_ps)) if len(time_ps) else 0.0
    if span < 1e3:
        return time_ps, "Time (ps)"
    if span < 1e6:
        return time_ps / 1e3, "Time (ns)"
    return time_ps / 1e6, "Time (µs)"


@_styled
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
    ax = _axes(ax, width_mm, height_mm)
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
    _finish(ax, ygrid=False)
    for side in ("top", "right"):
        ax.spines[side].set_visible(True)
    return ax


# --------------------------------------------------------------------------- dispatch


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
        if "segments" in d and "conductance_pS" in d:
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
        elif _is_trajectory(d):
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
