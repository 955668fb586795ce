"""Figures: every kind renders from saved JSON and its axes carry the data's range."""

from __future__ import annotations

import json
import struct
import xml.etree.ElementTree as ET

import matplotlib as mpl
import numpy as np
import pytest

import poreprobe
from poreprobe.bench.ions import get_ion
from poreprobe.cli.main import main
from poreprobe.errors import InputError
from poreprobe.figures.capture_plot import plot_capture
from poreprobe.figures.data import profile_arrays, residue_summary
from poreprobe.figures.draw import draw_figure
from poreprobe.figures.kinds import FIGURE_KINDS
from poreprobe.figures.kymograph_plot import plot_kymograph
from poreprobe.figures.overlay_plot import common_grid, plot_overlay
from poreprobe.figures.probes_plot import plot_probes
from poreprobe.figures.profile_plot import plot_profile
from poreprobe.figures.references import ion_reference_radii
from poreprobe.figures.resistance_plot import plot_resistance
from poreprobe.figures.style import (
    CAPTURE_HEIGHT_MM,
    DEFAULT_HEIGHT_MM,
    DEFAULT_WIDTH_MM,
    FONT_PT,
    LINE_COLORS,
    OKABE_ITO,
    OPEN_COLOR,
    RADIUS_CMAP,
    SMALL_FONT_PT,
    new_figure,
    radius_colors,
)
from poreprobe.geometry import synthetic
from poreprobe.io.export import to_json

# --------------------------------------------------------------------------- inputs


def _hourglass_profile(waist_A: float, source: str):
    z = np.arange(-10, 10.1, 1.0)
    radii = waist_A + 5.0 * (z / 10) ** 2
    atoms = synthetic.ring_stack(radii, z, atoms_per_ring=24, chains=4)
    axis = poreprobe.PoreAxis([0, 0, 0], [0, 0, 1], "user")
    prof = poreprobe.radius_profile(atoms, axis, step_A=0.5, margin_A=2.0, max_radius_A=5.5)
    d = json.loads(to_json(prof))
    d["source"] = source
    return d


@pytest.fixture(scope="module")
def profile_a():
    return _hourglass_profile(4.0, "model A")


@pytest.fixture(scope="module")
def profile_b():
    return _hourglass_profile(4.6, "model B")


def _nulls(arr):
    return [
        [None if not np.isfinite(v) else float(v) for v in row]
        if np.ndim(row)
        else (None if not np.isfinite(row) else float(row))
        for row in arr
    ]


@pytest.fixture(scope="module")
def scan():
    """A probe-size scan in the scan command's JSON layout (values invented for the test)."""
    s = np.arange(-10, 10.01, 0.5)
    p = np.arange(0.5, 3.01, 0.5)
    free = 2.0 + 4.0 * (s / 10) ** 2
    acc, stop, passes, cap = [], [], [], []
    for pr in p:
        if pr <= 2.0:
            acc.append(free - 0.1 * pr)
            stop.append(np.nan)
            passes.append(True)
        else:
            st = -10 * np.sqrt((pr - 2.0) / 4.0)
            acc.append(np.where(s <= st, free - 0.1 * pr, np.nan))
            stop.append(st)
            passes.append(False)
        cap.append(max(0.0, 2.5 - pr))
    return {
        "capture": {
            "probe_radius_A": p.tolist(),
            "capture_radius_A": cap,
            "stop_s_A": _nulls(np.array(stop)),
            "passes": passes,
        },
        "profiles": {
            "s_A": s.tolist(),
            "probe_radius_A": p.tolist(),
            "accessible_radius_A": _nulls(np.array(acc)),
        },
        "radius_set": "bondi",
        "source": "scan fixture",
    }


@pytest.fixture(scope="module")
def match():
    return {
        "capture_radius_A": 1.2,
        "capture_radius_sd_A": 0.2,
        "probe_radius_A_best": 1.3,
        "probe_radius_A_intervals": [[1.1, 1.5]],
        "source": "match fixture",
    }


