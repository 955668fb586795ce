"""Figure of a coordinate-error ensemble: the model's profile inside the members' 5-95 % band.

Draws from a :class:`poreprobe.scale.ensemble_result.ProfileEnsemble` or its JSON
(``s_A``, ``model_radius_A``, ``radius_band_A`` with ``p5``/``median``/``p95``,
``summary.min_radius_A``). matplotlib and the house style are imported only
when a figure is drawn.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from poreprobe.errors import InputError


def ensemble_arrays(ensemble) -> dict:
    """Plain arrays from an ensemble result or its JSON dictionary."""
    d = ensemble.to_dict() if hasattr(ensemble, "to_dict") else ensemble
    if not isinstance(d, Mapping):
        raise InputError(f"expected an ensemble result or its JSON, got {type(ensemble).__name__}")
    if "ensemble" in d and "radius_band_A" not in d:
        d = d["ensemble"]
    try:
        band = d["radius_band_A"]
        out = {
            "s_A": _floats(d["s_A"]),
            "model_radius_A": _floats(d["model_radius_A"]),
            "p5": _floats(band["p5"]),
            "median": _floats(band["median"]),
            "p95": _floats(band["p95"]),
            "n_members": int(d["n_members"]),
            "error_source": str(d.get("error_source", "")),
            "min_radius": dict(d.get("summary", {}).get("min_radius_A", {})),
        }
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(f"not an ensemble result: missing or bad {exc}") from exc
    n = len(out["s_A"])
    if any(len(out[k]) != n for k in ("model_radius_A", "p5", "median", "p95")):
        raise InputError("ensemble arrays must all have one value per plane")
    return out


def _floats(values) -> np.ndarray:
    return np.array([np.nan if v is None else float(v) for v in values], dtype=np.float64)


def plot_ensemble_band(
    ensemble,
    *,
    ax=None,
    ion_radii: Sequence[tuple[str, float]] = (),
    width_mm: float | None = None,
    height_mm: float | None = None,
):
    """Radius profile of the model with the ensemble's median and 5-95 % band.

    Parameters
    ----------
    ensemble : ProfileEnsemble or dict
    ax : Axes, optional
    ion_radii : sequence of (label, radius_A)
        Reference radii drawn as in the profile figure.
    width_mm, height_mm : float, optional

    Returns
    -------
    Axes
    """
    from poreprobe.figures import style

    data = ensemble_arrays(ensemble)
    return style.styled(_draw)(data, ax, ion_radii, width_mm, height_mm)


def _draw(data, ax, ion_radii, width_mm, height_mm):
    from poreprobe.figures import references, style

    ax = style.axes_for(ax, width_mm, height_mm)
    s = data["s_A"]
    refs = references.checked_references(ion_radii)
    references.draw_reference_bands(ax, refs)
    n = data["n_members"]
    ax.fill_between(
        s,
        data["p5"],
        data["p95"],
        color=style.LINE_COLORS[0],
        alpha=0.25,
        linewidth=0,
        zorder=2,
        label=f"5-95 % of {n} members",
    )
    ax.plot(
        s,
        data["median"],
        color=style.LINE_COLORS[0],
        linestyle=(0, (3, 1.5)),
        linewidth=0.8,
        zorder=3,
        label="ensemble median",
    )
    ax.plot(s, data["model_radius_A"], color="black", linewidth=1.0, zorder=4, label="model")
    values = np.concatenate([data["p95"], data["model_radius_A"], [v for _, v in refs]])
    top = np.nanmax(values) if np.isfinite(values).any() else 1.0
    ax.set_xlim(s[0], s[-1])
    ax.set_ylim(0, top * 1.18)
    ax.set_xlabel(style.S_LABEL)
    ax.set_ylabel(style.RADIUS_LABEL)
    ax.legend(loc="best", handlelength=1.6)
    style.finish_axes(ax)
    return ax
