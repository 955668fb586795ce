"""The radius profile with the pore chemistry under it (one figure, shared s axis).

Top: the radius profile (:func:`poreprobe.figures.plot_profile`). Middle: the
per-level net charge of the lining residues (bars, e) and their hydropathy (line, on
the chosen scale, right axis), both smoothed over the stated window, with the rings of
two or more residues marked at their levels. Bottom: the chosen ion's energy on the
centre line from the screened Coulomb estimate (k_B T), labelled as the crude
continuum estimate it is. Drawn from a result or its JSON (the ``chemistry`` object of
``profile`` or ``check``), in the house style.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe._validate import check_range
from poreprobe.errors import InputError
from poreprobe.figures.data import as_result_dict
from poreprobe.figures.profile_plot import plot_profile
from poreprobe.figures.style import (
    DEFAULT_DPI,
    DEFAULT_WIDTH_MM,
    FONT_PT,
    GRID_COLOR,
    OKABE_ITO,
    S_LABEL,
    SMALL_FONT_PT,
    house_rc,
    save_figure,
)

#: Default height of the three-panel figure (mm); one journal column wide.
CHEMISTRY_HEIGHT_MM = 120.0


def _style_axes(ax) -> None:
    """House ticks and a light horizontal grid (kept here, explicit, outside rc)."""
    ax.tick_params(labelsize=FONT_PT - 0.5, width=0.6, length=2.5, direction="out")
    ax.spines["top"].set_visible(False)
    ax.grid(axis="y", color=GRID_COLOR, linewidth=0.4, zorder=0)
    ax.set_axisbelow(True)


def _chemistry_dict(result) -> tuple[dict, dict]:
    d = as_result_dict(result, "profile")
    chem = d.get("chemistry")
    if not isinstance(chem, Mapping) or "levels" not in chem or "potential" not in chem:
        raise InputError(
            "the result holds no 'chemistry' object (profile or check JSON written with "
            "pore chemistry)"
        )
    return d, dict(chem)


def _array(values, what: str) -> np.ndarray:
    try:
        return np.array([np.nan if v is None else v for v in values], dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(f"chemistry {what} must be numbers") from exc


def plot_profile_chemistry(
    result,
    *,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Radius profile with per-level charge, hydropathy and ion energy panels under it.

    Parameters
    ----------
    result : dict or result with ``to_dict``
        A profile or check result (or its JSON) that holds ``chemistry``.
    ion_radii : sequence of (label, radius_A)
        Reference ion radii drawn on the radius panel.
    width_mm, height_mm : float, optional
        Figure size (default 85 x 120 mm).

    Returns
    -------
    Figure
    """
    import matplotlib as mpl
    from matplotlib.figure import Figure

    d, chem = _chemistry_dict(result)
    levels, pot = chem["levels"], chem["potential"]
    s = _array(levels["s_A"], "levels.s_A")
    charge = _array(levels["charge_smoothed_e"], "levels.charge_smoothed_e")
    hydro = _array(levels["hydropathy_smoothed"], "levels.hydropathy_smoothed")
    energy = _array(pot["energy_kT"], "potential.energy_kT")
    if not (len(s) == len(charge) == len(hydro) == len(energy)):
        raise InputError("chemistry levels and potential must have one value per plane")
    width = DEFAULT_WIDTH_MM if width_mm is None else width_mm
    height = CHEMISTRY_HEIGHT_MM if height_mm is None else height_mm
    width = check_range(width, "width_mm", 20, 600)
    height = check_range(height, "height_mm", 20, 600)
    scale = chem.get("hydropathy_scale", {}) or {}
    window = levels.get("smoothing_window_A")
    with mpl.rc_context(house_rc()):
        fig = Figure(figsize=(width / 25.4, height / 25.4), layout="constrained")
        ax_r, ax_c, ax_e = fig.subplots(
            3, 1, sharex=True, gridspec_kw={"height_ratios": (2.2, 1.4, 1.0)}
        )
        plot_profile(d, ax=ax_r, ion_radii=ion_radii)
        ax_r.set_xlabel("")
        step = float(np.median(np.diff(s))) if len(s) > 1 else 1.0
        colours = np.where(charge < 0, OKABE_ITO["blue"], OKABE_ITO["vermillion"]).tolist()
        ax_c.bar(s, np.nan_to_num(charge), width=step, color=colours, linewidth=0, zorder=2)
        ax_c.axhline(0, color="#7f7f7f", linewidth=0.5, zorder=1)
        ax_c.set_ylabel("Net charge (e)")
        ax_h = ax_c.twinx()
        ax_h.plot(s, hydro, color=OKABE_ITO["bluish_green"], zorder=3)
        ax_h.set_ylabel(f"Hydropathy\n({scale.get('name', 'scale')})", fontsize=FONT_PT)
        ax_h.spines["right"].set_visible(True)
        ax_h.tick_params(labelsize=FONT_PT - 0.5, width=0.6, length=2.5)
        for ring in chem.get("rings") or ():
            if int(ring.get("count", 1)) > 1:
                ax_c.axvline(float(ring["s_A"]), color="#bdbdbd", linewidth=0.4, zorder=0)
        ax_c.set_title(
            f"charge (bars), hydropathy (line); pH {chem.get('pH', float('nan')):g}, "
            f"{window:g} Å mean",
            fontsize=SMALL_FONT_PT,
            loc="left",
        )
        ax_e.plot(s, energy, color=OKABE_ITO["reddish_purple"])
        ax_e.axhline(0, color="#7f7f7f", linewidth=0.5)
        ax_e.set_ylabel(f"{pot.get('ion', 'ion')} energy (kT)")
        ax_e.set_xlabel(S_LABEL)
        ax_e.set_title(
            f"screened Coulomb, ε {pot.get('dielectric'):g}, I {pot.get('ionic_strength_M'):g} M:"
            " crude estimate",
            fontsize=SMALL_FONT_PT,
            loc="left",
        )
        for ax in (ax_c, ax_e):
            _style_axes(ax)
    return fig


def save_profile_chemistry(result, path, *, dpi: float = DEFAULT_DPI, **options) -> None:
    """Draw :func:`plot_profile_chemistry` and write it (PNG, SVG or PDF), atomically."""
    save_figure(plot_profile_chemistry(result, **options), path, dpi=dpi)