@pytest.fixture(scope="module")
def resistance():
    return {
        "segments": [
            {"name": "entry access", "resistance_Gohm": 0.5, "share_percent": 5.0},
            {"name": "cavity", "resistance_Gohm": 1.5, "share_percent": 15.0},
            {"name": "filter", "resistance_Gohm": 7.0, "share_percent": 70.0},
            {"name": "vestibule", "resistance_Gohm": 0.6, "share_percent": 6.0},
            {"name": "far access", "resistance_Gohm": 0.4, "share_percent": 4.0},
        ],
        "conductance_pS": 100.0,
        "source": "resistance fixture",
    }


@pytest.fixture(scope="module")
def trajectory():
    rng = np.random.default_rng(7)
    s = np.arange(-8, 8.01, 0.5)
    radius = np.array(
        [
            2.0 + 0.5 * np.sin(f / 3) + 3 * (s / 8) ** 2 + 0.1 * rng.standard_normal(len(s))
            for f in range(12)
        ]
    )
    radius[:, :2] = np.nan  # open at the low end
    return {
        "s_A": s.tolist(),
        "n_frames": 12,
        "source": "trajectory fixture",
        "per_frame": {
            "frame": list(range(12)),
            "time_ps": (np.arange(12) * 100.0).tolist(),
            "radius_A": _nulls(radius),
        },
    }


@pytest.fixture(scope="module")
def saved(tmp_path_factory, profile_a, profile_b, scan, match, resistance, trajectory):
    folder = tmp_path_factory.mktemp("json")
    paths = {}
    for name, data in [
        ("profile_a", profile_a),
        ("profile_b", profile_b),
        ("scan", scan),
        ("match", match),
        ("resistance", resistance),
        ("trajectory", trajectory),
    ]:
        paths[name] = folder / f"{name}.json"
        paths[name].write_text(json.dumps(data))
    return paths


KIND_INPUTS = {
    "profile": ["profile_a"],
    "overlay": ["profile_a", "profile_b", "trajectory"],
    "probes": ["scan"],
    "capture": ["scan", "match"],
    "resistance": ["resistance"],
    "kymograph": ["trajectory"],
}


