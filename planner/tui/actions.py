"""Every command of the UI, defined once: its id, keys, words and where it applies.

The key bindings, the command palette and the help view are all generated from `ACTIONS`, so
they cannot disagree. `target="app"` actions run `BeltplanApp.action_<id>` and apply on the
screens named in `scopes` (the app's `check_action` enforces that); `target="screen"` actions
are bound on the form and dialog screens (and the week view) themselves and run their
`action_<id>`.
"""

from __future__ import annotations

from dataclasses import dataclass

from textual.binding import Binding

MAIN, DETAIL, ERROR, FORM, HELP = "main", "detail", "error", "form", "help"
WEEK = "week"
ANY_VIEW = (MAIN, DETAIL, ERROR, WEEK)
LOADED = (MAIN, DETAIL)


@dataclass(frozen=True)
class Action:
    id: str                   # action name: the handler is action_<id> on the target
    keys: str                 # Textual key names, comma separated; the first is shown
    title: str                # short words for the key strip and the palette
    help: str                 # one line for the help view and the palette
    group: str                # heading in the help view
    scopes: tuple[str, ...]   # the views where it applies
    strip: tuple[str, ...] = ()  # the views whose key strip shows it
    target: str = "app"
    priority: bool = False
    short: str = ""           # shorter words for the key strip, when the title is long

    @property
    def strip_title(self) -> str:
        return self.short or self.title


