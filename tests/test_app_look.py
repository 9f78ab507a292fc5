"""drawerfit's own look: its themes, its header mark, a palette of its own actions, no stray colours;
and `open FILE` (a saved design document opened in the app)."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from textual.command import CommandList, CommandPalette
from textual.widgets import Header

from tui.app import DARK, LIGHT, make_app, run_app
from tui.saved import SavedFileError, load_saved
from tui.screens.request import RequestScreen
from tui.screens.results import ResultsScreen
from tui.screens.sheet import SheetScreen
from tui.themes import THEMES
from tui.widgets.masthead import MARK

from .app_fixtures import demo_drawer  # noqa: F401  (fixtures)
from .trade_docs import save, trade_doc

pytestmark = pytest.mark.tui

TUI = Path(__file__).resolve().parents[1] / "tui"
# What the framework's stock palette offers; none of it may appear in drawerfit's.
STOCK = ("Keys", "Maximize", "Minimize", "Screenshot", "Theme", "Quit the application", "Change theme")


async def palette_titles(pilot) -> list[str]:
    await pilot.press("ctrl+p")
    await pilot.pause(0.3)
    assert isinstance(pilot.app.screen, CommandPalette)
    options = pilot.app.screen.query_one(CommandList)
    titles = [str(options.get_option_at_index(i).prompt).split("\n")[0] for i in range(options.option_count)]
    await pilot.press("escape")
    await pilot.pause()
    return titles


async def test_own_themes_mark_and_palette(demo_drawer):
    app = make_app(demo_drawer)
    async with app.run_test(size=(100, 32)) as pilot:
        assert {t.name for t in THEMES} == {DARK, LIGHT} and app.theme == DARK
        assert app.get_theme(DARK).dark and not app.get_theme(LIGHT).dark
        await pilot.press("f2")
        assert app.theme == LIGHT
        await pilot.press("d")
        await pilot.pause()
        assert isinstance(app.screen, RequestScreen)
        assert app.screen.query_one(Header).icon == MARK
        titles = await palette_titles(pilot)
        assert "Find stages" in titles and "Light/dark" in titles and "Key list" in titles
        for stock in STOCK:
            assert not any(t.startswith(stock) for t in titles), (stock, titles)
        assert not any(re.search(r"\(\w+\)$", t) for t in titles)  # trade words only, keys in the help line
        for screen in (ResultsScreen(trade_doc()), SheetScreen(1, trade_doc()["designs"][0], trade_doc())):
            app.push_screen(screen)
            await pilot.pause()
            assert app.screen.query_one(Header).icon == MARK


def test_styles_use_theme_variables_only():
    # Colours live in tui/themes.py; every .tcss and DEFAULT_CSS names them through $variables.
    colour = re.compile(r"(#[0-9a-fA-F]{3,8}\b|\brgba?\(|\b(red|green|blue|white|black|yellow)\b)")
    for path in [*TUI.rglob("*.tcss"), *TUI.rglob("*.py")]:
        if path.name == "themes.py":
            continue
        text = path.read_text(encoding="utf-8")
        blocks = re.findall(r'DEFAULT_CSS = """(.*?)"""', text, re.S) if path.suffix == ".py" else [text]
        for block in blocks:
            for line in block.splitlines():
                if ":" in line and not line.strip().startswith(("/*", "#", ".")):
                    assert not colour.search(line.split(":", 1)[1]), f"{path.name}: {line.strip()}"


async def test_open_a_saved_design_file(demo_drawer, tmp_path):
    doc = {**trade_doc(), "inventory": str(demo_drawer)}
    saved = save(doc, tmp_path / "gain10.json")
    app = make_app(open_file=saved)  # the drawer named in the file is used
    assert app.inventory_path == demo_drawer
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(app.screen, ResultsScreen)
        assert [d["parts"] for d in app.screen.designs] == [d["parts"] for d in doc["designs"]]
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen.__class__.__name__ == "DrawerScreen"


@pytest.mark.parametrize(("content", "message"), [
    ("{", "not a saved design file"),
    ('{"designs": "R1"}', "no \"designs\" list"),
    ('{"designs": [{"parts": 3}]}', "design 1 has no \"parts\" map"),
    ("[1, 2]", "no \"designs\" list"),
])
def test_a_file_that_is_not_a_saved_design_is_refused_in_one_line(tmp_path, demo_drawer, capsys, content, message):
    bad = tmp_path / "bad.json"
    bad.write_text(content, encoding="utf-8")
    with pytest.raises(SavedFileError, match=re.escape(message)):
        load_saved(bad)
    assert run_app(str(demo_drawer), str(bad)) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and str(bad) in err and "Traceback" not in err
    assert run_app(str(demo_drawer), str(tmp_path / "missing.json")) == 2
    assert "cannot read" in capsys.readouterr().err


def test_saved_file_round_trip_keeps_the_document(tmp_path):
    doc = trade_doc()
    assert load_saved(save(doc, tmp_path / "d.json")) == json.loads(json.dumps(doc))


async def test_open_saved_designs_from_inside_the_app(demo_drawer, tmp_path, monkeypatch):
    from textual.widgets import Label

    from tui.screens.open_saved import OpenSavedDialog

    from .app_fixtures import type_into

    bad = tmp_path / "notes.json"
    bad.write_text("{}", encoding="utf-8")
    saved = save(trade_doc(), tmp_path / "gain10.json")
    app = make_app(demo_drawer)
    # The second path is typed relative to the working folder: a path is typed key by key, most of
    # this test's time, and a relative path is as much a user's as the full one typed first.
    monkeypatch.chdir(tmp_path)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("ctrl+o")
        await pilot.pause()
        assert isinstance(app.screen, OpenSavedDialog)
        await type_into(pilot, "#path", str(bad))
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, OpenSavedDialog)  # refused, the reason shown, the dialog stays
        assert "not a saved design file" in str(app.screen.query_one("#path-error", Label).render())
        await type_into(pilot, "#path", saved.name)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, ResultsScreen) and len(app.screen.designs) == 3
