"""`beltplan schema`: the JSON Schema of the fleet file."""

from __future__ import annotations

import argparse
import json

from planner.caution import caution_block
from planner.cli.common import emit
from planner.fleet import json_schema


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "schema", help="print the JSON Schema of the fleet file",
        description="Print the JSON Schema of the fleet file, for editors that validate TOML "
        "against a schema.",
        epilog="example:\n  beltplan schema -o beltplan.schema.json\n\n" + caution_block(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("-o", "--output", metavar="OUT", help="write to this file instead of stdout")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    emit(json.dumps(json_schema(), indent=2) + "\n", args.output, what="the schema")
    return 0
