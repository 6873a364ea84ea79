"""The command line end to end on the shipped examples."""

from __future__ import annotations

import csv
import io
import json
import re

import pytest

from planner.cli import main
from planner.plan import Consequence, Status
from tests.conftest import COURIER, GARAGE, fleet_text

AS_OF = "2026-12-07"

# The JSON field names fixed by the fleet-file issue (scripts rely on them), then the risk
# fields added by the failure-risk issue.
ISSUE_FIELDS = [
    "id", "label", "status", "consequence", "drive", "interference", "duty", "install_date",
    "install_odometer", "interval_distance", "interval_months", "est_odometer",
    "daily_distance", "distance_remaining", "time_due_date", "distance_due_date", "due_date",
    "days_remaining", "deciding_limit", "notes",
]
RISK_FIELDS = ["life_used", "p_fail_horizon", "p_fail_before_due", "expected_loss", "risk_basis",
               "action", "risk_extrapolated"]


def run(capsys, *argv: str) -> tuple[int, str, str]:
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_courier_table_shows_every_status_and_consequence(capsys):
    code, out, _ = run(capsys, "list", str(COURIER), "--as-of", AS_OF)
    assert code == 0
    for status in Status:
        assert status.value in out
    for consequence in Consequence:
        assert consequence.value in out
    assert "qualified technician" in " ".join(out.split())  # the caution goes with the plan
    assert "Risk model: Weibull" in out   # and the assumptions with every risk figure


def test_json_fields_are_exactly_the_documented_ones(capsys):
    code, out, _ = run(capsys, "list", str(COURIER), "--as-of", AS_OF, "--format", "json")
    assert code == 0
    doc = json.loads(out)
    assert doc["as_of"] == AS_OF and doc["unit"] == "km"
    assert doc["risk_assumptions"]["basis"] == "assumed"
    assert len(doc["vehicles"]) == 16
    for row in doc["vehicles"]:
        assert list(row) == ISSUE_FIELDS + RISK_FIELDS
    kl01 = next(r for r in doc["vehicles"] if r["id"] == "KL-01")
    assert kl01["status"] == "overdue" and kl01["deciding_limit"] == "distance"
    assert isinstance(kl01["distance_remaining"], int)           # whole units
    # Severe limit 96,410 + 88,600 = 185,010, passed between 168,500 (2025-12-01) and 196,900
    # (2026-06-01, 182 days on): 16,510 / 28,400 x 182 = 105.8 -> day 106 = 2026-03-17.
    assert kl01["due_date"] == "2026-03-17"                      # ISO 8601
    chain = next(r for r in doc["vehicles"] if r["drive"] == "chain")
    assert chain["due_date"] is None and chain["p_fail_horizon"] is None   # unknowns are null


def test_default_order_is_triage_and_due_date_order_is_kept(capsys):
    _, out, _ = run(capsys, "list", str(COURIER), "--as-of", AS_OF, "--format", "json")
    rows = json.loads(out)["vehicles"]
    urgent = [r for r in rows if r["status"] in ("overdue", "no-record")]
    assert rows[: len(urgent)] == urgent
    losses = [r["expected_loss"] for r in urgent]
    assert losses == sorted(losses, reverse=True)
    # Then what needs a fact found first (never after a vehicle that is ok).
    missing = [r for r in rows if r["status"] == "missing-fact"]
    assert missing and rows[len(urgent): len(urgent) + len(missing)] == missing
    _, out, _ = run(capsys, "list", str(COURIER), "--as-of", AS_OF, "--format", "json",
                    "--sort", "due-date")
    statuses = [r["status"] for r in json.loads(out)["vehicles"]]
    rank = [s.value for s in Status]
    assert statuses == sorted(statuses, key=rank.index)


def test_overdue_list_to_csv_reads_back(tmp_path, capsys):
    out_file = tmp_path / "overdue.csv"
    code, _, err = run(capsys, "list", str(COURIER), "--as-of", AS_OF, "--status", "overdue",
                       "--format", "csv", "-o", str(out_file))
    assert code == 0 and "overdue.csv" in err
    raw = out_file.read_bytes()
    assert b"\r\n" in raw  # RFC 4180 line ends
    # Reference: the standard library's csv module reads RFC 4180 files.
    rows = list(csv.DictReader(io.StringIO(raw.decode("utf-8"), newline="")))
    assert rows and {r["status"] for r in rows} == {"overdue"}
    assert list(rows[0]) == ISSUE_FIELDS + RISK_FIELDS
    kl01 = next(r for r in rows if r["id"] == "KL-01")
    # A negative number stays a number: KL-01 is past its severe limit (96,410 + 88,600 km).
    assert re.fullmatch(r"-[0-9]+", kl01["distance_remaining"])


