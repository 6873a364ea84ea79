"""Writes the corpus: broken/*, accepted/* and expected.toml, each from base.toml (valid).

    python tests/corpus/make_corpus.py

Each broken file is the base with one line changed (or a few, kept to the same line count, so
the base's line numbers hold). The expected line of each case was read off `cat -n base.toml`
by hand and is written here beside the change; tests/test_corpus.py checks the CLI against it.
"""

import random
from pathlib import Path

ROOT = Path(__file__).resolve().parent
BASE = (ROOT / "base.toml").read_text(encoding="utf-8")
L = BASE.split("\n")  # L[n-1] is line n


def lines(changes: dict[int, str]) -> str:
    """The base with whole lines replaced (1-based); a replacement may hold no newline."""
    out = list(L)
    for n, new in changes.items():
        out[n - 1] = new
    return "\n".join(out)


def check(n: int, start: str) -> None:
    assert L[n - 1].startswith(start), (n, L[n - 1], start)


# name -> the file's content and what `beltplan check` must say about it
cases = {}


def case(
    name, text, fragment, line=None, vehicle=None, field=None, hint=None, file=None, title=None
):
    cases[name] = dict(
        text=text,
        fragment=fragment,
        line=line,
        vehicle=vehicle,
        field=field,
        hint=hint,
        file=file,
        title=title,
    )


