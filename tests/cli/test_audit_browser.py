"""The audit in a real browser: Debian's chromium, headless, prints the audit of sample_decks/ to PDF and takes
a screenshot (skipped when no chromium is installed; .ci/run installs it where apt-get is available)."""
from __future__ import annotations

import re
import shutil
import subprocess

import pytest
from conftest import SAMPLES

from linter.cli import main


def browser() -> str:
    for name in ("chromium", "chromium-browser"):
        found = shutil.which(name)
        if found:
            return found
    pytest.skip("no chromium browser installed")


def run_browser(exe: str, tmp_path, *args: str) -> None:
    cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--no-first-run",
           f"--user-data-dir={tmp_path / 'profile'}", *args]
    proc = subprocess.run(cmd, capture_output=True, timeout=180)
    assert proc.returncode == 0, proc.stderr.decode("utf-8", "replace")[-2000:]


def test_sample_audit_prints_and_renders_in_chromium(tmp_path):
    exe = browser()
    html = tmp_path / "review.html"
    assert main(["audit", str(SAMPLES), "-o", str(html)]) == 1
    pdf, png = tmp_path / "review.pdf", tmp_path / "review.png"
    run_browser(exe, tmp_path, "--no-pdf-header-footer", f"--print-to-pdf={pdf}", html.as_uri())
    run_browser(exe, tmp_path, "--window-size=1200,3000", f"--screenshot={png}", html.as_uri())
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    pages = len(re.findall(rb"/Type\s*/Page(?!s)", data))
    materials = html.read_text(encoding="utf-8").count('class="material"')
    # the print stylesheet starts every material (and every deck) on a new page
    assert materials >= 10 and pages > materials
    head = png.read_bytes()[:24]
    assert head.startswith(b"\x89PNG\r\n\x1a\n")
    width, height = int.from_bytes(head[16:20], "big"), int.from_bytes(head[20:24], "big")
    assert (width, height) == (1200, 3000)
    try:
        from PIL import Image
    except ImportError:
        return
    with Image.open(png) as im:
        colours = im.convert("RGB").getcolors(maxcolors=1 << 20)
    assert colours is None or len(colours) > 50        # text, tables and figures were drawn, not a blank page
