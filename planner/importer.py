"""Bringing data in: the importer's public names, in one place.

The code lives in `planner.importing` (its docstring gives the reading rules and which module
holds each); this module re-exports what the command line, the UI and the tests use.
"""

from planner.edit import add_readings
from planner.importing.columns import IGNORE, ColumnUse, header_key, map_columns, parse_map
from planner.importing.csvtable import (
    DELIMITER_NAMES,
    MAX_ROWS,
    CsvTable,
    Decoded,
    Row,
    RowProblem,
    decode_bytes,
    read_table,
)
from planner.importing.fields import FLEET_FIELDS, NOT_MAPPABLE, READING_FIELDS, FieldInfo
from planner.importing.fleet_import import FleetImport, import_fleet
from planner.importing.profiles import PROFILE_KEY
from planner.importing.readings_import import NewReading, ReadingsImport, import_readings
from planner.importing.values import (
    DAY_FIRST,
    MONTH_FIRST,
    CellError,
    decide_date_order,
    decide_decimal_mark,
    parse_date,
    parse_enum,
    parse_number,
)

__all__ = [
    "DAY_FIRST", "DELIMITER_NAMES", "FLEET_FIELDS", "IGNORE", "MAX_ROWS", "MONTH_FIRST",
    "NOT_MAPPABLE", "PROFILE_KEY", "READING_FIELDS", "CellError", "ColumnUse", "CsvTable",
    "Decoded", "FieldInfo", "FleetImport", "NewReading", "ReadingsImport", "Row", "RowProblem",
    "add_readings", "decide_date_order", "decide_decimal_mark", "decode_bytes", "header_key",
    "import_fleet", "import_readings", "map_columns", "parse_date", "parse_enum", "parse_map",
    "parse_number", "read_table",
]
