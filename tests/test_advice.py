"""Advice a person can trust: the full caution in every output, required jobs never costed
against risk, overdue belts led by the action, honest small numbers, and wording that never
suggests running past a maker's interval.

External references, each named beside its check:
- iCalendar: the `icalendar` library (RFC 5545 reference parser) unfolds and unescapes each
  DESCRIPTION.
- JSON: the standard library's `json` parses every JSON output.
- Weibull figures: `scipy.stats.weibull_min` (NIST/SEMATECH e-Handbook §8.1.6.2).
Costs are worked by hand from the example files (comments give the arithmetic).
"""

from __future__ import annotations

import datetime as dt
import io
import json
import re
from pathlib import Path

import icalendar  # RFC 5545 reference parser (tests only)
import pytest
from hypothesis import given
from hypothesis import strategies as st
from rich.console import Console
from scipy import stats

from planner import export, risk
from planner.cli import main
from planner.fileio import load_fleet, parse_fleet_text
from planner.plan import Status
from planner.tui.look import WHAT_IT_MEANS
from planner.tui.screens.help import about_text
from planner.tui.widgets import detail_parts, week_sections
from planner.week import plan_week
from planner.week_export import to_ics, to_json_text, to_markdown_text, to_table
from tests.conftest import COURIER, GARAGE, make_fleet

ROOT = Path(__file__).resolve().parent.parent
FRI = dt.date(2026, 12, 4)
STAMP = dt.datetime(2026, 12, 4, 16, 30, tzinfo=dt.UTC)


def norm(text: str) -> str:
    """Whitespace folded to single spaces: wrapped and unwrapped text compare equal."""
    return " ".join(text.split())


def has_caution(text: str) -> bool:
    return norm(export.CAUTION) in norm(text)


def rendered(renderable: object) -> str:
    console = Console(width=120, file=io.StringIO(), color_system=None, record=True)
    console.print(renderable)
    return console.export_text()


def cli(capsys, *args: str) -> str:
    code = main(list(args))
    out = capsys.readouterr().out
    assert code == 0, out
    return out


# -------------------------------------------------------------------------- the caution itself


def test_the_caution_is_the_full_text():
    # What the caution must say, from the project's safety rules (domain notes, "Cautions the
    # tool must show") and the README's caution.
    text = norm(export.CAUTION)
    for part in ("maker's schedule and service information come first",
                 "qualified technician", "local rules", "without warning",
                 "power steering", "brake assist", "never a reason to run past"):
        assert part in text, part
    # The maker's schedule comes first.
    assert text.startswith("The maker's schedule")


def test_the_readme_states_the_same_caution():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    block = re.search(r"> \*\*Caution\.\*\* (.*?)\n\n", readme, re.S)
    assert block is not None
    assert norm(block.group(1).replace("\n> ", " ")) == norm(export.CAUTION)


# ----------------------------------------------------------- the caution in every output


@pytest.mark.parametrize("fmt", ["table", "markdown"])
def test_list_outputs_carry_the_caution(capsys, fmt):
    assert has_caution(cli(capsys, "list", str(COURIER), "--as-of", "2026-12-04",
                           "--format", fmt))


def test_list_and_risk_json_carry_the_caution(capsys):
    # Reference: the standard library's `json` parses the documents.
    for args in (("list", str(COURIER), "--format", "json"),
                 ("risk", str(COURIER), "--format", "json")):
        doc = json.loads(cli(capsys, *args, "--as-of", "2026-12-04"))
        assert doc["caution"] == export.CAUTION and "brake assist" in doc["caution"]


def test_risk_text_carries_the_caution(capsys):
    assert has_caution(cli(capsys, "risk", str(COURIER), "--as-of", "2026-12-04"))


@pytest.mark.parametrize("args", [["--help"], ["list", "--help"], ["risk", "--help"],
                                  ["week", "--help"], ["check", "--help"],
                                  ["import", "--help"], ["readings", "--help"],
                                  ["schema", "--help"],
                                  ["fleet.toml", "--help"]])  # the UI launcher's own parser
def test_help_of_every_advising_command_carries_the_caution(capsys, args):
    with pytest.raises(SystemExit):
        main(args)
    assert has_caution(capsys.readouterr().out)


@pytest.fixture(scope="module")
def courier_week():
    return plan_week(load_fleet(COURIER).fleet, FRI)


@pytest.fixture(scope="module")
def garage_week():
    return plan_week(load_fleet(GARAGE).fleet, FRI)


