"""Calling the Clinic from the interface: every call runs in a Textual thread worker (`@work`), so the
screen never waits on the store; a failed call becomes one notification, never a traceback.

A save runs in the app's worker (`CaseloadApp.save`); when it is done the app gets `Saved`, shows
its summary, updates the one list row the save changed from the snapshot it returned, and sends
`StoreChanged` to every open screen, which reads again what it shows.
"""

from __future__ import annotations

from typing import Any

from textual.message import Message
from textual.worker import Worker, WorkerState

from caseload.application.clinic import plain_reason
from caseload.application.errors import StoreDamaged

STORE = "store"  # the worker group of every Clinic call
STORE_WORK = {"thread": True, "group": STORE, "exit_on_error": False}  # @work(**STORE_WORK)


class ClinicWork:
    """Mixed into a Screen (or the App) whose `@work(**STORE_WORK)` methods call the Clinic.

    Worker state messages go to the node that ran the worker, so each one handles its own failures:
    the reason is notified, and `work_failed(worker name, reason)` lets the screen put itself right."""

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        if event.state is not WorkerState.ERROR:
            return
        reason = plain_reason(event.worker.error)
        if isinstance(event.worker.error, StoreDamaged):  # not one call's failure: every save will be refused
            self.app.notify(reason, title="Store damaged", severity="error", markup=False, timeout=60)
        else:
            self.app.notify(reason, title="Not done", severity="error", markup=False, timeout=8)
        self.work_failed(event.worker.name, reason)

    def work_failed(self, name: str, reason: str) -> None:
        """Override to react to a failed call (the notification is already shown)."""


class Saved(Message):
    """A change was saved; `summary` is the one line to show (None: the screen that saved shows it)."""

    def __init__(self, summary: str | None, result: Any = None) -> None:
        super().__init__()
        self.summary = summary
        self.result = result


class StoreChanged(Message):
    """The store changed; `row_updated` says the caseload list already holds the change."""

    def __init__(self, row_updated: bool) -> None:
        super().__init__()
        self.row_updated = row_updated