check(24, "label")
case(
    "syntax_unclosed_string",
    lines({24: 'label = "Van 1'}),
    "TOML syntax error: the string is not closed before the end of the line",
    24,
    hint="add the closing quote",
)
check(26, "in_service")
case(
    "syntax_missing_equals",
    lines({26: "in_service 2020-02-03"}),
    "TOML syntax error: Expected '=' after a key",
    26,
)
check(38, "[[vehicles]]")
case("syntax_unclosed_header", lines({38: "[[vehicles]"}), "TOML syntax error: Expected ']]'", 38)
check(25, "engine")
case(
    "syntax_duplicate_key",
    lines({26: 'engine = "qv16"', 27: "in_service = 2020-02-03"}),
    "TOML syntax error: Cannot overwrite a value",
    26,
    hint="given twice",
)
case(
    "syntax_invalid_date",
    lines({26: "in_service = 2020-02-30"}),
    "TOML syntax error: Invalid date or datetime",
    26,
    hint="2020-02-30 is not a real date",
)
case(
    "syntax_curly_quotes",
    lines({24: "label = \u201cVan 1\u201d"}),
    "TOML syntax error",
    24,
    hint="curly quote",
)
check(25, "engine")
case(
    "syntax_no_break_space",
    lines({25: 'engine\u00a0= "qv16"'}),
    "TOML syntax error",
    25,
    hint="no-break space (U+00A0)",
)
case(
    "syntax_bom_inside",
    lines({38: "\ufeff[[vehicles]]"}),
    "TOML syntax error",
    38,
    hint="byte-order mark",
)
check(8, "[risk]")
case(
    "syntax_table_twice",
    lines({8: "[fleet]"}),
    "TOML syntax error: Cannot declare fleet twice",
    8,
    hint="merge the two",
)
case(
    "syntax_vehicle_single_brackets",
    lines({38: "[vehicles]"}),
    "TOML syntax error: Cannot declare vehicles twice",
    38,
    hint="[[vehicles]]",
)
case("empty", "", "holds no fleet data", hint="a new fleet file starts with schema = 1")
case("only_comments", "# fleet file: vehicles to follow\n\n# nothing yet\n", "holds no fleet data")
rng = random.Random(6)
case(
    "binary",
    b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(rng.randrange(256) for _ in range(400)),
    "a NUL byte: binary data, not text",
    3,
    file="binary.png",
    title="is not a text file",
)
case("utf16", ("\ufeff" + BASE).encode("utf-16-le"), "is saved as UTF-16, not UTF-8")
case("utf16_no_bom", BASE.encode("utf-16-le"), "is saved as UTF-16, not UTF-8")
case(
    "latin1",
    lines({24: 'label = "Van 1, caf\u00e9 run"'}).encode("latin-1"),
    "byte 0xe9 cannot be decoded as UTF-8",
    24,
    title="is not valid UTF-8",
    hint="Save the file as UTF-8",
)
check(13, "closed")
case(
    "deep_nesting",
    lines({13: "closed = " + "[" * 3000 + "]" * 3000}),
    "is nested too deeply to read",
)
case(
    "deep_tables",
    BASE + "[vehicles.contact." + ".".join(["a"] * 20) + "]\nx = 1\n",
    "unknown key 'a'",
    44,
    "CV-02",
    "contact.a",
)
case(
    "huge_line",
    lines({24: 'label = "' + "x" * 100_000 + '"'}),
    "text too long: 100000 characters, at most 2000",
    24,
    "CV-01",
    "label",
)
check(2, "schema")
case(
    "schema_version_2",
    lines({2: "schema = 2"}),
    "unsupported format version 2",
    2,
    field="schema",
    hint="schema = 1",
)
case(
    "schema_as_text",
    lines({2: 'schema = "1"'}),
    'wrong type: expected a whole number, found text "1"',
    2,
    field="schema",
    hint="schema = 1",
)
case(
    "vehicles_not_array",
    "\n".join(L[:2] + ['vehicles = "CV-01, CV-02"'] + L[3:21]) + "\n",
    'vehicles must be an array of tables, found text "CV-01, CV-02"',
    3,
    field="vehicles",
)
case(
    "vehicles_table_of_tables",
    "\n".join(L[:21] + ["[vehicles.CV-01]", 'engine = "qv16"', "in_service = 2020-02-03"]) + "\n",
    "vehicles must be an array of tables, found a table",
    22,
    field="vehicles",
)
check(4, "[fleet]")
case(
    "fleet_as_value",
    lines({4: 'fleet = "Corpus Couriers"', 5: "", 6: ""}),
    'expected a table, found text "Corpus Couriers"',
    4,
    field="fleet",
)
check(28, "readings")
case(
    "readings_as_table",
    lines({28: "readings = { date = 2025-12-01, odometer = 168500 }", 29: "", 30: "", 31: ""}),
    "expected an array, found a table",
    28,
    "CV-01",
    "readings",
)
check(43, "readings")
case(
    "reading_not_table",
    lines({43: "readings = [108900]"}),
    "an item of readings must be a table, found 108900",
    43,
    "CV-02",
    "readings[0]",
)
check(15, "[engines.qv16]")
case(
    "engine_profile_not_table",
    lines({15: "[engines]", 16: 'qv16 = "belt"', 17: "", 18: "", 19: "", 20: ""}),
    'expected a table, found text "belt"',
    16,
    field="engines.qv16",
)
case(
    "unknown_table",
    lines({8: "[risks]"}),
    "unknown key 'risks'",
    8,
    field="risks",
    hint="did you mean 'risk'?",
)
case(
    "unknown_vehicle_key",
    lines({24: 'lable = "Van 1"'}),
    "unknown key 'lable'",
    24,
    "CV-01",
    "lable",
    hint="did you mean 'label'?",
)
check(20, "labour_hours")
case(
    "unknown_engine_key",
    lines({20: "labor_hours = 3.5"}),
    "unknown key 'labor_hours'",
    20,
    field="engines.qv16.labor_hours",
    hint="did you mean 'labour_hours'?",
)
check(29, "  { date = 2025-12-01")
case(
    "reading_odometer_text",
    lines({29: '  { date = 2025-12-01, odometer = "168500" },'}),
    'wrong type: expected a number, found text "168500"',
    29,
    "CV-01",
    "readings[0].odometer",
    hint="odometer = 168500",
)
case(
    "date_as_text",
    lines({26: 'in_service = "2020-02-03"'}),
    'wrong type: expected a date (YYYY-MM-DD), found text "2020-02-03"',
    26,
    "CV-01",
    "in_service",
    hint="in_service = 2020-02-03",
)
check(34, "date")
case(
    "datetime_for_date",
    lines({34: "date = 2023-01-16T09:30:00"}),
    "found date-time 2023-01-16T09:30:00",
    34,
    "CV-01",
    "belt_jobs[0].date",
    hint="date = 2023-01-16",
)
check(42, "in_service")
case(
    "integer_for_date",
    lines({42: "in_service = 0"}),
    "wrong type: expected a date (YYYY-MM-DD), found 0",
    42,
    "CV-02",
    "in_service",
)
check(27, "in_service_odometer")
case(
    "boolean_for_number",
    lines({27: "in_service_odometer = true"}),
    "wrong type: expected a number, found true",
    27,
    "CV-01",
    "in_service_odometer",
)
check(19, "interval_months")
case(
    "fraction_for_whole_number",
    lines({19: "interval_months = 72.5"}),
    "wrong type: expected a whole number, found 72.5",
    19,
    field="engines.qv16.interval_months",
)
check(39, "id")
case(
    "number_for_text",
    lines({39: "id = 2"}),
    "wrong type: expected text in double quotes, found 2",
    39,
    "2",
    "id",
    hint='id = "2"',
)
check(9, "use_fleet_fit")
case(
    "text_for_boolean",
    lines({9: 'use_fleet_fit = "false"'}),
    'wrong type: expected true or false, found text "false"',
    9,
    field="risk.use_fleet_fit",
    hint="use_fleet_fit = false",
)
check(35, "odometer")
case(
    "nan_odometer",
    lines({35: "odometer = nan"}),
    "nan is not a usable number",
    35,
    "CV-01",
    "belt_jobs[0].odometer",
)
case(
    "negative_labour_hours",
    lines({20: "labour_hours = -3.5"}),
    "labour_hours must be greater than 0 (found -3.5)",
    20,
    field="engines.qv16.labour_hours",
    hint="minus sign",
)
check(30, "  { date = 2026-06-01")
case(
    "absurd_odometer",
    lines({30: "  { date = 2026-06-01, odometer = 19690000 },"}),
    "odometer must be at most 5,000,000 (found 19690000)",
    30,
    "CV-01",
    "readings[1].odometer",
)
case(
    "unknown_word",
    lines({24: 'duty = "heavy"'}),
    "\"heavy\" is not allowed here: expected 'normal' or 'severe'",
    24,
    "CV-01",
    "duty",
)
case(
    "empty_id", lines({39: 'id = ""'}), "id is empty", 39, "#2", "id", hint="fleet number or plate"
)
case(
    "missing_in_service",
    lines({42: ""}),
    "required key is missing",
    38,
    "CV-02",
    "in_service",
    hint="add in_service = ",
)
case(
    "duplicate_ids",
    lines({39: 'id = "CV-01"'}),
    "id 'CV-01' is already used by vehicle #1",
    39,
    "CV-01",
    "id",
)
check(41, "engine")
case(
    "unknown_profile",
    lines({41: 'engine = "qv61"'}),
    "unknown engine profile 'qv61'",
    41,
    "CV-02",
    "engine",
    hint="did you mean 'qv16'?",
)
case(
    "odometer_backwards",
    lines({30: "  { date = 2026-06-01, odometer = 16900 },"}),
    "odometer goes backwards: reading of 2026-06-01 reads 16,900",
    30,
    "CV-01",
    "readings[1].odometer",
)
case(  # a previous owner's job is accepted only when its odometer fits: this one does not
    "job_before_service",
    lines({34: "date = 2019-01-16", 35: "odometer = 500"}),
    "belt job dated 2019-01-16, before the vehicle entered service (2020-02-03), reads 500: "
    "above the in-service odometer 12",
    35,
    "CV-01",
    "belt_jobs[0].odometer",
)
case(
    "far_future_date",
    lines({30: "  { date = 2206-06-01, odometer = 196900 },"}),
    "date 2206-06-01 is outside 1950-2100",
    30,
    "CV-01",
    "readings[1].date",
    hint="check the year",
)
check(40, "label")
case(
    "registered_after_service",
    lines({40: "first_registered = 2022-05-01"}),
    "first_registered 2022-05-01 is after in_service 2021-03-01",
    40,
    "CV-02",
    "first_registered",
)
case(
    "closed_far_future",
    lines({13: "closed = [2926-12-25]"}),
    "closed day 2926-12-25 is outside 1950-2100",
    13,
    field="workshop.closed[0]",
)
case(
    "unavailable_reversed",
    lines({40: "unavailable = [{ start = 2027-01-10, end = 2027-01-03 }]"}),
    "unavailable range ends (2027-01-03) before it starts (2027-01-10)",
    40,
    "CV-02",
    "unavailable[0].end",
    hint="swap start and end",
)
case(
    "belt_jobs_single_table",
    BASE + '[vehicles.belt_jobs]\ndate = 2024-01-01\nodometer = 50000\nreason = "scheduled"\n',
    "expected an array of tables, found a table",
    44,
    "CV-02",
    "belt_jobs",
    hint="[[vehicles.belt_jobs]]",
)

