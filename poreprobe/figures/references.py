"""Reference radii of ions, drawn as labelled grey bands on radius figures."""

from __future__ import annotations

import re
from collections.abc import Sequence

import numpy as np

from poreprobe._validate import check_choice
from poreprobe.bench.ions import get_ion
from poreprobe.errors import InputError
from poreprobe.figures.style import BAND_EDGE_COLOR, BAND_GREYS

ION_RADIUS_KINDS = ("crystal", "hydrated", "stokes")


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
            out.append((f"{ion_label(ion.symbol)} {kind_label} radius {value:.2f} Å", float(value)))
    return out


def ion_label(symbol: str) -> str:
    m = re.fullmatch(r"([A-Za-z]+)(\d*)([+-])", symbol)
    if not m:
        return symbol
    sup = str.maketrans("0123456789+-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁻")
    return m.group(1) + (m.group(2) + m.group(3)).translate(sup)


def checked_references(ion_radii) -> list[tuple[str, float]]:
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


def draw_reference_bands(ax, references):
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
