"""One self-contained report to share: provenance, readiness, profile, scan, bench match,
resistance, uncertainty bands, warnings and definitions in a single HTML file (and PDF).

:func:`poreprobe.report.build.build_report` computes the results,
:func:`poreprobe.report.render.write_html` writes the page (Jinja2 template, figures
inline as SVG) and :func:`poreprobe.report.browser.print_pdf` prints it with headless
Chromium. The layer sits above ``checks``, ``scale`` and ``figures``; only ``cli`` and
``demo`` import it.
"""
