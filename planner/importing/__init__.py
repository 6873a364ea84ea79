"""Bringing data in: a fleet file from a spreadsheet export, odometer readings from a weekly CSV.

Pure: bytes or text in, data and a report out. No file access and no clock: the command line
reads the files, passes the time for the header comment, writes the result and loads it back.
Other code imports these names from `planner.importer`.

The reading rules, in the order they apply, and the module each lives in:
- bytes (`csvtable`): UTF-8 with or without a BOM; otherwise Windows-1252, and the report says so.
- table (`csvtable`): comma or semicolon, chosen from the header row (an Excel `sep=;` first line
  wins); quoting per RFC 4180 (doubled quotes, separators and line breaks inside quoted fields).
- columns (`columns`, with the header words in `fields`): `--map COLUMN=field` first, then our
  own list of likely header words per field.
- dates (`values`): ISO 8601 always; day/month/year or month/day/year only when the user says
  which, or when every such value in the column can be read one way only. Never a guess.
- numbers (`values`, units decided in `sheet`): thousands separators and a unit suffix
  ("151,200 km"); a unit that contradicts the fleet's is an error for that row, never converted.
A row with a problem is reported with its row number, column and value, and left out.

`sheet` puts these together for one CSV; `fleet_import` (with `profiles`) and `readings_import`
are the two imports built on it.
"""