def test_csv_neutralises_a_formula_in_a_label(tmp_path, capsys):
    fleet = tmp_path / "f.toml"
    fleet.write_text(fleet_text("""
        [[vehicles]]
        id = "@SUM(A1)"
        label = "=HYPERLINK(\\"http://x.invalid\\")"
        engine = "belt"
        in_service = 2020-01-01
    """), encoding="utf-8")
    code, out, _ = run(capsys, "list", str(fleet), "--as-of", AS_OF, "--format", "csv")
    assert code == 0
    row = next(csv.DictReader(io.StringIO(out, newline="")))
    # OWASP guidance on CSV injection: a leading = + - @ tab or CR is neutralised.
    assert row["label"] == "'=HYPERLINK(\"http://x.invalid\")"
    assert row["id"] == "'@SUM(A1)"


def test_markdown_has_the_table_and_the_caution(capsys):
    code, out, _ = run(capsys, "list", str(GARAGE), "--as-of", "2026-12-04", "--format",
                       "markdown")
    assert code == 0
    assert out.startswith("# Cam-drive plan: Wickerby Row Motors")
    assert "| MR-1077 |" in out and "Left (mi)" in out
    assert "**Caution.**" in out


def test_unit_conversion_uses_the_exact_mile(capsys):
    _, out, _ = run(capsys, "list", str(GARAGE), "--as-of", "2026-12-04", "--format", "json",
                    "--unit", "km")
    doc = json.loads(out)
    assert doc["unit"] == "km"
    row = next(r for r in doc["vehicles"] if r["id"] == "MR-1042")
    # 1 mi = 1.609344 km exactly (NIST SP 811, Appendix B): 71,300 mi = 114,080 + 666.2272
    # (71,300 x 1.6 and x 0.009344) = 114,746.2272 km.
    assert row["interval_distance"] == 114746


def test_output_never_overwrites_the_fleet_file(courier_copy, capsys):
    before = courier_copy.read_bytes()
    code, _, err = run(capsys, "list", str(courier_copy), "--as-of", AS_OF, "-o",
                       str(courier_copy))
    assert code == 2 and "refusing" in err
    assert courier_copy.read_bytes() == before


def test_check_on_the_examples(capsys):
    for path in (COURIER, GARAGE):
        code, out, _ = run(capsys, "check", str(path))
        assert code == 0 and "valid" in out


def test_schema_is_json_schema_of_the_file(capsys):
    code, out, _ = run(capsys, "schema")
    assert code == 0
    schema = json.loads(out)
    vehicle = schema["$defs"]["Vehicle"]
    assert vehicle["additionalProperties"] is False
    assert "interval_months" in vehicle["properties"]
    assert "description" in vehicle["properties"]["belt_history"]


def test_risk_command_shows_the_fit_and_the_capped_point(capsys):
    code, out, _ = run(capsys, "risk", str(COURIER), "--as-of", AS_OF)
    assert code == 0
    assert "failures: 4" in out
    assert "fitted shape" in out
    assert "replace at the maker's interval, never later" in out
    code, out, _ = run(capsys, "risk", str(COURIER), "--as-of", AS_OF, "--format", "json")
    doc = json.loads(out)
    assert doc["risk_assumptions"]["fleet_fit"]["failures"] == 4
    assert all(p["replace_at_share_of_interval"] <= 1.0 for p in doc["replacement_points"])


@pytest.mark.parametrize("command", ["check", "list", "risk", "week", "import", "readings",
                                     "schema"])
def test_every_command_has_help_with_an_example(command, capsys):
    with pytest.raises(SystemExit) as done:
        main([command, "--help"])
    assert done.value.code == 0
    assert "example" in capsys.readouterr().out


def collector_while_running(monkeypatch, module) -> list[bool]:
    """Whether the cyclic collector was on each time `module`'s command ran."""
    import gc

    seen: list[bool] = []
    real = module.run

    def spy(args):
        seen.append(gc.isenabled())
        return real(args)

    monkeypatch.setattr(module, "run", spy)
    return seen


def test_a_command_holds_the_collector_off_only_while_it_runs(capsys, monkeypatch):
    """The batch commands run with the cyclic collector off (their objects hold no cycles);
    afterwards it is as it was, also when the command fails."""
    import gc

    from planner.cli import cmd_check
    seen = collector_while_running(monkeypatch, cmd_check)
    assert gc.isenabled()
    assert main(["check", str(COURIER)]) == 0
    assert main(["check", "no-such-file.toml"]) == 2
    assert seen == [False, False] and gc.isenabled()


def test_readings_keeps_the_collector_on(courier_copy, tmp_path, capsys, monkeypatch):
    """The TOML editor's documents hold reference cycles: without the collector, a readings
    import of a big file grew to several GB (found in review)."""
    from planner.cli import cmd_readings
    seen = collector_while_running(monkeypatch, cmd_readings)
    csv_file = tmp_path / "readings.csv"
    csv_file.write_text("id,date,odometer\nKL-01,2026-12-01,999999\n", encoding="utf-8")
    main(["readings", str(courier_copy), "--from", str(csv_file)])
    assert seen == [True]
