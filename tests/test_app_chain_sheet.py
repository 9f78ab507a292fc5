"""The app's build sheet of a two-stage chain opened from a saved file: the parts table lists every part of
both stages with its drawer line and place (Q2 too), the title names both transistors with their own hFE
spreads, the predicted panel gives each stage, the meter checks the chain's node voltages, `w` writes each
printable format of the chain, and `n` runs the chain's ngspice check (both transistors' VB, VE, VC)."""

from __future__ import annotations

import json

import pytest
from textual.widgets import DataTable, Label, Static

from tests.chain_designs import KINDS
from tests.chain_sheet_files import save_chains
from tui.app import make_app
from tui.screens.sheet import SheetScreen
from tui.widgets import figures

pytestmark = pytest.mark.tui


@pytest.fixture(scope="module")
def saved(tmp_path_factory):
    folder = tmp_path_factory.mktemp("app-chain")
    return folder, save_chains(folder)


def leaves(node: dict) -> list[dict]:
    for key in ("series", "parallel"):
        if key in node:
            return [leaf for n in node[key] for leaf in leaves(n)]
    return [node]


async def open_chain(pilot):
    await pilot.pause()
    await pilot.press("enter")  # the trade view's first design → its build sheet
    await pilot.pause()
    assert isinstance(pilot.app.screen, SheetScreen)


@pytest.mark.parametrize("kind", KINDS)
async def test_chain_sheet_lists_both_stages(saved, kind):
    folder, files = saved
    doc = json.loads(files[kind].read_text())
    design = doc["designs"][0]
    app = make_app(inventory_path=str(folder / "chain_sheet_drawer.csv"), open_file=str(files[kind]))
    async with app.run_test(size=(130, 48)) as pilot:
        await open_chain(pilot)
        table = app.screen.query_one("#sheet-parts", DataTable)
        rows = [tuple(str(c) for c in table.get_row_at(i)) for i in range(table.row_count)]
        title = str(app.screen.query_one(".section-title", Label).render())
        predicted = str(app.screen.query_one("#predicted", Static).render())
        meter = str(app.screen.query_one("#meter", Static).render())
        histograms = len(app.screen.query("#histogram"))
    # The chain's Monte Carlo: its yield beside the figures and its gain histogram, as for one stage
    # (the panel said "none for chains yet" before chains had one).
    assert f"{'Yield (Monte Carlo)':<20} {figures.percent(design['yield'])}" in predicted and histograms == 1
    # Every physical part of both stages, with its drawer line and place.
    expected = []
    for pos, part in design["parts"].items():
        if "network" in part:
            expected += [(pos, str(leaf["line"])) for leaf in leaves(part["network"])]
        else:
            expected.append((pos, str(part["line"])))
    assert sorted((r[0], r[2]) for r in rows) == sorted(expected)
    for r in rows:
        assert r[3] == design["locations"][r[2]]
    q2 = next(r for r in rows if r[0] == "Q2")
    assert q2[1] == design["parts"]["Q2"]["part"]
    hfe_b = design["hfe_b"]
    assert f"Q2 {design['parts']['Q2']['part']} (hFE {hfe_b['min']:g}…{hfe_b['max']:g})" in title
    for k, stage in enumerate(design["stages"], 1):
        assert f"stage {k}: {stage['kind']}  gain {figures.gain(stage['predicted']['gain'])}" in predicted
    for k, q in enumerate(("Q1", "Q2")):
        for point in ("vb", "ve", "vc"):
            value = figures.volts(design["stages"][k]["predicted"][point])
            assert f"{q} {point.upper()} ≈ {value}" in meter


async def test_write_out_covers_a_chain(saved, tmp_path):
    folder, files = saved
    kind = KINDS[1]
    design = json.loads(files[kind].read_text())["designs"][0]
    app = make_app(inventory_path=str(folder / "chain_sheet_drawer.csv"), open_file=str(files[kind]))
    async with app.run_test(size=(130, 48)) as pilot:
        await open_chain(pilot)
        for fmt in ("html", "svg", "md"):
            app.screen.write_sheet(fmt, tmp_path / f"sheet.{fmt}")
            await app.workers.wait_for_complete()
            await pilot.pause()
        assert app.is_running and isinstance(app.screen, SheetScreen)
    for fmt in ("html", "svg", "md"):
        text = (tmp_path / f"sheet.{fmt}").read_text(encoding="utf-8")
        for name in ("Q2", "CIN_B", "RC_B_2"):
            assert name in text, (fmt, name)
    assert "Q2 VC" in (tmp_path / "sheet.md").read_text() and design["parts"]["Q2"]["part"] in (tmp_path / "sheet.svg").read_text()


@pytest.mark.ngspice
async def test_ngspice_check_of_a_chain_from_the_sheet(saved, ngspice):
    folder, files = saved
    kind = KINDS[0]
    app = make_app(inventory_path=str(folder / "chain_sheet_drawer.csv"), open_file=str(files[kind]))
    async with app.run_test(size=(130, 48)) as pilot:
        await open_chain(pilot)
        await pilot.press("n")
        await app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.pause()
        status = str(app.screen.query_one("#xcheck-status", Static).render())
        table = app.screen.query_one("#xcheck", DataTable)
        rows = [tuple(str(c) for c in table.get_row_at(i)) for i in range(table.row_count)]
    assert status.startswith("ngspice agrees within"), status
    assert len(rows) == 10 * 3  # both transistors' VB, VE, VC, the chain's gain, Rin, f_low, THD, at 3 corners
    for q in ("Q1", "Q2"):
        for point in ("base", "emitter", "collector"):
            assert sum(r[0] == f"{q} {point} (no signal)" for r in rows) == 3


async def test_pnp_chain_sheet_draws_pnp_stages_and_reads_real_volts(tmp_path):
    """An all-PNP chain in the app: both stages drawn as PNP stages (0 V on top, +V below, the arrow into
    the emitter; README "PNP stages") and the meter checks in real polarity (each PNP's VE above its VB)."""
    files = save_chains(tmp_path, "PNP")
    kind = "common-emitter+emitter-follower"
    design = json.loads(files[kind].read_text())["designs"][0]
    app = make_app(inventory_path=str(tmp_path / "chain_sheet_drawer_pnp.csv"), open_file=str(files[kind]))
    async with app.run_test(size=(130, 48)) as pilot:
        await open_chain(pilot)
        drawing = str(app.screen.query_one("#schematic", Static).render())
        meter = str(app.screen.query_one("#meter", Static).render())
    for stage in drawing.split("\n\nStage 2"):
        lines = [ln for ln in stage.splitlines() if ln.strip()]
        assert lines[1].startswith("0 V") and lines[-1].startswith("+12 V") and any("↖" in ln for ln in lines)
    for k, q in enumerate(("Q1", "Q2")):
        p = design["stages"][k]["predicted"]
        assert p["ve"] > p["vb"] > p["vc"]
        for name in ("VB", "VE", "VC"):
            assert f"{q} {name} ≈ {figures.volts(p[name.lower()])}" in meter
