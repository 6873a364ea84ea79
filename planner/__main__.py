"""`python -m planner` is the `beltplan` command."""

import sys

from planner.cli import main

sys.exit(main())