def _png_size(path):
    with open(path, "rb") as fh:
        head = fh.read(24)
    assert head[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", head[16:24])


# --------------------------------------------------------------------------- every kind, files


@pytest.mark.parametrize("kind", FIGURE_KINDS)
def test_each_kind_renders_png_and_svg_from_saved_json(kind, saved, tmp_path):
    inputs = [str(saved[name]) for name in KIND_INPUTS[kind]]
    png, svg = tmp_path / f"{kind}.png", tmp_path / f"{kind}.svg"
    assert main(["plot", kind, *inputs, "--figure", str(png), "--dpi", "100", "--quiet"]) == 0
    assert main(["plot", kind, *inputs, "--figure", str(svg), "--quiet"]) == 0
    width, height = _png_size(png)
    default_h = CAPTURE_HEIGHT_MM if kind == "capture" else DEFAULT_HEIGHT_MM
    assert width == pytest.approx(DEFAULT_WIDTH_MM / 25.4 * 100, abs=1.5)
    assert height == pytest.approx(default_h / 25.4 * 100, abs=1.5)
    root = ET.parse(svg).getroot()  # well-formed XML
    assert root.tag.endswith("svg")
    ax = draw_figure(kind, [json.loads(saved[n].read_text()) for n in KIND_INPUTS[kind]])
    labels = [lab for lab in (ax.get_xlabel(), ax.get_ylabel()) if lab]
    assert labels and all(lab.endswith(("(Å)", "(%)", "(ps)", "(ns)", "(µs)")) for lab in labels)
    text = svg.read_text()
    assert all(lab in text for lab in labels)  # text kept as editable text


def test_size_in_mm_and_format_by_suffix(saved, tmp_path):
    png, pdf = tmp_path / "f.png", tmp_path / "f.pdf"
    args = [
        "plot",
        "profile",
        str(saved["profile_a"]),
        "--width-mm",
        "174",
        "--height-mm",
        "50",
        "--dpi",
        "150",
        "--quiet",
    ]
    assert main([*args, "--figure", str(png)]) == 0
    assert main([*args, "--figure", str(pdf)]) == 0
    assert _png_size(png) == pytest.approx((174 / 25.4 * 150, 50 / 25.4 * 150), abs=1.5)
    assert pdf.read_bytes()[:5] == b"%PDF-"


@pytest.mark.parametrize(
    "argv, message",
    [
        (["profile", "{profile_a}", "--figure", "{out}.jpg"], "must end in .png, .svg, .pdf"),
        (["profile", "{missing}", "--figure", "{out}.png"], "no such file"),
        (["kymograph", "{resistance}", "--figure", "{out}.png"], "needs exactly one trajectory"),
        (
            ["profile", "{profile_a}", "--figure", "{out}.png", "--width-mm", "5"],
            "width_mm must be",
        ),
        (["profile", "{profile_a}", "--figure", "{out}.png", "--figure-ion", "Xx"], "unknown ion"),
        (
            [
                "profile",
                "{profile_a}",
                "--figure",
                "{out}.png",
                "--figure-ion",
                "K",
                "--figure-ion-radii",
                "wet",
            ],
            "ion radius kind must be one of",
        ),
        (["resistance", "{resistance}", "--figure", "{out}.png", "--band"], "--band applies"),
    ],
)
def test_plot_bad_input_is_one_line_exit_2_and_no_file(argv, message, saved, tmp_path, capsys):
    out = tmp_path / "fig"
    fill = {k: str(v) for k, v in saved.items()} | {
        "out": str(out),
        "missing": str(tmp_path / "no.json"),
    }
    assert main(["plot", *[a.format(**fill) for a in argv]]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("poreprobe: error: ")
    assert message in err
    assert not list(tmp_path.glob("fig*"))


def test_not_a_json_file_is_rejected(tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text("not json")
    assert main(["plot", "profile", str(bad), "--figure", str(tmp_path / "f.png")]) == 2
    assert "is not a JSON file" in capsys.readouterr().err


# --------------------------------------------------------------------------- axes carry the data


def _finite(a):
    a = np.asarray(a, dtype=float)
    return a[np.isfinite(a)]


def test_profile_axes_carry_profile_and_ion_bands(profile_a):
    refs = ion_reference_radii("K", "crystal,hydrated")
    ax = draw_figure("profile", [profile_a], ion_radii=refs)
    s = np.array(profile_a["profile"]["s_A"], dtype=float)
    r = np.array(profile_a["profile"]["radius_A"], dtype=float)
    line = next(ln for ln in ax.lines if ln.get_label().startswith("pore radius"))
    np.testing.assert_allclose(line.get_xdata(), s)
    np.testing.assert_allclose(line.get_ydata(), r, equal_nan=True)
    assert ax.get_xlim() == pytest.approx((s[0], s[-1]))
    assert ax.get_ylim()[0] == 0 and ax.get_ylim()[1] >= np.nanmax(r)
    assert "bondi" in line.get_label()
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    # crystal 1.38 and hydrated 3.31 Å: Shannon 1976 (CN 6) and Nightingale 1959 (bench.ions)
    assert "K⁺ crystal radius 1.38 Å" in labels and "K⁺ hydrated radius 3.31 Å" in labels
    assert "open to bulk" in labels  # the wide ends count as open (max 5.5 Å)
    bands = {
        p.get_label(): p.get_path()
        .get_extents(p.get_transform())
        .transformed(ax.transData.inverted())
        for p in ax.patches
        if p.get_label().startswith("K")
    }
    crystal, hydrated = get_ion("K").crystal_radius_A, get_ion("K").hydrated_radius_A
    # stacked bands: 0 to the crystal radius, then up to the hydrated radius
    assert (
        bands["K⁺ crystal radius 1.38 Å"].y0,
        bands["K⁺ crystal radius 1.38 Å"].y1,
    ) == pytest.approx((0, crystal))
    assert (
        bands["K⁺ hydrated radius 3.31 Å"].y0,
        bands["K⁺ hydrated radius 3.31 Å"].y1,
    ) == pytest.approx((crystal, hydrated))
    note = ax.texts[0].get_text()
    assert f"{profile_a['min_radius_A']:.2f} Å" in note
    assert "Ala" in note and "(A-D)" in note  # four symmetric copies grouped by chain


def test_profile_constrictions_from_a_check_result(profile_a):
    check = {
        "lining": [],
        "constrictions": [
            {"s_A": -9.0, "radius_A": 3.1, "residues": ["A:LEU12", "B:LEU12"]},
            {"s_A": 0.0, "radius_A": 2.3, "residues": ["A:THR75"]},
        ],
    }
    ax = draw_figure("profile", [profile_a, check])
    texts = [t.get_text() for t in ax.texts]
    assert texts == ["2.30 Å\nThr75 (A)", "3.10 Å\nLeu12 (A, B)"]  # narrowest first


def test_overlay_axes_carry_each_profile_and_the_band(profile_a, profile_b, trajectory):
    ax = plot_overlay([profile_a, profile_b], band=True)
    named = {ln.get_label(): ln for ln in ax.lines}
    for d in (profile_a, profile_b):
        np.testing.assert_allclose(
            named[d["source"]].get_ydata(),
            np.array(d["profile"]["radius_A"], dtype=float),
            equal_nan=True,
        )
    grid, radii = common_grid([profile_arrays(profile_a), profile_arrays(profile_b)])
    mean_line = ax.lines[-1]
    np.testing.assert_allclose(mean_line.get_ydata(), np.mean(radii, axis=0), equal_nan=True)
    band = ax.collections[-1].get_paths()[0].vertices
    sd = np.std(radii, axis=0, ddof=1)
    assert band[:, 1].min() == pytest.approx(np.nanmin(np.mean(radii, 0) - sd), abs=1e-9)
    assert band[:, 1].max() == pytest.approx(np.nanmax(np.mean(radii, 0) + sd), abs=1e-9)
    s = np.array(profile_a["profile"]["s_A"], dtype=float)
    assert ax.get_xlim() == pytest.approx((s[0], s[-1]))

    ax = plot_overlay([trajectory])
    radius = np.array(trajectory["per_frame"]["radius_A"], dtype=float)
    mean = ax.lines[0].get_ydata()
    np.testing.assert_allclose(mean[2:], radius[:, 2:].mean(0))
    assert ax.lines[0].get_label().endswith("mean of 12 frames")
    assert ax.get_ylim()[1] >= np.nanmax(radius.mean(0) + radius.std(0, ddof=1))


def test_probe_axes_carry_every_probe_and_colour_range(scan):
    ax = plot_probes(scan)
    p = np.array(scan["capture"]["probe_radius_A"])
    acc = np.array(scan["profiles"]["accessible_radius_A"], dtype=float)
    s = scan["profiles"]["s_A"]
    profile_lines = [ln for ln in ax.lines if len(ln.get_xdata()) == len(s)]
    assert len(profile_lines) == len(p)
    drawn = sorted(tuple(np.nan_to_num(ln.get_ydata(), nan=-1)) for ln in profile_lines)
    assert drawn == sorted(tuple(np.nan_to_num(row, nan=-1)) for row in acc)
    bar = [a for a in ax.figure.axes if a is not ax][0]  # the colour bar
    assert bar.get_ylim() == pytest.approx((p.min(), p.max()))
    stops = [ln for ln in ax.lines if len(ln.get_xdata()) == 1]
    assert sorted(float(ln.get_xdata()[0]) for ln in stops) == pytest.approx(
        sorted(_finite(scan["capture"]["stop_s_A"]))
    )
    assert ax.get_xlim() == pytest.approx((s[0], s[-1]))
    assert ax.get_ylim()[1] >= np.nanmax(acc)


def test_capture_axes_carry_curve_band_and_interval(scan, match):
    ax = plot_capture(scan, match=match)
    p = np.array(scan["capture"]["probe_radius_A"])
    c = np.array(scan["capture"]["capture_radius_A"])
    curve = next(ln for ln in ax.lines if len(ln.get_xdata()) == len(p))
    np.testing.assert_allclose(curve.get_xdata(), p)
    np.testing.assert_allclose(curve.get_ydata(), c)
    lo, hi = ax.get_xlim()
    assert lo <= p.min() and hi >= p.max()
    assert ax.get_ylim()[1] >= max(c.max(), 1.2 + 0.2)
    extents = {
        p_.get_label(): p_.get_path()
        .get_extents(p_.get_transform())
        .transformed(ax.transData.inverted())
        for p_ in ax.patches
    }
    band = extents["measured 1.20 ± 0.20 Å"]
    assert (band.y0, band.y1) == pytest.approx((1.0, 1.4))
    interval = extents["matching probe radii"]
    assert (interval.x0, interval.x1) == pytest.approx((1.1, 1.5))
    best = next(ln for ln in ax.lines if ln.get_label() == "top-ranked match p = 1.30 Å")
    assert best.get_xdata()[0] == pytest.approx(1.3)


def test_resistance_axes_carry_segments(resistance):
    ax = plot_resistance(resistance)
    shares = [b.get_width() for b in ax.patches]
    assert shares == [s["share_percent"] for s in resistance["segments"]]
    assert [t.get_text() for t in ax.get_yticklabels()] == [
        s["name"] for s in resistance["segments"]
    ]
    assert ax.get_xlim()[1] >= 70.0
    assert "100 pS" in ax.get_title(loc="left") and "model estimate" in ax.get_title(loc="left")
    assert ax.texts[2].get_text() == "7 GΩ (70 %)"


def test_kymograph_axes_carry_frames_levels_and_radius_range(trajectory):
    ax = plot_kymograph(trajectory)
    mesh = ax.collections[0]
    radius = np.array(trajectory["per_frame"]["radius_A"], dtype=float)
    np.testing.assert_allclose(
        np.ma.filled(mesh.get_array(), np.nan).reshape(radius.T.shape), radius.T, equal_nan=True
    )
    assert (mesh.norm.vmin, mesh.norm.vmax) == pytest.approx((np.nanmin(radius), np.nanmax(radius)))
    t_ns = np.array(trajectory["per_frame"]["time_ps"]) / 1000
    lo, hi = ax.get_xlim()
    assert lo <= t_ns[0] and hi >= t_ns[-1]
    lo, hi = ax.get_ylim()
    assert lo <= trajectory["s_A"][0] and hi >= trajectory["s_A"][-1]
    assert ax.get_xlabel() == "Time (ns)"


# --------------------------------------------------------------------------- style and helpers


def test_figures_use_the_house_style_and_a_given_axes(profile_a):
    fig, ax = new_figure(width_mm=114, height_mm=70)
    assert tuple(fig.get_size_inches() * 25.4) == pytest.approx((114, 70))
    assert plot_profile(profile_a, ax=ax) is ax
    sizes = {t.get_fontsize() for t in [ax.xaxis.label, ax.yaxis.label]}
    assert sizes == {FONT_PT}
    assert min(t.get_fontsize() for t in ax.texts) >= SMALL_FONT_PT >= 6
    assert all(ln.get_color() in LINE_COLORS + tuple(OKABE_ITO.values()) for ln in ax.lines)
    with pytest.raises(InputError, match="ax must be a matplotlib Axes"):
        plot_profile(profile_a, ax="axes")


def test_radius_colours_follow_the_perceptual_map():
    cmap = mpl.colormaps[RADIUS_CMAP]
    rgb = radius_colors([1.0, 3.0, np.nan, 9.0], vmin_A=1.0, vmax_A=3.0)
    assert rgb.dtype == np.uint8 and rgb.shape == (4, 3)
    np.testing.assert_array_equal(rgb[0], np.round(np.array(cmap(0.0)[:3]) * 255))
    np.testing.assert_array_equal(rgb[1], np.round(np.array(cmap(1.0)[:3]) * 255))
    np.testing.assert_array_equal(rgb[3], rgb[1])  # clipped
    np.testing.assert_array_equal(rgb[2], np.round(np.array(mpl.colors.to_rgb(OPEN_COLOR)) * 255))
    # perceptual ordering (common practice for sequential maps): lightness rises with radius
    lum = radius_colors(np.linspace(1, 3, 20), vmin_A=1, vmax_A=3) @ [0.2126, 0.7152, 0.0722]
    assert np.all(np.diff(lum) > 0)
    with pytest.raises(InputError, match="vmax_A > vmin_A"):
        radius_colors([1.0], vmin_A=2.0, vmax_A=2.0)


def test_residue_summary_and_ion_radii():
    got = residue_summary(["A:LEU12", "B:LEU12", "A:THR75", "C:LEU12", "D:LEU12"])
    assert got == "Leu12 (A-D), Thr75 (A)"
    assert residue_summary([f"A:GLY{k}" for k in range(5)], limit=2) == (
        "Gly0 (A), Gly1 (A), +3 more"
    )
    assert residue_summary(["A:TRP15", "A:TRP13", "B:TRP15"]) == "Trp15 (A, B), Trp13 (A)"
    refs = ion_reference_radii(["Na", "Cl-"], "crystal,stokes")
    assert [round(v, 6) for _, v in refs] == [
        round(v, 6)
        for v in (
            get_ion("Na").crystal_radius_A,
            get_ion("Na").stokes_radius_A,
            get_ion("Cl").crystal_radius_A,
            get_ion("Cl").stokes_radius_A,
        )
    ]
    assert refs[1][0].startswith("Na⁺ Stokes radius")
    assert ion_reference_radii(None) == []


@pytest.mark.parametrize(
    "bad, message",
    [
        ({"profile": {"s_A": [0, 1]}}, "none of the keys profile.radius_A"),
        ({"s_A": [0, 1], "radius_A": [1.0, 2.0]}, "none of the keys profile.s_A"),
        ({"profile": {"s_A": [0, 1], "radius_A": [1.0]}}, "has 2 values but"),
        ({"profile": {"s_A": [0, 1], "radius_A": [None, None]}}, "no finite radius"),
        (["not", "a", "dict"], "must be a poreprobe result"),
    ],
)
def test_profile_input_errors_name_the_problem(bad, message):
    with pytest.raises(InputError, match=message):
        plot_profile(bad)


def test_profile_command_draws_its_figure(tmp_path, capsys):
    from poreprobe.io.structure_writer import write_structure

    z = np.arange(-6, 6.1, 1.0)
    atoms = synthetic.ring_stack(4.0 + (z / 6) ** 2, z, atoms_per_ring=16)
    model = tmp_path / "ring.pdb"
    write_structure(atoms, model)
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    fig, js = tmp_path / "p.svg", tmp_path / "p.json"
    assert (
        main(
            [
                "profile",
                str(model),
                *axis,
                "--json",
                str(js),
                "--figure",
                str(fig),
                "--figure-ion",
                "K",
                "--quiet",
            ]
        )
        == 0
    )
    assert "K⁺ hydrated radius 3.31 Å" in fig.read_text()
    # bad figure suffix: refused before computing, so no JSON either
    js.unlink()
    assert (
        main(["profile", str(model), *axis, "--json", str(js), "--figure", str(tmp_path / "p.gif")])
        == 2
    )
    assert "must end in" in capsys.readouterr().err
    assert not js.exists()


def test_resistance_command_figure_matches_its_json(c4_cylinder_pdb, tmp_path):
    """The real producer's JSON (issue 5 layout) drives the same figure as --figure."""
    js, fig = tmp_path / "r.json", tmp_path / "r.png"
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    assert (
        main(
            [
                "resistance",
                c4_cylinder_pdb,
                *axis,
                "--json",
                str(js),
                "--figure",
                str(fig),
                "--dpi",
                "80",
                "--quiet",
            ]
        )
        == 0
    )
    assert _png_size(fig)[0] == pytest.approx(DEFAULT_WIDTH_MM / 25.4 * 80, abs=1.5)
    data = json.loads(js.read_text())
    ax = draw_figure("resistance", [data])
    assert [b.get_width() for b in ax.patches] == pytest.approx(
        [seg["share_percent"] for seg in data["segments"]]
    )
    access = [
        b for b, seg in zip(ax.patches, data["segments"], strict=True) if seg["kind"] == "access"
    ]
    assert len(access) == 2
    assert all(
        mpl.colors.to_hex(b.get_facecolor()) == OKABE_ITO["sky_blue"].lower() for b in access
    )
    assert f"{data['conductance_pS']:.3g} pS" in ax.get_title(loc="left")


def test_capture_from_a_match_that_carries_its_curve():
    """A structure-backed match result holds the curve it matched and the ion radii it compared."""
    match = {
        "capture_radius_A": 0.9,
        "capture_radius_sd_A": 0.1,
        "ion": "K+",
        "probe_radius_A_best": 1.6,
        "probe_radius_A_intervals": [[1.5, 1.7]],
        "match": {
            "curve": {
                "probe_radius_A": [1.0, 1.5, 2.0, 2.5],
                "capture_radius_A": [1.5, 1.0, 0.6, 0.0],
            },
            "ion_radii": [
                {"kind": "crystal", "radius_A": 1.38},
                {"kind": "hydrated", "radius_A": 3.31},
            ],
        },
    }
    ax = draw_figure("capture", [match])
    curve = next(ln for ln in ax.lines if len(ln.get_xdata()) == 4 and ln.get_linestyle() == "-")
    np.testing.assert_allclose(curve.get_ydata(), [1.5, 1.0, 0.6, 0.0])
    refs = {ln.get_label(): ln.get_xdata()[0] for ln in ax.lines if "radius" in ln.get_label()}
    assert refs == {"K⁺ crystal radius 1.38 Å": 1.38, "K⁺ hydrated radius 3.31 Å": 3.31}
    assert ax.get_xlim()[0] <= 1.0 and ax.get_xlim()[1] >= 2.5
    with pytest.raises(InputError, match="needs exactly one scan"):
        draw_figure("capture", [{"capture_radius_A": 0.9, "capture_radius_sd_A": 0.1}])


def test_capture_marks_probes_that_stop_pass_or_never_enter(scan):
    data = json.loads(json.dumps(scan))
    data["capture"]["enters"] = [True] * (len(data["capture"]["passes"]) - 1) + [False]
    ax = plot_capture(data)
    marks = {ln.get_label(): ln.get_xdata() for ln in ax.lines if ln.get_linestyle() == "None"}
    p = np.array(scan["capture"]["probe_radius_A"])
    passes = np.array(scan["capture"]["passes"])
    np.testing.assert_allclose(marks["probe passes (bottleneck)"], p[passes])
    np.testing.assert_allclose(marks["probe stops in the pore"], p[~passes][:-1])
    np.testing.assert_allclose(marks["probe does not enter (c = 0)"], p[-1:])


@pytest.mark.parametrize("kind", ["probes", "capture"])
def test_scan_command_figures_match_its_json(kind, c4_cylinder_pdb, tmp_path):
    """The real scan JSON (issue 3 layout) drives the probes and capture figures."""
    js, fig = tmp_path / "scan.json", tmp_path / f"{kind}.svg"
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    assert (
        main(
            [
                "scan",
                c4_cylinder_pdb,
                *axis,
                "--probe-radii-A",
                "1:5:1",
                "--json",
                str(js),
                "--figure",
                str(fig),
                "--figure-kind",
                kind,
                "--quiet",
            ]
        )
        == 0
    )
    assert fig.read_text().lstrip().startswith("<?xml")
    data = json.loads(js.read_text())
    ax = draw_figure(kind, [data])
    p = np.array(data["capture"]["probe_radius_A"])
    if kind == "probes":
        acc = np.array(data["profiles"]["accessible_radius_A"], dtype=float)
        lines = [ln for ln in ax.lines if len(ln.get_xdata()) == acc.shape[1]]
        assert len(lines) == len(p)
        assert ax.get_ylim()[1] >= np.nanmax(acc)
        covered = np.array(data["profiles"]["s_A"])[np.isfinite(acc).any(axis=0)]
        assert ax.get_xlim() == pytest.approx((covered[0], covered[-1]))
    else:
        curve = next(
            ln for ln in ax.lines if len(ln.get_xdata()) == len(p) and ln.get_linestyle() == "-"
        )
        np.testing.assert_allclose(curve.get_ydata(), data["capture"]["capture_radius_A"])
        assert ax.get_xlim()[0] <= p.min() and ax.get_xlim()[1] >= p.max()


def test_check_command_json_draws_the_profile_with_its_constrictions(tmp_path):
    """The real check JSON (issue 6 layout) carries a profile and its constrictions."""
    from poreprobe.io.structure_writer import write_structure

    z = np.arange(-12.0, 12.1, 1.0)
    rings = np.interp(z, [-12, -8, -6, -4, -2, 2, 4, 8, 12], [8, 6, 4.3, 4.3, 7, 7, 3.3, 3.3, 8])
    model = tmp_path / "gate_filter.pdb"
    write_structure(synthetic.ring_stack(rings, z, atoms_per_ring=24, chains=4), model)
    js = tmp_path / "check.json"
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    assert main(["check", str(model), *axis, "--json", str(js), "--quiet"]) == 0
    data = json.loads(js.read_text())
    ax = draw_figure("profile", [data])
    markers = [ln for ln in ax.lines if ln.get_marker() == "v"]
    assert len(markers) == len(data["constrictions"]) >= 2
    labels = [t.get_text() for t in ax.texts]
    # one label per narrow stretch: the gate (ring radius 4.3 Å) and the filter (3.3 Å)
    assert len(labels) == 2 and all("(A-D)" in t for t in labels)
    gate = min(data["constrictions"], key=lambda c: abs(c["s_A"] + 5))
    assert any(t.startswith(f"{gate['radius_A']:.2f} Å") for t in labels)


def test_match_command_figure_shows_the_measured_band(c4_cylinder_pdb, tmp_path):
    """The real match JSON (issue 4 layout) carries its curve; --figure draws it."""
    js, fig = tmp_path / "match.json", tmp_path / "match.png"
    axis = ["--axis-point", "0", "0", "0", "--axis-direction", "0", "0", "1"]
    assert (
        main(
            [
                "match",
                c4_cylinder_pdb,
                *axis,
                "--probe-radii-A",
                "1:4:0.5",
                "--current-pA",
                "20",
                "--current-sd-pA",
                "2",
                "--conc-mM",
                "150",
                "--ion",
                "K",
                "--json",
                str(js),
                "--figure",
                str(fig),
                "--dpi",
                "80",
                "--quiet",
            ]
        )
        == 0
    )
    assert _png_size(fig)[1] == pytest.approx(CAPTURE_HEIGHT_MM / 25.4 * 80, abs=1.5)
    data = json.loads(js.read_text())
    ax = draw_figure("capture", [data])
    c, sd = data["capture_radius_A"], data["capture_radius_sd_A"]
    band = next(p for p in ax.patches if p.get_label().startswith("measured"))
    box = band.get_path().get_extents(band.get_transform()).transformed(ax.transData.inverted())
    assert (box.y0, box.y1) == pytest.approx((c - sd, c + sd))
    refs = [ln.get_label() for ln in ax.lines if "radius" in ln.get_label()]
    assert "K⁺ crystal radius 1.38 Å" in refs  # the ion radii the match compared
    curve = next(
        ln
        for ln in ax.lines
        if ln.get_linestyle() == "-"
        and len(ln.get_xdata()) == len(data["match"]["curve"]["probe_radius_A"])
    )
    np.testing.assert_allclose(curve.get_ydata(), data["match"]["curve"]["capture_radius_A"])


@pytest.mark.parametrize("kind", ["kymograph", "overlay"])
def test_traj_command_figures_match_its_json(kind, tmp_path):
    """The real traj JSON (issue 9 layout) drives the kymograph and the mean ± SD overlay."""
    from _trajectory_data import N_FRAMES, write_trajectory

    pdb, dcd = write_trajectory(tmp_path)
    js, fig = tmp_path / "traj.json", tmp_path / f"{kind}.png"
    assert (
        main(
            [
                "traj",
                pdb,
                "--trajectory",
                dcd,
                "--json",
                str(js),
                "--figure",
                str(fig),
                "--figure-kind",
                kind,
                "--dpi",
                "80",
                "--quiet",
            ]
        )
        == 0
    )
    assert _png_size(fig)[0] == pytest.approx(DEFAULT_WIDTH_MM / 25.4 * 80, abs=1.5)
    data = json.loads(js.read_text())
    radius = np.array(data["per_frame"]["radius_A"], dtype=float)
    assert radius.shape[0] == N_FRAMES
    ax = draw_figure(kind, [data])
    if kind == "kymograph":
        mesh = ax.collections[0]
        np.testing.assert_allclose(
            np.ma.filled(mesh.get_array(), np.nan).reshape(radius.T.shape), radius.T, equal_nan=True
        )
        lo, hi = ax.get_ylim()
        assert lo <= data["s_A"][0] and hi >= data["s_A"][-1]
    else:
        mean = np.array(data["per_plane"]["mean_radius_A"], dtype=float)
        np.testing.assert_allclose(ax.lines[0].get_ydata(), mean, equal_nan=True)
        assert ax.lines[0].get_label().endswith(f"mean of {N_FRAMES} frames")