ACTIONS: tuple[Action, ...] = (
    # Looking
    Action("detail", "enter", "detail", "Open the detail of the highlighted vehicle: why it is "
           "due, both limits, usage, notes, job history", "Look", (MAIN,), strip=(MAIN,)),
    Action("back", "escape", "back", "Close the detail view; in the list, leave the find box",
           "Look", (MAIN, DETAIL), strip=(DETAIL,)),
    Action("find", "slash", "find", "Find vehicles by id or label (type to narrow the list)",
           "Look", (MAIN,), strip=()),
    Action("filter", "f", "filter", "Show only some statuses and consequences", "Look",
           (MAIN,), strip=(MAIN,)),
    Action("sort", "s", "sort", "Sort by a column (choose it again to reverse); triage order "
           "is the default", "Look", (MAIN,), strip=(MAIN,)),
    Action("clear_view", "c", "clear", "Clear the find box, filters and sort", "Look", (MAIN,)),
    Action("plan_date", "d", "date", "Change the planning date (e.g. the end of next month)",
           "Look", LOADED, strip=(DETAIL,)),
    # Editing
    Action("add_reading", "r", "reading", "Add an odometer reading to the vehicle", "Edit",
           LOADED, strip=LOADED),
    Action("record_job", "j", "belt job", "Record a belt job done on the vehicle", "Edit",
           LOADED, strip=LOADED, short="job"),
    Action("add_vehicle", "a", "add vehicle", "Add a vehicle to the fleet", "Edit", (MAIN,)),
    Action("edit_vehicle", "e", "edit", "Edit the vehicle's own fields", "Edit", LOADED,
           strip=(DETAIL,)),
    Action("delete_vehicle", "delete", "delete vehicle", "Delete the vehicle (asks first)",
           "Edit", LOADED),
    Action("engine_profile", "p", "engine profile", "Add an engine profile or edit one",
           "Edit", LOADED),
    Action("undo", "u,ctrl+z", "undo", "Undo the last change (again for the one before)",
           "Edit", LOADED),
    Action("import_readings", "o", "import readings", "Import odometer readings from a CSV "
           "export (fuel card, telematics, driver's log): see what would be added, skipped "
           "and rejected, then apply", "Edit", LOADED, short="import"),
    # The workshop week: a planning aid for this session, never saved into the fleet file.
    # The week view's own keys are bound on the view (target "screen"), like a form's.
    Action("week", "w", "week plan", "Open the workshop week: belt jobs by day and bay, the "
           "hours left, what did not fit and why, parts to order, who to call", "Week plan",
           (MAIN,), short="week"),
    Action("week_close", "escape,w", "back", "Close the week plan (its moves stay for this "
           "session)", "Week plan", (WEEK,), strip=(WEEK,), target="screen"),
    Action("week_detail", "enter", "detail", "Open the detail of the highlighted job's "
           "vehicle", "Week plan", (WEEK,), target="screen"),
    Action("week_move", "m", "move", "Move the highlighted job: choose its first day and bay; "
           "the planner's rules decide, and a refusal says why", "Week plan", (WEEK,),
           strip=(WEEK,), target="screen"),
    Action("week_earlier", "shift+up", "a day earlier", "Move the highlighted job one working "
           "day earlier, same bay", "Week plan", (WEEK,), target="screen", short="earlier"),
    Action("week_later", "shift+down", "a day later", "Move the highlighted job one working "
           "day later, same bay", "Week plan", (WEEK,), target="screen", short="later"),
    Action("week_bay", "b", "other bay", "Move the highlighted job to the next bay, same day",
           "Week plan", (WEEK,), strip=(WEEK,), target="screen", short="bay"),
    Action("week_undo", "u", "undo move", "Take back the last move (again for the one "
           "before)", "Week plan", (WEEK,), target="screen"),
    Action("week_dates", "d", "dates", "Change the first day, the number of weeks and which "
           "vehicles to book (plans again)", "Week plan", (WEEK,), strip=(WEEK,),
           target="screen"),
    Action("week_export", "x", "export", "Export the week as shown: CSV (jobs, parts or "
           "calls), JSON, Markdown job sheets or iCalendar", "Week plan", (WEEK,),
           strip=(WEEK,), target="screen"),
    Action("week_board", "1", "days and bays", "Show the days, the bays and the jobs in them",
           "Week plan", (WEEK,), target="screen"),
    Action("week_parts", "2", "parts order", "Show the parts to order and by when",
           "Week plan", (WEEK,), target="screen"),
    Action("week_calls", "3", "call list", "Show the customers to call", "Week plan", (WEEK,),
           target="screen"),
    Action("week_totals", "4", "totals", "Show hours, the cost of the required jobs "
           "apart from the near-limit ones, the risk assumptions and the notes", "Week plan",
           (WEEK,), target="screen"),
    # The file
    Action("save", "ctrl+s", "save", "Save to the fleet file: checked, atomic, with a .bak "
           "of the previous version; refuses if the file changed on disk", "File", LOADED,
           strip=LOADED),
    Action("reload", "ctrl+r", "reload", "Read the file again from disk (asks first when "
           "there are unsaved changes)", "File", ANY_VIEW, strip=(ERROR,)),
    Action("export", "x", "export", "Export the list as shown (filtered) to CSV, JSON or "
           "Markdown", "File", (MAIN,)),
    Action("quit", "q,ctrl+q", "quit", "Quit (asks first when there are unsaved changes)",
           "File", ANY_VIEW, strip=ANY_VIEW),
    # Help
    Action("help", "question_mark,f1", "help", "Show every key", "Help", ANY_VIEW, strip=ANY_VIEW),
    Action("about", "i", "about", "About the planner, its assumptions and the cautions",
           "Help", ANY_VIEW, strip=(ERROR,)),
    Action("command_palette", "ctrl+p", "commands", "Search every command by name", "Help",
           ANY_VIEW),
    # Inside forms and dialogs
    Action("apply", "ctrl+o", "apply", "Apply the form (enter in a text field does the same)",
           "Forms and dialogs", (FORM,), target="screen"),
    Action("cancel", "escape", "cancel", "Close the form or dialog without changing anything",
           "Forms and dialogs", (FORM, HELP), target="screen"),
    Action("close", "q,question_mark", "close", "Close the help or about view", "Forms and dialogs",
           (HELP,), target="screen"),
)

BY_ID: dict[str, Action] = {a.id: a for a in ACTIONS}

KEY_NAMES = {"question_mark": "?", "slash": "/", "escape": "esc", "delete": "del",
             "enter": "enter"}


def key_label(keys: str) -> str:
    """How the keys are written on screen: `u,ctrl+z` -> `u / ctrl+z`."""
    return " / ".join(KEY_NAMES.get(k.strip(), k.strip()) for k in keys.split(","))


def first_key(keys: str) -> str:
    first = keys.split(",")[0].strip()
    return KEY_NAMES.get(first, first)


def for_scope(scope: str) -> list[Action]:
    return [a for a in ACTIONS if scope in a.scopes]


def bindings(target: str, scope: str | None = None) -> list[Binding]:
    """Bindings for the app (`target="app"`) or for the pop-ups of `scope` (`"screen"`).

    The palette's own key is left to Textual (`App.COMMAND_PALETTE_BINDING`, set from here).
    """
    return [Binding(a.keys, a.id, a.title, show=False, priority=a.priority)
            for a in ACTIONS if a.target == target and a.id != "command_palette"
            and (scope is None or scope in a.scopes)]


def scope_of(screen: object) -> str | None:
    return getattr(screen, "SCOPE", None)
