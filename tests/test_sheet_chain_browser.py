"""A chain's HTML sheet printed by a real browser (headless Chromium) on A4 and Letter, read back with
poppler's pdfinfo/pdftotext: at most 3 pages (two stage drawings and a stages table more than one stage's
1–2); every part's name (as in the netlist: R1 … Q1, R1_B … CIN_B, Q2) and every drawer place of the pick
list in the PDF's text; nothing past the paper's edge, nor past A4's printable width in Chromium's layout."""

from __future__ import annotations

import json

import pytest

from tests.chain_designs import KINDS
from tests.chain_sheet_files import save_chains
from tests.conftest import need_program
from tests.test_sheet_browser import A4_PRINTABLE_PX, PAPERS, overflow, pdf_words, print_on
from tui.cli import main

pytestmark = [pytest.mark.browser, pytest.mark.tui]
MAX_PAGES = 3


@pytest.fixture(scope="module")
def sheets(tmp_path_factory):
    folder = tmp_path_factory.mktemp("chain-browser")
    out = []
    for kind, path in save_chains(folder).items():
        html = folder / f"{path.stem}.html"
        assert main(["sheet", str(path), "--format", "html", "-o", str(html)]) == 0
        design = json.loads(path.read_text())["designs"][0]
        names = [ln.split()[0] for ln in design["netlist"].splitlines() if ln[:1] in "RCQ"]
        places = sorted(set(design["locations"].values()))
        out.append((kind, html, names, places))
    return folder, out


@pytest.mark.parametrize("paper", sorted(PAPERS))
def test_chain_prints_with_every_part_and_place(sheets, paper):
    folder, items = sheets
    need_program("pdfinfo")
    for kind, html, names, places in items:
        pdf, pages = print_on(folder, html, paper)
        assert 1 <= pages <= MAX_PAGES, (kind, paper, pages)
        words, width, height, boxes = pdf_words(pdf)
        assert (width, height) == pytest.approx(PAPERS[paper], abs=1.0)
        for name in names + places + ["x"]:
            assert name in words, (kind, paper, name)
        for x0, y0, x1, y1 in boxes:
            assert 0 <= x0 and x1 <= width and 0 <= y0 and y1 <= height, (kind, paper, x0, x1)


def test_chain_fits_the_printable_width(sheets):
    folder, items = sheets
    assert {k for k, *_ in items} == set(KINDS)
    for kind, html, _, _ in items:
        count, scroll, width, detail = overflow(folder, html, html.read_text())
        assert width == A4_PRINTABLE_PX and count == 0 and scroll <= width, (kind, detail)
