"""Which caseload modules a phone clerk's save enters, measured with a call trace.

The save is the one the interface tests drive: in the quick log, part of a name, Enter, `t`, Enter,
`36.55`, Enter. Every Python call made while the keys are handled and the save's worker runs is
recorded (threading.setprofile reaches the worker thread); calls into caseload modules are counted.

    python -m tools.trace_save
"""

from __future__ import annotations

import asyncio
import sys
import tempfile
import threading
from collections import Counter
from pathlib import Path

import caseload
from caseload.application.clinic import Clinic, Identity
from caseload.tui.app import make_app
from tests.tui.fixture_store import ACCOUNTS, TODAY, build

PACKAGE = str(Path(caseload.__file__).parent)


async def _save_and_trace(clinic: Clinic) -> tuple[Counter, set]:
    calls: Counter = Counter()
    functions: set = set()
    recording = threading.Event()

    def profile(frame, event, arg):
        if recording.is_set() and event == "call" and frame.f_code.co_filename.startswith(PACKAGE):
            module = frame.f_globals.get("__name__", "?")
            calls[module] += 1
            functions.add((module, frame.f_code.co_qualname))

    app = make_app(clinic, refresh_seconds=600)
    threading.setprofile(profile)  # before the app starts, so the worker threads carry it too
    sys.setprofile(profile)
    try:
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            await app.workers.wait_for_complete()
            await pilot.pause()
            await pilot.press("l", *"noor", "enter", "t", "enter", *"36.5")
            recording.set()  # the last key and Enter: the save itself
            await pilot.press("5", "enter")
            await pilot.pause()
            await app.workers.wait_for_complete()
            await pilot.pause()
            recording.clear()
    finally:
        sys.setprofile(None)
        threading.setprofile(None)
    return calls, functions


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "trace.db"
        build(path).close()
        with Clinic.open(path, Identity(ACCOUNTS["phil"]), date_of_record=TODAY) as clinic:
            calls, functions = asyncio.run(_save_and_trace(clinic))
    print(f"{len(calls)} caseload modules, {len(functions)} functions, {sum(calls.values())} calls")
    layers = Counter(module.split(".")[1] if "." in module else module for module in calls)
    print("by layer: " + ", ".join(f"{layer} {count}" for layer, count in sorted(layers.items())))
    for module, count in sorted(calls.items()):
        print(f"  {module:45} {count:6}")


if __name__ == "__main__":
    main()
