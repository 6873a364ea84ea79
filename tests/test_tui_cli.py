"""`beltplan [FILE]`: opening the UI, the template offer, and no terminal."""

from __future__ import annotations

import datetime as dt

import pytest

from planner.cli import cmd_open, main
from planner.fileio import load_fleet


@pytest.fixture
def opened_ui(monkeypatch):
    """Stand in for the UI: record what it was asked to open."""
    calls = []
    monkeypatch.setattr(cmd_open, "run_ui", lambda path, as_of: calls.append((path, as_of)) or 0)
    return calls


@pytest.fixture
def terminal(monkeypatch):
    monkeypatch.setattr(cmd_open, "_interactive", lambda: True)


def test_template_is_a_valid_commented_fleet(tmp_path):
    path = tmp_path / "fleet.toml"
    cmd_open.create_from_template(path)
    text = path.read_text()
    assert text.count("#") > 10 and "placeholders, not a maker's figures" in text
    assert len(load_fleet(path).fleet.vehicles) == 1


def test_file_opens_the_ui_with_the_given_date(tmp_path, opened_ui, terminal):
    path = tmp_path / "f.toml"
    cmd_open.create_from_template(path)
    assert main([str(path), "--as-of", "2026-12-07"]) == 0
    assert opened_ui == [(path, dt.date(2026, 12, 7))]


def test_no_file_in_a_terminal_offers_the_template(tmp_path, monkeypatch, opened_ui, terminal):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setattr("builtins.input", lambda prompt: "y")
    assert main([]) == 0
    assert (tmp_path / "fleet.toml").exists() and opened_ui[0][0].name == "fleet.toml"


def test_no_file_and_no_answer_creates_nothing(tmp_path, monkeypatch, opened_ui, terminal):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setattr("builtins.input", lambda prompt: "")
    assert main([]) == 0
    assert not (tmp_path / "fleet.toml").exists() and opened_ui == []


def test_no_file_and_no_terminal_says_how_and_exits_2(tmp_path, monkeypatch, capsys,
                                                      opened_ui):
    monkeypatch.chdir(tmp_path)
    assert main([]) == 2
    err = capsys.readouterr().err
    assert "no fleet file at fleet.toml" in err and "beltplan fleet.toml --create" in err
    assert "Traceback" not in err and opened_ui == []


def test_create_without_asking(tmp_path, monkeypatch, capsys, opened_ui):
    monkeypatch.chdir(tmp_path)
    assert main(["mine.toml", "--create"]) == 0
    assert load_fleet(tmp_path / "mine.toml").fleet.vehicles[0].id == "VAN-01"
    assert "created mine.toml" in capsys.readouterr().err


def test_no_terminal_for_an_existing_file_points_to_list(tmp_path, capsys, opened_ui):
    path = tmp_path / "f.toml"
    cmd_open.create_from_template(path)
    assert main([str(path)]) == 2
    assert "beltplan list" in capsys.readouterr().err and opened_ui == []