def test_week_views_carry_the_caution(courier_week, garage_week):
    for week in (courier_week, garage_week):
        assert has_caution(to_table(week))
        assert has_caution(rendered(week_sections.totals(week)))
        md = to_markdown_text(week)
        assert has_caution(md)
        # Every job sheet carries it, and the document once more at its end.
        sheets = md.split("## Job sheets")[1]
        assert norm(sheets).count(norm(export.CAUTION)) == len(week.bookings) + 1
        # Reference: `json`.
        assert json.loads(to_json_text(week))["caution"] == export.CAUTION


def test_call_list_view_carries_the_caution(garage_week):
    assert garage_week.call_list  # the garage example has customers to call
    assert has_caution(rendered(week_sections.call_list(garage_week)))


def test_every_calendar_event_describes_the_caution(courier_week):
    # Reference: the `icalendar` library unfolds (RFC 5545 §3.1) and unescapes (§3.3.11).
    cal = icalendar.Calendar.from_ical(to_ics(courier_week, STAMP))
    events = list(cal.walk("VEVENT"))
    assert len(events) == sum(len(b.days) for b in courier_week.bookings)
    for ev in events:
        assert has_caution(str(ev["DESCRIPTION"]))


def test_about_and_detail_carry_the_caution():
    assert has_caution(rendered(about_text(None)))
    fleet = load_fleet(COURIER).fleet
    a = risk.assess_fleet_plan(fleet, FRI)
    overdue = next(p for p in a.plans if p.status is Status.OVERDUE)
    assert has_caution(rendered(detail_parts.what_to_do(overdue)))


# --------------------------------------------------- overdue belts lead with the action


@pytest.fixture(scope="module")
def courier_assessment():
    return risk.assess_fleet_plan(load_fleet(COURIER).fleet, FRI)


def test_list_leads_overdue_and_no_record_rows_with_the_action(capsys):
    out = cli(capsys, "list", str(COURIER), "--as-of", "2026-12-04", "-o", "-")
    rows = {line.split()[0]: line for line in out.splitlines()
            if line.strip().startswith("KL-")}
    # KL-01 is overdue (143 % of its interval used) and KL-07 has no belt record.
    for vid in ("KL-01", "KL-07"):
        assert "replace now" in rows[vid]
        # Its probability is labelled as an extrapolation, and no small expected loss sits
        # beside it: the job is required.
        assert "extrap" in rows[vid] and "required" in rows[vid]
    # A month on, KL-06 is ok and stays inside its interval over the 90-day horizon (27,611 km
    # left, due 2027-11-08, 308 days out): a plain figure. KL-04 is ok too (5,812 km left, over
    # the 5,000 km warning), but its limit is projected 79 days out, inside the horizon: the
    # figure past that day is labelled.
    later = cli(capsys, "list", str(COURIER), "--as-of", "2027-01-04", "-o", "-")
    rows = {line.split()[0]: line for line in later.splitlines()
            if line.strip().startswith("KL-")}
    assert "ok" in rows["KL-06"].split() and "ok" in rows["KL-04"].split()
    assert "extrap" not in rows["KL-06"] and "extrap" in rows["KL-04"]


def test_json_records_say_the_action_and_the_extrapolation(capsys):
    # Reference: `json`.
    doc = json.loads(cli(capsys, "list", str(COURIER), "--as-of", "2026-12-04",
                         "--format", "json"))
    by_id = {r["id"]: r for r in doc["vehicles"]}
    assert by_id["KL-01"]["action"] == "replace now"
    assert by_id["KL-01"]["risk_extrapolated"] is True
    assert by_id["KL-07"]["action"].startswith("replace now")
    assert by_id["KL-06"]["risk_extrapolated"] is False
    assert any("beyond the maker's data" in n for n in by_id["KL-01"]["notes"])


def test_markdown_list_labels_the_extrapolation(capsys):
    out = cli(capsys, "list", str(COURIER), "--as-of", "2026-12-04", "--format", "markdown")
    row = next(line for line in out.splitlines() if line.startswith("| KL-01 "))
    assert "replace now" in row and "extrap" in row and "required" in row


def test_detail_leads_with_replace_now_and_labels_the_figures(courier_assessment):
    a = courier_assessment
    p = next(p for p in a.plans if p.id == "KL-01")
    todo = rendered(detail_parts.what_to_do(p))
    assert todo.startswith("Replace now")
    # KL-01's engine is an interference engine (tesk): off the road, not "use it less".
    assert "off the road" in todo and "to a minimum" not in todo
    rec = export.assessment_records(a)[[q.id for q in a.plans].index("KL-01")]
    shown = rendered(detail_parts.risk(rec, a.model.describe()))
    assert "extrap" in shown and "required" in shown


