"""The UI keeps what it read and what it saved in the fleet cache, and opens from it.

The reference for what an entry must hold is the loader: the file read afresh.
"""

from __future__ import annotations

import datetime as dt
import os
from pathlib import Path

import pytest

from planner import fleetcache
from planner.edit import add_reading
from planner.fileio import digest_of, load_fleet
from planner.tui import app as app_module
from planner.tui import create_app
from tests.test_tui_support import AS_OF, SMALL, copy_example, opened, sync, until


@pytest.fixture(autouse=True)
def no_delay(monkeypatch):
    monkeypatch.setattr(app_module, "CACHE_DELAY", 0.01)


def entry(path: Path) -> Path:
    return fleetcache.entry_path(Path(os.environ[fleetcache.ENV]), digest_of(path.read_bytes()))


@sync
async def test_opening_a_file_keeps_its_fleet_and_the_next_open_reads_the_cache(tmp_path):
    path = copy_example(tmp_path)
    app = create_app(path, AS_OF)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        await until(pilot, lambda: entry(path).is_file(), what="the cache entry")
    assert fleetcache.get(digest_of(path.read_bytes())) == load_fleet(path).fleet

    parsed: list[str] = []
    real = app_module.Session.read

    def spy(self, *args, **kwargs):
        from planner import fileio
        original = fileio.parse_fleet_text

        def counting(text, name):
            parsed.append(name)
            return original(text, name)

        fileio.parse_fleet_text = counting
        try:
            return real(self, *args, **kwargs)
        finally:
            fileio.parse_fleet_text = original

    app_module.Session.read = spy
    try:
        again = create_app(path, AS_OF)
        async with again.run_test(size=SMALL) as pilot:
            await opened(pilot)
            assert again.session.fleet == load_fleet(path).fleet
    finally:
        app_module.Session.read = real
    assert parsed == []  # the text was not parsed: the fleet came from the cache


@sync
async def test_a_save_keeps_the_new_texts_fleet(tmp_path):
    path = copy_example(tmp_path)
    app = create_app(path, AS_OF)
    async with app.run_test(size=SMALL) as pilot:
        await opened(pilot)
        session = app.session
        v = session.fleet.vehicles[0]
        last = v.readings[-1]
        app.apply_edit(add_reading(session.text, v.id, last.date + dt.timedelta(days=1),
                                   last.odometer + 40), "reading")
        app.save_now()
        await until(pilot, lambda: entry(path).is_file(), what="the saved text's entry")
    fresh = load_fleet(path)
    assert fleetcache.get(fresh.digest) == fresh.fleet
    assert fresh.fleet.vehicles[0].readings[-1].odometer == last.odometer + 40
