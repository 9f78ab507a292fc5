"""Which drawer file is used: --inventory, then $DRAWERFIT_INVENTORY, then ./drawer.csv, then the data folder."""

from __future__ import annotations

from pathlib import Path

import pytest

from inventory.locate import InventoryNotFound, demo_bytes, find_inventory


@pytest.fixture
def place(tmp_path, monkeypatch) -> Path:
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("DRAWERFIT_INVENTORY", raising=False)
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "data"))  # platformdirs' Linux data folder
    return tmp_path


def test_order_of_precedence(place, monkeypatch):
    a, b = place / "a.csv", place / "b.csv"
    a.write_text("kind,value,qty\n")
    b.write_text("kind,value,qty\n")
    (place / "drawer.csv").write_text("kind,value,qty\n")
    monkeypatch.setenv("DRAWERFIT_INVENTORY", str(b))
    assert find_inventory(str(a)) == (a, None)
    assert find_inventory(None) == (b, None)
    monkeypatch.delenv("DRAWERFIT_INVENTORY")
    assert find_inventory(None) == (Path("drawer.csv"), None)


def test_data_folder_copy_of_the_demo_is_made_once(place):
    path, message = find_inventory(None)
    assert path == place / "data" / "drawerfit" / "drawer.csv" and str(path) in message
    assert path.read_bytes() == demo_bytes()
    path.write_bytes(b"kind,value,qty\nresistor,1k,1\n")  # the user's own counts from then on
    assert find_inventory(None) == (path, None)
    assert path.read_bytes() == b"kind,value,qty\nresistor,1k,1\n"


@pytest.mark.parametrize("named", ["missing.csv", "."])
def test_a_named_file_must_exist(place, monkeypatch, named):
    with pytest.raises(InventoryNotFound, match="--inventory"):
        find_inventory(named)
    monkeypatch.setenv("DRAWERFIT_INVENTORY", named)
    with pytest.raises(InventoryNotFound, match="DRAWERFIT_INVENTORY"):
        find_inventory(None)
    assert not (place / "data").exists()