def test_week_totals_split_required_jobs_from_risk_removed(courier_week):
    w = courier_week
    # Courier example, Fri 2026-12-04: required now (overdue or no record) KL-01, KL-02, KL-03
    # (tesk: 3.5 h x 68 + 260 = 498 each) and KL-07 (plim: 2.5 h x 68 + 180 = 350):
    # 3 x 498 + 350 = 1,844. Near the limit: KL-16, KL-15 (498 each), KL-10 (odra: 6 h x 68
    # + 320 = 728), KL-09, KL-08 (350 each): 2,424. Together 4,268, the week's total.
    assert sorted(w.required_jobs) == ["KL-01", "KL-02", "KL-03", "KL-07"]
    assert w.required_cost == pytest.approx(1844.0)
    assert w.near_limit_cost == pytest.approx(2424.0)
    assert w.required_cost + w.near_limit_cost == pytest.approx(w.total_cost)
    # Risk removed counts only the near-limit jobs: the required ones are not optional.
    a = risk.assess_fleet_plan(w.fleet, FRI)
    near = ["KL-16", "KL-15", "KL-10", "KL-09", "KL-08"]
    assert w.expected_loss_removed == pytest.approx(
        sum(a.risks[v].expected_loss for v in near), rel=1e-12)
    text = to_table(w)
    assert "Required now" in text and "1,844.00 EUR" in text
    assert "not optional" in text
    # Reference: `json`.
    totals = json.loads(to_json_text(w))["totals"]
    assert totals["required_cost"] == pytest.approx(1844.0)
    assert sorted(totals["required_jobs"]) == ["KL-01", "KL-02", "KL-03", "KL-07"]
    assert totals["near_limit_cost"] == pytest.approx(2424.0)
    ui = rendered(week_sections.totals(w))
    assert "Required now" in ui and "not optional" in ui


def test_week_outputs_lead_required_jobs_with_the_action(courier_week):
    w = courier_week
    table = to_table(w)
    kl01 = next(line for line in table.splitlines() if line.startswith("  Mon") and "KL-01" in line)
    assert "replace now" in kl01
    md = to_markdown_text(w)
    sheet = md.split("### KL-01")[1].split("> **Caution.**")[0]
    first = next(line for line in sheet.splitlines() if line.startswith("- **"))
    assert first.startswith("- **Action:** replace now")
    # Reference: `icalendar`.
    cal = icalendar.Calendar.from_ical(to_ics(w, STAMP))
    ev = next(e for e in cal.walk("VEVENT") if "KL-01" in str(e["SUMMARY"]))
    assert str(ev["DESCRIPTION"]).splitlines()[1].startswith("Action: replace now")
    rows = json.loads(to_json_text(w))["bookings"]
    assert next(r for r in rows if r["vehicle"] == "KL-01")["action"] == "replace now"


# --------------------------------------------------------------- small numbers, honestly


@pytest.mark.parametrize(("x", "shown"), [
    (0.0, "< 0.1 %"), (1.8e-7, "< 0.1 %"), (0.000449, "< 0.1 %"),
    (0.0123, "1.2 %"),   # 0.0123 x 100 = 1.23 -> 1.2
    (0.5, "50.0 %"), (None, "–"),
])
def test_percent(x, shown):
    assert export.percent(x) == shown


def test_percent_whole_numbers():
    assert export.percent(0.0, digits=0) == "< 1 %"
    assert export.percent(1.435, digits=0) == "144 %"  # 143.5 -> 144 (half away, by hand)


@given(st.floats(min_value=0.0, max_value=1.0, allow_nan=False))
def test_percent_never_shows_zero(x):
    text = export.percent(x)
    assert not re.fullmatch(r"0(\.0+)? %", text)
    if not text.startswith("<"):
        assert abs(float(text.removesuffix(" %")) - 100 * x) <= 0.05 + 1e-9


@pytest.mark.parametrize(("x", "kw", "shown"), [
    (0.0, {}, "< 1"), (0.3, {"currency": "EUR"}, "< 1 EUR"), (58.4, {}, "58"),
    (0.004, {"decimals": 2}, "< 0.01"), (1234.5, {"currency": "EUR", "decimals": 2},
                                         "1,234.50 EUR"),
    (0.0, {"decimals": 2, "estimate": False}, "0.00"),  # a sum of entered costs: a fact
])
def test_money(x, kw, shown):
    assert export.money(x, **kw) == shown


def test_display_uses_the_shared_formats():
    assert export.display(0.0, "p_fail_horizon") == "< 0.1 %"
    assert export.display(0.0, "expected_loss") == "< 1"
    assert export.display(0.2, "expected_loss") == "< 1"


