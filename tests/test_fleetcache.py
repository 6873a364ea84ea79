"""The fleet cache gives exactly what reading the file gives, or nothing.

The reference is the loader (`fileio.load_fleet` without the cache): a fleet from the cache
must equal it field for field. Every way an entry could be wrong (another file, other code, a
forged or damaged entry, a folder others can write to) must make the planner read the file.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import os
import stat
from pathlib import Path

import pytest

from planner import fleetcache
from planner.fileio import digest_of, load_fleet
from planner.generate import generate_fleet_text
from planner.risk import assess_fleet_plan
from planner.tui.session import Session
from tests.conftest import AS_OF, COURIER, GARAGE


def cache_dir() -> Path:
    return Path(os.environ[fleetcache.ENV])


def entry_of(path: Path) -> Path:
    return fleetcache.entry_path(cache_dir(), digest_of(path.read_bytes()))


@pytest.mark.parametrize("example", [COURIER, GARAGE])
def test_a_cached_fleet_equals_the_file_read_afresh_and_plans_the_same(example):
    loaded = load_fleet(example)
    assert fleetcache.put(loaded.digest, loaded.fleet)
    cached = fleetcache.get(loaded.digest)
    assert cached is not None and cached is not loaded.fleet
    assert cached == loaded.fleet
    # The plan is what users see: the same plans, risks and order from either.
    assert assess_fleet_plan(cached, AS_OF) == assess_fleet_plan(loaded.fleet, AS_OF)


def test_the_session_reads_from_the_cache_and_writes_only_what_is_new(tmp_path):
    path = tmp_path / "big.toml"
    path.write_text(generate_fleet_text(300, seed=4), encoding="utf-8")
    first = Session(path, AS_OF)
    first.adopt(first.read())
    job = first.cache_job()
    assert job is not None and job() and entry_of(path).is_file()
    assert first.cache_job() is None  # kept already
    again = Session(path, AS_OF)
    hits: list[str] = []
    real_get = fleetcache.get

    def counting_get(digest: str):
        fleet = real_get(digest)
        hits.append(digest if fleet is not None else "")
        return fleet

    fleetcache.get, saved = counting_get, fleetcache.get
    try:
        reading = again.read()
    finally:
        fleetcache.get = saved
    assert hits == [first.loaded.digest]
    assert reading.loaded is not None and reading.loaded.fleet == first.fleet
    again.adopt(reading)
    assert again.cache_job() is None  # it came from the cache: nothing to write back


def test_a_changed_file_is_read_afresh(tmp_path):
    path = tmp_path / "fleet.toml"
    path.write_text(COURIER.read_text(encoding="utf-8"), encoding="utf-8")
    loaded = load_fleet(path)
    fleetcache.put(loaded.digest, loaded.fleet)
    path.write_text(path.read_text(encoding="utf-8").replace(
        'name = "', 'name = "Renamed ', 1), encoding="utf-8")
    session = Session(path, AS_OF)
    session.adopt(session.read())
    assert session.fleet is not None and session.fleet.fleet.name.startswith("Renamed ")


def _entry_bytes() -> tuple[str, Path, bytes]:
    loaded = load_fleet(COURIER)
    fleetcache.put(loaded.digest, loaded.fleet)
    entry = fleetcache.entry_path(cache_dir(), loaded.digest)
    return loaded.digest, entry, entry.read_bytes()


def test_an_entry_signed_with_another_key_is_never_unpickled():
    """HMAC (RFC 2104) under the folder's own key: an entry written elsewhere does not verify."""
    digest, entry, data = _entry_bytes()
    (cache_dir() / "key").write_bytes(os.urandom(32))
    assert fleetcache.get(digest) is None


def test_a_damaged_or_altered_entry_is_not_used():
    digest, entry, data = _entry_bytes()
    head = len(fleetcache.MAGIC) + 64
    for broken in (data[:-10], data[:head] + bytes([data[head] ^ 1]) + data[head + 1:], b"",
                   b"not a cache entry", data.replace(fleetcache.MAGIC, b"x" * len(
                       fleetcache.MAGIC), 1)):
        entry.write_bytes(broken)
        assert fleetcache.get(digest) is None


def test_an_entry_of_other_code_is_not_used(monkeypatch):
    digest, _, _ = _entry_bytes()
    monkeypatch.setattr(fleetcache, "_fingerprint", hashlib.sha256(b"other code").digest())
    assert fleetcache.get(digest) is None


def test_the_fingerprint_changes_with_any_byte_of_the_planner_source(tmp_path):
    """A rule changed in any module is new code: its entries are not the old code's."""
    import shutil
    package = Path(fleetcache.__file__).parent
    copy = tmp_path / "planner"
    shutil.copytree(package, copy, ignore=shutil.ignore_patterns("__pycache__"))
    assert fleetcache.fingerprint_of(copy) == fleetcache.fingerprint()
    rule = copy / "plan.py"
    rule.write_text(rule.read_text(encoding="utf-8").replace("days", "dayz", 1),
                    encoding="utf-8")
    assert fleetcache.fingerprint_of(copy) != fleetcache.fingerprint()


