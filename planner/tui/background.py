"""Work off the UI thread: a daemon thread to wait on, the garbage collector held off, and
bugs turned into the one error type the views show.

No Textual here; `BeltplanApp` runs these inside its workers (`run_worker`, exclusive).
"""

from __future__ import annotations

import asyncio
import gc
import threading
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TypeVar

from planner.errors import PlannerError

T = TypeVar("T")

_gc_lock = threading.Lock()
_gc = {"pauses": 0, "was_enabled": False}


@contextmanager
def gc_paused(reclaim: bool = False) -> Iterator[None]:
    """No cyclic garbage collection meanwhile; then what was built is frozen out of later ones.

    Reading or planning a fleet builds half a million objects that live as long as the plan.
    Each full collection walks all of them while holding the interpreter (a quarter of a second
    at 10,000 vehicles), so the UI waits: collections during a read add a tenth to it, and the
    ones a re-plan sets off stall the UI for up to half a second. Frozen, they are never walked;
    the read, the plan and the table's cells hold no reference cycles (tests/test_tui_perf.py
    checks), so refcounting alone frees them once dropped. What a freeze keeps from the cyclic
    collector is a UI object alive then and dropped later in a cycle (a closed form, old cache
    entries; about a thousand objects a re-plan): `reclaim` (a read, which takes seconds anyway)
    first unfreezes and collects everything.
    """
    if reclaim:
        gc.unfreeze()
        gc.collect()
    with _gc_lock:
        if _gc["pauses"] == 0:
            _gc["was_enabled"] = gc.isenabled()
            gc.disable()
        _gc["pauses"] += 1
    try:
        yield
    finally:
        with _gc_lock:
            _gc["pauses"] -= 1
            if _gc["pauses"] == 0:
                gc.freeze()
                if _gc["was_enabled"]:
                    gc.enable()


async def off_thread(work: Callable[[], T]) -> T:
    """Run `work` in a daemon thread and wait for it without blocking the event loop.

    A daemon thread, unlike the executor's, does not keep the process alive: quitting while a
    big file is still being read does not wait for the read to end.
    """
    loop = asyncio.get_running_loop()
    done: asyncio.Future[T] = loop.create_future()

    def settle(result: Any, error: BaseException | None) -> None:
        if not done.done():
            if error is not None:
                done.set_exception(error)
            else:
                done.set_result(result)

    def run() -> None:
        try:
            result, error = work(), None
        except BaseException as exc:  # handed to the waiting coroutine, which decides
            result, error = None, exc
        try:
            loop.call_soon_threadsafe(settle, result, error)
        except RuntimeError:  # the app has ended meanwhile: nobody is waiting
            pass

    threading.Thread(target=run, name="beltplan-work", daemon=True).start()
    return await done


def internal_error(doing: str, exc: BaseException) -> PlannerError:
    """A bug while `doing` something, as the one error type the views know how to show."""
    return PlannerError(f"beltplan failed while {doing}: this is a bug, not a problem with "
                        "the file", f"{type(exc).__name__}: {exc}. Nothing was changed or "
                        "saved; please report it.")
