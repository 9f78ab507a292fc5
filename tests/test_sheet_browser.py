"""The HTML sheet printed by a real browser: headless Chromium (Debian's `chromium`) prints it to PDF on
A4 and on Letter; poppler's `pdfinfo` and `pdftotext` read the PDF back.

Checked: at most 2 pages; every part's name (R1, R1_2 … Q1, as in the netlist) is in the PDF's text;
nothing overflows: every word of the PDF lies inside the paper, and Chromium's own layout at the
printable width of A4 (210 mm − 2 × 12 mm margins = 186 mm = 703 CSS px at 96 px/in, CSS 2.1's px) has
no element reaching past the right edge.
"""

from __future__ import annotations

import json
import re
import subprocess
from pathlib import Path

import pytest

from tests.conftest import need_program
from tests.sheet_files import save_demo, save_networks
from tui.cli import main

# Also `tui`, so the quick set (-m "not ngspice and not fuzz and not tui") leaves out its ~1 minute of printing.
pytestmark = [pytest.mark.browser, pytest.mark.tui]
PAPERS = {"A4": (595.0, 842.0), "Letter": (612.0, 792.0)}  # points (ISO 216; ANSI Letter 8.5 × 11 in)
A4_PRINTABLE_PX = 703
MEASURE = """<script>
const w = window.innerWidth, bad = [];
for (const el of document.querySelectorAll("body *")) {
  const r = el.getBoundingClientRect();
  if (r.width && r.right > w + 0.5) bad.push(el.tagName + ":" + Math.round(r.right));
}
document.body.setAttribute("data-overflow", bad.length + " " + bad.slice(0, 5).join(",") +
  " scroll=" + document.documentElement.scrollWidth + " width=" + w);
</script>"""


def chromium_args(profile: Path) -> list[str]:
    return [need_program("chromium"), "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            f"--user-data-dir={profile}", "--no-pdf-header-footer"]


@pytest.fixture(scope="module")
def sheets(tmp_path_factory):
    folder = tmp_path_factory.mktemp("browser")
    demo = save_demo(folder)
    files = [(demo, 1), (demo, 2)] + [(save_networks(folder, demo), k) for k in (1, 2, 3, 4)]
    out = []
    for path, pick in files:
        html = folder / f"{path.stem}-{pick}.html"
        assert main(["sheet", str(path), "--pick", str(pick), "--format", "html", "-o", str(html)]) == 0
        names = [ln.split()[0] for ln in json.loads(path.read_text())["designs"][pick - 1]["netlist"].splitlines()
                 if ln[:1] in "RCQ"]
        out.append((html, names))
    return folder, out


def pdf_words(pdf: Path) -> tuple[list[str], float, float, list[tuple[float, float, float, float]]]:
    bbox = subprocess.run([need_program("pdftotext"), "-bbox", str(pdf), "-"], capture_output=True, text=True,
                          timeout=60, check=True).stdout
    page = re.search(r'<page width="([\d.]+)" height="([\d.]+)"', bbox)
    boxes = [tuple(float(v) for v in m.groups()) for m in
             re.finditer(r'<word xMin="([\d.-]+)" yMin="([\d.-]+)" xMax="([\d.-]+)" yMax="([\d.-]+)"', bbox)]
    words = re.findall(r"<word [^>]*>([^<]*)</word>", bbox)
    return words, float(page.group(1)), float(page.group(2)), boxes


def print_on(folder: Path, html: Path, paper: str) -> tuple[Path, int]:
    """(the PDF chromium prints of `html` on `paper`, its page count from pdfinfo)."""
    sized = html.with_name(f"{html.stem}-{paper}.html")
    sized.write_text(html.read_text().replace("</style>", f"@page {{ size: {paper}; }}</style>", 1))
    pdf = sized.with_suffix(".pdf")
    done = subprocess.run([*chromium_args(folder / "profile"), f"--print-to-pdf={pdf}", sized.as_uri()],
                          capture_output=True, text=True, timeout=120)
    assert pdf.exists(), done.stderr[-2000:]
    info = subprocess.run([need_program("pdfinfo"), str(pdf)], capture_output=True, text=True, timeout=60).stdout
    return pdf, int(re.search(r"Pages:\s+(\d+)", info).group(1))


@pytest.mark.parametrize("paper", sorted(PAPERS))
def test_prints_on_one_or_two_pages_with_every_label(sheets, paper):
    folder, items = sheets
    need_program("pdfinfo")
    for html, names in items:
        pdf, pages = print_on(folder, html, paper)
        assert 1 <= pages <= 2, (html.name, paper, pages)
        words, width, height, boxes = pdf_words(pdf)
        assert (width, height) == pytest.approx(PAPERS[paper], abs=1.0)
        for name in names:
            assert name in words, (html.name, paper, name)
        for x0, y0, x1, y1 in boxes:  # no text cut off at the paper's edge
            assert 0 <= x0 and x1 <= width and 0 <= y0 and y1 <= height, (html.name, paper, x0, x1)


def overflow(folder: Path, html: Path, text: str) -> tuple[int, int, int, str]:
    """(elements past the right edge, scroll width, viewport width, detail) in Chromium's layout."""
    probe = html.with_name(f"{html.stem}-measure.html")
    probe.write_text(text.replace("</body>", MEASURE + "</body>", 1))
    done = subprocess.run([*chromium_args(folder / "profile"), f"--window-size={A4_PRINTABLE_PX},1000",
                           "--dump-dom", probe.as_uri()], capture_output=True, text=True, timeout=120)
    found = re.search(r'data-overflow="([^"]*)"', done.stdout)
    assert found, done.stderr[-2000:]
    count, detail = found.group(1).split(" ", 1)
    scroll, width = (int(v) for v in re.findall(r"=(\d+)", detail))
    return int(count), scroll, width, detail


def test_nothing_reaches_past_the_printable_width(sheets):
    folder, items = sheets
    for html, _ in items:
        count, scroll, width, detail = overflow(folder, html, html.read_text())
        assert width == A4_PRINTABLE_PX and count == 0 and scroll <= width, (html.name, detail)
    # The measurement can fail: a table wider than the page is caught.
    wide = items[0][0].read_text().replace("<h2>Safety</h2>", '<h2>Safety</h2><div style="width:900px">x</div>')
    count, scroll, width, _ = overflow(folder, items[0][0], wide)
    assert count >= 1 and scroll > width