def test_a_folder_others_can_read_keeps_its_mode_and_entries_are_the_users_only(
        tmp_path, monkeypatch):
    """A folder the cache did not create is never chmodded: a private one is made inside."""
    shared = tmp_path / "shared-cache"
    shared.mkdir()
    shared.chmod(0o777)
    monkeypatch.setenv(fleetcache.ENV, str(shared))
    loaded = load_fleet(COURIER)
    assert fleetcache.put(loaded.digest, loaded.fleet)
    assert stat.S_IMODE(shared.stat().st_mode) == 0o777
    inner = fleetcache.folder()
    assert inner is not None and inner.parent == shared
    assert stat.S_IMODE(inner.stat().st_mode) == 0o700
    entry = fleetcache.entry_path(inner, loaded.digest)
    assert stat.S_IMODE(entry.stat().st_mode) == 0o600


def test_no_home_folder_means_no_cache_not_an_error(monkeypatch, tmp_path):
    """Path.home() raises RuntimeError when no home can be found (Python docs, pathlib)."""
    monkeypatch.delenv(fleetcache.ENV)
    monkeypatch.delenv("XDG_CACHE_HOME", raising=False)

    def no_home() -> Path:
        raise RuntimeError("Could not determine home directory.")

    monkeypatch.setattr(Path, "home", staticmethod(no_home))
    loaded = load_fleet(COURIER)
    assert fleetcache.get(loaded.digest) is None
    assert not fleetcache.put(loaded.digest, loaded.fleet)
    session = Session(COURIER, AS_OF)
    assert session.load() and session.fleet == loaded.fleet


def test_a_half_written_key_is_never_used(monkeypatch):
    loaded = load_fleet(COURIER)
    (cache_dir() / "key").write_bytes(b"short")
    assert not fleetcache.put(loaded.digest, loaded.fleet)
    (cache_dir() / "key").unlink()
    assert fleetcache.put(loaded.digest, loaded.fleet)
    assert len((cache_dir() / "key").read_bytes()) == 32
    assert not [p for p in cache_dir().iterdir() if p.name.startswith(".key.")]


def test_a_saved_text_that_reads_back_differently_is_not_kept_and_is_reported(courier_copy):
    """The cache keeps only fleets a whole read agrees with: a saved text's fleet (from the
    quick check of its edits) is read whole first."""
    from planner.errors import PlannerError
    session = Session(courier_copy, AS_OF)
    session.adopt(session.read())
    session.apply(session.text.replace('label = "', 'label = "x', 1), "label")
    session.save()
    wrong = session.fleet.model_copy(update={"vehicles": session.fleet.vehicles[1:]})
    session.loaded = type(session.loaded)(session.loaded.path, wrong, session.loaded.text,
                                          session.loaded.digest, session.loaded.bom)
    job = session.cache_job()
    with pytest.raises(PlannerError, match="reads back differently"):
        job()
    assert fleetcache.get(session.loaded.digest) is None


def test_the_key_is_private_and_off_means_off(monkeypatch):
    loaded = load_fleet(COURIER)
    fleetcache.put(loaded.digest, loaded.fleet)
    mode = stat.S_IMODE((cache_dir() / "key").stat().st_mode)
    assert mode & 0o077 == 0
    monkeypatch.setenv(fleetcache.ENV, "off")
    assert fleetcache.get(loaded.digest) is None
    assert not fleetcache.put(loaded.digest, loaded.fleet)


def test_a_cache_that_cannot_be_written_is_no_error(tmp_path, monkeypatch):
    blocked = tmp_path / "a-file"
    blocked.write_text("not a folder")
    monkeypatch.setenv(fleetcache.ENV, str(blocked / "cache"))
    loaded = load_fleet(COURIER)
    assert not fleetcache.put(loaded.digest, loaded.fleet)
    session = Session(COURIER, AS_OF)
    assert session.load() and session.fleet == loaded.fleet


def test_the_oldest_entries_go_beyond_the_size_kept(monkeypatch):
    monkeypatch.setattr(fleetcache, "KEEP_BYTES", 1)  # room for nothing but the newest
    names = []
    for k, example in enumerate((COURIER, GARAGE)):
        loaded = load_fleet(example)
        fleetcache.put(loaded.digest, loaded.fleet)
        entry = fleetcache.entry_path(cache_dir(), loaded.digest)
        os.utime(entry, (1_000_000 + k, 1_000_000 + k))
        names.append(entry)
    fleetcache._prune(cache_dir())
    assert [p.exists() for p in names] == [False, True]


def test_a_saved_text_is_cached_with_its_new_digest(courier_copy):
    session = Session(courier_copy, AS_OF)
    session.adopt(session.read())
    assert session.cache_job() is not None
    vid = session.fleet.vehicles[0].id
    from planner.edit import add_reading
    last = session.fleet.vehicles[0].readings[-1]
    session.apply(add_reading(session.text, vid, last.date + dt.timedelta(days=1),
                              last.odometer + 50), "reading")
    session.save()
    job = session.cache_job()
    assert job is not None and job()
    fresh = load_fleet(courier_copy)  # the reference: the saved file read afresh
    assert fleetcache.get(fresh.digest) == fresh.fleet
