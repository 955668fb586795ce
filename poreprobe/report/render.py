"""A :class:`~poreprobe.report.build.ReportData` as one self-contained HTML file.

Figures are drawn with poreprobe's own figure functions and inlined as SVG (no
file, no URL); the page is laid out by a Jinja2 template
(``poreprobe/report/templates/report.html.j2``) with its CSS inline, for the
screen and for printing on A4 or Letter. Nothing on the page loads anything:
no scripts, no fonts, no images from elsewhere.
"""

from __future__ import annotations

import io
import json
import math
import re

from poreprobe.io.export import to_json, write_atomic

#: What inline SVG does not need, and what would name an outside address in the page.
_SVG_PROLOGUE = re.compile(r"<\?xml[^>]*\?>\s*|<!DOCTYPE[^>]*>\s*", re.S)
_SVG_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)
_SVG_NAMESPACES = re.compile(r'\s+xmlns(:\w+)?="[^"]*"')
_SVG_SIZE = re.compile(r'<svg([^>]*?)\s+width="[^"]*"\s+height="[^"]*"')

DEFINITIONS = (
    (
        "pore radius",
        "radius of the largest sphere centred in each plane across the pore axis that "
        "touches no atom's van der Waals sphere (radius set as stated)",
    ),
    ("s", "position along the pore axis (Å), growing from the entry end when one is given"),
    (
        "probe radius",
        "radius of a spherical probe rolled in from the entry end; it passes when its "
        "centre can reach the far end",
    ),
    (
        "stop level",
        "how deep a probe gets; for probes that pass, the level of their bottleneck",
    ),
    (
        "capture radius",
        "R_open - p: the accessible radius R_open at the stop level minus the probe "
        "radius p (area-equivalent accessible radius unless stated)",
    ),
    (
        "bench capture radius",
        "r_c = I / (g |z| F D c) from a diffusion-limited current I (g = 2 pi, hemisphere)",
    ),
    (
        "access resistance",
        "rho / (4 a) at each mouth of radius a (Hall 1975), in series with Ohmic pore "
        "segments rho L / (pi r^2)",
    ),
    (
        "ensemble band",
        "median and 5-95 % range over copies of the model whose atoms are displaced by "
        "isotropic Gaussians with sigma = sqrt(B / 8 pi^2) per direction (or the stated "
        "uniform or resolution-based value)",
    ),
)

CAUTION = (
    "Every number in this report is a model-based estimate computed from the atomic "
    "model and the stated radius set, not a measurement. Pores in real proteins move; "
    "the ensemble bands show only how far the numbers move within the model's own "
    "coordinate error."
)


def svg_inline(fig_or_ax) -> str:
    """A figure as an SVG fragment for inlining: no prologue, metadata or namespaces,
    and sized by the page (``width: 100%``) instead of fixed points."""
    from matplotlib.figure import Figure

    from poreprobe.figures import style

    fig = fig_or_ax if isinstance(fig_or_ax, Figure) else fig_or_ax.figure
    buf = io.BytesIO()
    import matplotlib as mpl

    with mpl.rc_context(style.house_rc()):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    text = buf.getvalue().decode("utf-8")
    text = _SVG_PROLOGUE.sub("", text)
    text = _SVG_METADATA.sub("", text)
    text = _SVG_NAMESPACES.sub("", text)
    text = _SVG_SIZE.sub(r'<svg\1 class="figure" role="img"', text, count=1)
    return text.strip()


def _figures(data) -> list[dict]:
    import matplotlib.pyplot as plt
    from matplotlib.figure import Figure

    from poreprobe.figures.capture_plot import plot_capture
    from poreprobe.figures.probe_profiles import plot_probe_profiles
    from poreprobe.figures.profile_plot import plot_profile
    from poreprobe.figures.references import ion_reference_radii
    from poreprobe.figures.resistance_plot import plot_resistance

    bands = ion_reference_radii(
        str(data.check.verdict.ion).rstrip("+-0123456789"), ("crystal", "hydrated")
    )
    check = data.check.to_dict()
    out = []

    def add(key, title, caption, draw):
        drawn = draw()
        fig = drawn if isinstance(drawn, Figure) else drawn.figure
        out.append({"key": key, "title": title, "caption": caption, "svg": svg_inline(fig)})
        plt.close(fig)

    add(
        "profile",
        "Radius profile",
        f"Pore radius along the axis ({data.check.profile.radius_set} radii), with the "
        "crystal and hydrated radii of the ion and the constrictions labelled by their "
        "lining residues.",
        lambda: plot_profile(
            data.check.profile, ion_radii=bands, constrictions=check.get("constrictions")
        ),
    )
    if data.ensemble is not None:
        from poreprobe.figures.ensemble_band import plot_ensemble_band

        add(
            "ensemble",
            "Coordinate-error band",
            f"The model's profile inside the 5-95 % band of {data.ensemble.n_members} "
            f"perturbed copies ({data.ensemble.error_source}).",
            lambda: plot_ensemble_band(data.ensemble, ion_radii=bands),
        )
    if data.scan is not None:
        add(
            "probes",
            "Probe-size scan",
            "Accessible radius along the axis of a few chosen probes (the smallest, the "
            "largest that passes, the smallest that stops, the largest that enters), one "
            "panel each; the dot marks where a probe stops, dotted stretches are levels "
            "open wider than the searched region. The table lists every probe.",
            lambda: plot_probe_profiles(data.scan, ion_radii=bands[:1]),
        )
        add(
            "capture",
            "Capture curve",
            "Capture radius against probe radius"
            + (
                ", with the bench capture radius band and the matching probe radii."
                if data.match
                else "."
            ),
            lambda: plot_capture(data.scan, match=data.match),
        )
    if data.resistance is not None:
        add(
            "resistance",
            "Resistance breakdown",
            "Series resistance of the pore segments and the access resistance at each mouth.",
            lambda: plot_resistance(data.resistance),
        )
    return out


