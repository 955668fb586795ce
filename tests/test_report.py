"""``poreprobe report``: one self-contained HTML file, checked as text and in headless Chromium."""

from __future__ import annotations

import hashlib
import os
import re
from html.parser import HTMLParser

import pytest

from poreprobe.cli.main import main
from poreprobe.demo.run import ENTRY, demo_path
from poreprobe.report.browser import find_chromium

needs_chromium = pytest.mark.skipif(find_chromium() is None, reason="chromium not installed")


class _Refs(HTMLParser):
    """Every src / href attribute, every tag name."""

    def __init__(self):
        super().__init__()
        self.refs, self.tags = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.refs += [(tag, k, v) for k, v in attrs if k in ("src", "href", "xlink:href")]


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    folder = tmp_path_factory.mktemp("report")
    html = folder / "report.html"
    args = [
        "report",
        demo_path("demo_channel"),
        "--entry",
        ENTRY,
        "--current-pA",
        "20",
        "--current-sd-pA",
        "2",
        "--ensemble",
        "4",
        "--html",
        str(html),
        "--quiet",
    ]
    assert main(args) == 0
    return html


def test_html_is_self_contained(report):
    text = report.read_text(encoding="utf-8")
    parser = _Refs()
    parser.feed(text)
    # no reference to anything outside the file: in-page anchors and inline data only
    outside = [r for r in parser.refs if r[2] and not r[2].startswith(("#", "data:image/"))]
    assert not outside, outside
    assert any(v.startswith("#") for _, _, v in parser.refs)  # the check saw the SVG refs
    assert not re.search(r"https?://", text)
    assert "script" not in parser.tags and "link" not in parser.tags and "img" not in parser.tags
    assert "@import" not in text
    assert not re.search(r"url\((?!#)", text)  # only in-page clip paths: url(#id)


def test_every_section_and_figure_is_present(report):
    text = report.read_text(encoding="utf-8")
    for section in (
        "provenance",
        "readiness",
        "profile",
        "scan",
        "resistance",
        "uncertainty",
        "warnings",
        "definitions",
    ):
        assert f'id="{section}"' in text, section
    for figure in ("profile", "ensemble", "probes", "capture", "resistance"):
        assert f'id="figure-{figure}"' in text, figure
    assert text.count("<svg") == 5
    assert "Model-based estimates" in text and "Radius set: <strong>bondi" in text


def test_headline_numbers_and_provenance(report):
    from poreprobe.geometry.axis import find_pore_axis
    from poreprobe.geometry.profile import radius_profile
    from poreprobe.io.structure import read_structure

    text = report.read_text(encoding="utf-8")
    atoms = read_structure(demo_path("demo_channel"))
    prof = radius_profile(atoms, find_pore_axis(atoms, entry=ENTRY))
    assert f"{prof.min_radius_A:.2f} Å" in text
    assert f"{prof.min_s_A:.1f} Å" in text
    assert "ensemble 5-95 %:" in text
    with open(demo_path("demo_channel"), "rb") as handle:
        assert hashlib.sha256(handle.read()).hexdigest() in text
    assert "UTC" in text and "poreprobe report" in text and "MDAnalysis" in text
    assert "Bench match" in text


def test_bad_output_names_are_one_line_errors(tmp_path, capsys):
    bad = tmp_path / "report.txt"
    assert main(["report", demo_path("demo_channel"), "--html", str(bad)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poreprobe: error:") and ".html" in err[0]
    missing = tmp_path / "no" / "r.html"
    assert main(["report", demo_path("demo_channel"), "--html", str(missing)]) == 2
    assert not bad.exists() and not missing.exists()


@needs_chromium
def test_chromium_sees_no_errors_no_loads_no_horizontal_scroll(report):
    from poreprobe.report.browser import probe_page

    seen = probe_page(report, width_px=1280)
    assert seen["errors"] == [] and seen["external"] == []
    assert not [line for line in seen["console"] if "error" in line.lower()], seen["console"]
    assert seen["figures"] == 5
    assert seen["scrollWidth"] <= seen["clientWidth"] <= 1280


@needs_chromium
def test_chromium_screenshot_and_pdf(report, tmp_path):
    from poreprobe.report.browser import print_pdf, screenshot

    png, pdf = tmp_path / "page.png", tmp_path / "page.pdf"
    screenshot(report, png, width_px=1280, height_px=1600)
    print_pdf(report, pdf)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 20_000
    assert pdf.read_bytes()[:5] == b"%PDF-" and pdf.stat().st_size > 20_000
    assert os.stat(pdf).st_mode & 0o044  # readable by others, as a shared file should be


@needs_chromium
def test_report_command_writes_the_pdf(tmp_path):
    html, pdf = tmp_path / "r.html", tmp_path / "r.pdf"
    args = [
        "report",
        demo_path("demo_closed"),
        "--probe-radii-A",
        "1:2:1",
        "--html",
        str(html),
        "--pdf",
        str(pdf),
        "--quiet",
    ]
    assert main(args) == 0
    assert html.stat().st_size > 10_000 and pdf.read_bytes()[:5] == b"%PDF-"