def test_json_keeps_full_precision_of_tiny_probabilities(capsys, tmp_path):
    # A belt fitted six days before the planning date: its failure probability over 90 days is
    # far below a millionth, and must not be written as 0.
    text = (COURIER.read_text(encoding="utf-8") + """
[[vehicles]]
id = "NEW-1"
label = "new belt"
engine = "plim"
in_service = 2020-01-01
readings = [{ date = 2026-11-01, odometer = 60000 }, { date = 2026-12-01, odometer = 60600 }]
[[vehicles.belt_jobs]]
date = 2026-11-28
odometer = 60500
reason = "scheduled"
""")
    path = tmp_path / "fleet.toml"
    path.write_text(text, encoding="utf-8")
    doc = json.loads(cli(capsys, "list", str(path), "--as-of", "2026-12-04",
                         "--format", "json"))  # reference: `json`
    rec = next(r for r in doc["vehicles"] if r["id"] == "NEW-1")
    fleet = parse_fleet_text(text, "fleet.toml")
    a = risk.assess_fleet_plan(fleet, FRI)
    r = a.risks["NEW-1"]
    # Reference: scipy.stats.weibull_min, conditional failure 1 - R(u2)/R(u1).
    sf = stats.weibull_min(a.model.beta, scale=a.model.eta).sf
    p = next(q for q in a.plans if q.id == "NEW-1")
    rate = p.usage.daily_distance
    # Profile plim: 91,300 km or 62 months (2026-11-28 + 62 months = 2032-01-28).
    u_later = max((p.usage.est_odometer + 90 * rate - 60500) / 91300,
                  (FRI + dt.timedelta(days=90) - dt.date(2026, 11, 28)).days
                  / (dt.date(2032, 1, 28) - dt.date(2026, 11, 28)).days)
    expected = 1 - sf(u_later) / sf(r.life_used)
    assert 0 < expected < 1e-6
    assert rec["p_fail_horizon"] == pytest.approx(expected, rel=1e-9)
    # A non-interference engine: the fleet's breakdown_cost (450) applies, not the profile's
    # failure_cost (the engine repair figure).
    assert rec["expected_loss"] == pytest.approx(expected * 450.0, rel=1e-9)


# ---------------------------------------------------------------- wording


FORBIDDEN = ("of the interval (", "capped there", "optimum at or past",
             "use to a minimum", "no internal damage")


def test_no_wording_suggests_running_past_the_interval():
    sources = [*sorted((ROOT / "planner").rglob("*.py")), ROOT / "README.md"]
    for path in sources:
        text = path.read_text(encoding="utf-8")
        for phrase in FORBIDDEN:
            assert phrase not in text, f"{phrase!r} in {path.relative_to(ROOT)}"


def test_the_model_line_gives_no_scale_in_intervals():
    fleet = make_fleet("")
    line = risk.risk_model(fleet, FRI).describe()
    assert "scale" not in line and "extrapolat" in line


def test_non_interference_is_no_guarantee():
    words = WHAT_IT_MEANS["breakdown"]
    assert "stops the engine" in words and "not ruled out" in words
    assert WHAT_IT_MEANS["overdue"].startswith("past a limit: replace now")


def test_a_capped_point_says_replace_at_the_interval(capsys):
    out = cli(capsys, "risk", str(COURIER), "--as-of", "2026-12-04")
    assert "replace at the maker's interval, never later" in out


# ----------------------------------------------------------------- the fleet fit


def test_a_fit_with_longer_life_never_lengthens_the_interval(capsys, tmp_path):
    path = tmp_path / "fleet.toml"
    path.write_text(COURIER.read_text(encoding="utf-8").replace(
        "use_fleet_fit = false", "use_fleet_fit = true"), encoding="utf-8")
    # The courier fit: shape 4.20, 18.1 % failed by the maker's interval, so more than half of
    # its belts would outlast the interval: it implies a longer life than the maker's.
    fleet = load_fleet(path).fleet
    model = risk.risk_model(fleet, FRI)
    assert model.basis == risk.FLEET_FIT
    # Reference: scipy.stats.weibull_min.cdf at one interval.
    assert stats.weibull_min.cdf(1.0, model.beta, scale=model.eta) < 0.5
    say = "statuses still follow the maker's interval"
    out = cli(capsys, "risk", str(path), "--as-of", "2026-12-04")
    assert say in out and "never lengthens" in out
    doc = json.loads(cli(capsys, "risk", str(path), "--as-of", "2026-12-04",
                         "--format", "json"))  # reference: `json`
    assert say in doc["risk_assumptions"]["interval_note"]
    lst = json.loads(cli(capsys, "list", str(path), "--as-of", "2026-12-04",
                         "--format", "json"))
    assert say in lst["risk_assumptions"]["interval_note"]
    assert say in model.describe()  # the line the UI's risk part shows
    # The assumptions (not a fit) need no such note.
    assert risk.risk_model(load_fleet(COURIER).fleet, FRI).as_dict()["interval_note"] is None