def _num(value, digits: int = 2, unit: str = "") -> str:
    try:
        v = float(value)
    except (TypeError, ValueError):
        return "n/a"
    if not math.isfinite(v):
        return "n/a"
    return f"{v:.{digits}f}" + (f" {unit}" if unit else "")


def _band(band, digits: int = 2) -> str:
    return "" if band is None else f"5-95 %: {_num(band.p5, digits)}-{_num(band.p95, digits)}"


def context(data) -> dict:
    """The template's variables (plain strings, numbers and lists)."""
    check = json.loads(to_json(data.check))
    prof = data.check.profile
    ens = data.ensemble
    headline = [
        {
            "label": "narrowest radius",
            "value": _num(prof.min_radius_A, 2, "Å"),
            "band": _band(ens.min_radius) if ens else "",
        },
        {
            "label": "at s",
            "value": _num(prof.min_s_A, 1, "Å"),
            "band": _band(ens.min_s, 1) if ens else "",
        },
        {
            "label": f"verdict ({check['verdict']['ion']})",
            "value": check["verdict"]["verdict"],
            "band": (
                ", ".join(f"{k} {v:.0%}" for k, v in ens.verdict_shares.items() if v > 0)
                if ens and ens.verdict_shares
                else ""
            ),
        },
    ]
    scan_rows = []
    if data.scan is not None:
        s = data.scan
        headline.append(
            {
                "label": "largest passing probe",
                "value": _num(s.largest_passing_probe_A, 2, "Å"),
                "band": "",
            }
        )
        for i, p in enumerate(s.probe_radius_A):
            if not s.enters[i] and i > 0 and not s.enters[i - 1]:
                continue  # one row for the first probe that no longer enters
            scan_rows.append(
                {
                    "probe": _num(p),
                    "enters": "yes" if s.enters[i] else "no",
                    "passes": "yes" if s.passes[i] else "no",
                    "stop": _num(s.stop_s_A[i], 1),
                    "capture": _num(s.capture_radius_A[i]),
                }
            )
    resistance = None
    if data.resistance is not None:
        r = json.loads(to_json(data.resistance))
        headline.append(
            {"label": "conductance", "value": _num(r["conductance_pS"], 1, "pS"), "band": ""}
        )
        resistance = {
            "model": r["model"],
            "resistivity": r["resistivity_source"],
            "total": _num(r["resistance_Gohm"], 2, "GΩ"),
            "conductance": _num(r["conductance_pS"], 1, "pS"),
            "segments": [
                {
                    "name": seg["name"],
                    "range": f"{_num(seg['s_start_A'], 1)} to {_num(seg['s_end_A'], 1)}",
                    "radius": _num(seg["radius_A"]),
                    "resistance": _num(seg["resistance_Gohm"], 3),
                    "share": _num(seg["share_percent"], 1),
                }
                for seg in r["segments"]
            ],
        }
    match = None
    if data.match:
        m = data.match
        ivs = ", ".join(f"{a:.2f}-{b:.2f} Å" for a, b in m["probe_radius_A_intervals"])
        match = {
            "capture": f"{_num(m['capture_radius_A'])} ± {_num(m['capture_radius_sd_A'])} Å",
            "current": f"{m['capture']['current_pA']:g} ± {m['capture']['current_sd_pA']:g} pA",
            "conc": f"{m['capture']['conc_mM']:g} mM",
            "best": _num(m["probe_radius_A_best"], 2, "Å"),
            "intervals": ivs or "none",
            "note": m.get("note", ""),
        }
        headline.append({"label": "best matching probe", "value": match["best"], "band": ""})
    ensemble = None
    if ens is not None:
        ensemble = {
            "n": ens.n_members,
            "seed": ens.seed,
            "source": ens.error_source,
            "rule": ens.error_rule,
            "sigma": f"median {ens.sigma_median_A:.2f} Å, max {ens.sigma_max_A:.2f} Å",
            "rows": [
                ("narrowest radius (Å)", _num(ens.model_min_radius_A), ens.min_radius),
                ("its position s (Å)", _num(ens.model_min_s_A, 1), ens.min_s),
            ],
            "caveat": ens.CAVEAT,
        }
    return {
        "title": data.title,
        "prov": data.provenance.to_dict(),
        "headline": headline,
        "check": check,
        "verdict_message": check["verdict"]["message"],
        "findings": check["findings"],
        "counts": check["counts"],
        "constrictions": check["constrictions"],
        "lining": check["lining"],
        "axis": check["axis"],
        "radius_set": prof.radius_set,
        "scan_rows": scan_rows,
        "scan_entry": None if data.scan is None else data.scan.entry,
        "match": match,
        "resistance": resistance,
        "ensemble": ensemble,
        "warnings": list(data.warnings),
        "notes": list(data.extra_notes) + list(check.get("notes", [])),
        "definitions": DEFINITIONS,
        "caution": CAUTION,
        "fmt": _num,
    }


def render_html(data) -> str:
    """The report as one HTML document (a string)."""
    import jinja2
    from markupsafe import Markup

    env = jinja2.Environment(
        loader=jinja2.PackageLoader("poreprobe.report", "templates"),
        autoescape=jinja2.select_autoescape(["html", "j2"]),
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    ctx = context(data)
    ctx["figures"] = [{**f, "svg": Markup(f["svg"])} for f in _figures(data)]
    return env.get_template("report.html.j2").render(**ctx)


def write_html(data, path) -> str:
    """Render and write the report atomically; returns the HTML."""
    html = render_html(data)
    write_atomic(path, html)
    return html
