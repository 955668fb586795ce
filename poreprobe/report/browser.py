"""Headless Chromium: print a report to PDF, take a screenshot, probe its page.

Chromium is the Debian package ``chromium`` (``apt-get install chromium``); it is
optional: only ``--pdf`` and the browser tests need it. Every run uses a fresh
temporary profile and switches off what would reach the network on its own
(background networking, component updates, sync), so a run loads nothing but
the local file.
"""

from __future__ import annotations

import json
import os
import pathlib
import re
import shutil
import subprocess
import tempfile

from poreprobe.errors import InputError

BROWSER_NAMES = ("chromium", "chromium-browser")
QUIET_FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-extensions",
    "--disable-default-apps",
    "--mute-audio",
)


def find_chromium() -> str | None:
    """Path of a Chromium executable, or None."""
    for name in BROWSER_NAMES:
        path = shutil.which(name)
        if path:
            return path
    return None


def _run(args: list[str], timeout_s: float) -> subprocess.CompletedProcess:
    browser = find_chromium()
    if browser is None:
        raise InputError(
            "headless Chromium is needed for this (Debian: apt-get install chromium); "
            "not found on PATH"
        )
    with tempfile.TemporaryDirectory(prefix="poreprobe-chromium-") as profile:
        try:
            return subprocess.run(
                [browser, *QUIET_FLAGS, f"--user-data-dir={profile}", *args],
                capture_output=True,
                text=True,
                timeout=timeout_s,
                check=False,
            )
        except subprocess.TimeoutExpired as exc:
            raise InputError(f"Chromium did not finish within {timeout_s:g} s") from exc


def _url(path) -> str:
    path = pathlib.Path(path).resolve()
    if not path.is_file():
        raise InputError(f"no such file: {path}")
    return path.as_uri()


def print_pdf(html_path, pdf_path, *, timeout_s: float = 120.0) -> None:
    """Print the HTML file to PDF with headless Chromium (written atomically)."""
    url = _url(html_path)
    pdf_path = os.path.abspath(os.fspath(pdf_path))
    folder = os.path.dirname(pdf_path)
    if not os.path.isdir(folder):
        raise InputError(f"cannot write {pdf_path}: folder {folder} does not exist")
    fd, tmp = tempfile.mkstemp(suffix=".pdf", dir=folder)
    os.close(fd)
    try:
        done = _run([f"--print-to-pdf={tmp}", "--no-pdf-header-footer", url], timeout_s)
        if done.returncode != 0 or os.path.getsize(tmp) == 0:
            raise InputError(f"Chromium could not print the PDF: {done.stderr.strip()[-300:]}")
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # mkstemp made it private; a report is to share
        os.replace(tmp, pdf_path)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def pdf_bytes(html: str, *, timeout_s: float = 120.0) -> bytes:
    """The report's HTML printed to PDF by headless Chromium, as bytes.

    The page is written to a private temporary folder first, so a command can hand
    both files to its output plan and write them together (all or nothing).
    """
    with tempfile.TemporaryDirectory(prefix="poreprobe-report-") as tmp:
        page, pdf = os.path.join(tmp, "report.html"), os.path.join(tmp, "report.pdf")
        with open(page, "w", encoding="utf-8") as fh:
            fh.write(html)
        print_pdf(page, pdf, timeout_s=timeout_s)
        with open(pdf, "rb") as fh:
            return fh.read()


def screenshot(
    html_path, png_path, *, width_px: int = 1280, height_px: int = 2400, timeout_s: float = 120.0
) -> None:
    """A PNG screenshot of the page at the given window size."""
    done = _run(
        [
            f"--screenshot={os.path.abspath(png_path)}",
            f"--window-size={width_px},{height_px}",
            "--hide-scrollbars",
            _url(html_path),
        ],
        timeout_s,
    )
    if done.returncode != 0 or not os.path.isfile(png_path):
        raise InputError(f"Chromium could not take the screenshot: {done.stderr.strip()[-300:]}")


_PROBE = """
<script>
window.__errors = [];
window.addEventListener('error', e => window.__errors.push(String(e.message)));
window.addEventListener('load', () => {
  const de = document.documentElement;
  const external = performance.getEntriesByType('resource').map(r => r.name)
      .filter(n => !n.startsWith('file:') && !n.startsWith('data:'));
  const out = {
    scrollWidth: de.scrollWidth, clientWidth: de.clientWidth,
    innerWidth: window.innerWidth, errors: window.__errors, external: external,
    figures: document.querySelectorAll('figure svg').length
  };
  const pre = document.createElement('pre');
  pre.id = '__probe'; pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
});
</script>
"""


def probe_page(html_path, *, width_px: int = 1280, timeout_s: float = 120.0) -> dict:
    """Load a copy of the page with a small probe script; what the browser saw.

    Returns
    -------
    dict
        ``scrollWidth``, ``clientWidth``, ``innerWidth`` (px), ``errors`` (script
        errors), ``external`` (resources loaded from anything but the file),
        ``figures`` (inline SVG figures), and ``console`` (console lines Chromium
        logged, errors among them).
    """
    html = pathlib.Path(html_path).read_text(encoding="utf-8")
    if "</body>" not in html:
        raise InputError(f"{html_path} has no </body>")
    with tempfile.TemporaryDirectory(prefix="poreprobe-probe-") as folder:
        copy = pathlib.Path(folder) / "probe.html"
        copy.write_text(html.replace("</body>", _PROBE + "</body>", 1), encoding="utf-8")
        done = _run(
            [
                "--dump-dom",
                f"--window-size={width_px},900",
                "--virtual-time-budget=5000",
                "--enable-logging=stderr",
                "--v=0",
                copy.as_uri(),
            ],
            timeout_s,
        )
    match = re.search(r'<pre id="__probe">(.*?)</pre>', done.stdout, re.S)
    if match is None:
        raise InputError(f"the page probe did not run: {done.stderr.strip()[-300:]}")
    text = match.group(1).replace("&quot;", '"').replace("&amp;", "&")
    out = json.loads(text)
    out["console"] = [line for line in done.stderr.splitlines() if "CONSOLE" in line]
    return out