case(
    "control_character",
    lines({24: 'label = "Van 1 \\u001b[31mOK\\u001b[0m"'}),
    "text holds a control character U+001B (escape) at position 7",
    24,
    "CV-01",
    "label",
    hint="remove it",
)

# Accepted files: each must load, with the value shown.
accepted = {
    "bom": ("\ufeff" + BASE).encode("utf-8"),
    "crlf": BASE.replace("\n", "\r\n").encode("utf-8"),
    "markup_label": lines(
        {
            24: "label = '[bold red]Van 1[/] <b>&amp;</b> ${HOME} %s {0} `x` "
            "\\e[31m =HYPERLINK(\"a\")'"
        }
    ).encode("utf-8"),
    "no_fleet_table": lines({4: "", 5: "", 6: ""}).encode("utf-8"),
    "no_schema": lines({2: ""}).encode("utf-8"),
    "unicode_text": lines(
        {
            23: 'id = "\u00c4\u00d6-01"',
            24: 'label = "Fourgon 1 \u2014 Z\u00fcrich \u2192 \u0141\u00f3d\u017a \U0001f690"',
        }
    ).encode("utf-8"),
}

for name, c in cases.items():
    data = c["text"] if isinstance(c["text"], bytes) else c["text"].encode("utf-8")
    (ROOT / "broken" / (c["file"] or f"{name}.toml")).write_bytes(data)
for name, data in accepted.items():
    (ROOT / "accepted" / f"{name}.toml").write_bytes(data)


def toml_str(s):
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


out = [
    "# The beltplan test corpus: every file in broken/ and what `beltplan check` must say.",
    "# One problem per file, made from the same invented two-van fleet. Per file: `fragment`,",
    "# part of the message; `line`, the line it names; `vehicle` and `field` when there is one;",
    "# `hint`, part of the fix; `title`, part of the first line. Files in accepted/ must load",
    "# (see tests/test_corpus.py). Made by make_corpus.py from base.toml.",
    "",
]
for name, c in cases.items():
    out.append(f"[broken.{name}]")
    if c["file"]:
        out.append(f"file = {toml_str(c['file'])}")
    if c["title"]:
        out.append(f"title = {toml_str(c['title'])}")
    out.append(f"fragment = {toml_str(c['fragment'])}")
    for k in ("line", "vehicle", "field", "hint"):
        if c[k] is not None:
            out.append(f"{k} = {c[k]}" if k == "line" else f"{k} = {toml_str(c[k])}")
    out.append("")
(ROOT / "expected.toml").write_text("\n".join(out))
print(len(cases), "broken,", len(accepted), "accepted")
