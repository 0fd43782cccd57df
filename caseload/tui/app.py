"""The application: one factory, `make_app`, used by the command line and by the tests.

Every store call runs in a thread worker started by `CaseloadApp.store_job`; its result comes back
to the asking screen as a typed Message, and any failure reaches one handler that turns it into a
one-line notification (never a traceback).
"""

from __future__ import annotations

import sqlite3
from collections.abc import Callable
from datetime import date
from typing import Any

from textual.app import App
from textual.binding import Binding
from textual.message import Message
from textual.message_pump import MessagePump
from textual.reactive import reactive
from textual.widgets import Input
from textual.worker import Worker, WorkerState

from caseload.core.model import Actor, Role, Severity
from caseload.core.parse import InputError
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.application.caseload_view import CaseloadLine
from caseload.application.errors import Refused
from caseload.application.identity import resolve_actor
from caseload.application.account_setup import needs_sign_in
from caseload.store import Store, StoreError
from caseload.tui.gate import StoreGate
from caseload.tui.screens.caseload import CaseloadScreen
from caseload.tui.screens.quick_log import QuickLogScreen
from caseload.tui.screens.sign_in import SignInScreen
from caseload.tui.themes import DEFAULT_THEME, THEMES
from caseload.tui.writes import Written

REFRESH_SECONDS = 5.0


def reason_for(error: BaseException) -> str:
    """One line for a person: what went wrong, without a traceback."""
    if isinstance(error, (InputError, Refused, StoreError)):
        return str(error)
    if isinstance(error, sqlite3.OperationalError) and "locked" in str(error).lower():
        return "the store is busy with another terminal's change: try again in a moment"
    if isinstance(error, sqlite3.Error):
        return f"the store could not be read or written ({error})"
    return f"unexpected {type(error).__name__}: {error}"


class CaseloadApp(App):
    """The caseload interface over one store, as one staff member, on one day."""

    TITLE = "caseload"
    CSS_PATH = ["app.tcss", "widgets/widgets.tcss"]
    BINDINGS = [
        # A priority binding, so the keys typed straight after it already go to the quick log; it
        # stands aside (check_action) wherever text is being typed.
        Binding("l", "quick_log", "Log call", id="app.quick_log", priority=True),
        Binding("q", "quit", "Quit", id="app.quit"),
    ]

    roster: reactive[tuple[CaseloadLine, ...]] = reactive(())
    """The caseload as last read, in triage order; screens and the quick log read it."""
    mine: reactive[bool] = reactive(False)
    """Whether the list and the header counts are limited to the acting nurse's patients."""

    def __init__(self, gate: StoreGate, refresh_seconds: float = REFRESH_SECONDS):
        super().__init__()
        self.gate = gate
        self.refresh_seconds = refresh_seconds
        self._refusals: dict[Worker, tuple[MessagePump, Callable[[str], Message]]] = {}

    def on_mount(self) -> None:
        for theme in THEMES:
            self.register_theme(theme)
        self.theme = DEFAULT_THEME
        if self.gate.actor is None:
            self.push_screen(SignInScreen())
        else:
            self.open_home()

    def open_home(self) -> None:
        self.mine = self.gate.actor.role is Role.NURSE
        self.push_screen(CaseloadScreen())

    def signed_in(self, actor: Actor) -> None:
        self.gate.actor = actor
        self.pop_screen()
        self.open_home()

    # --- what the screens share

    def scoped_roster(self) -> tuple[CaseloadLine, ...]:
        if not self.mine or self.gate.actor is None:
            return self.roster
        me = self.gate.actor.id
        return tuple(line for line in self.roster if line.patient.nurse_id == me)

    def tone(self, severity: Severity) -> str:
        """A Rich style for a severity, from the current theme (so it reads in dark and light)."""
        colours = self.theme_variables
        return {
            Severity.URGENT: f"bold {colours['error']}",
            Severity.TODAY: f"bold {colours['warning']}",
            Severity.SOON: colours["secondary"],
            Severity.INFO: "dim",
        }[severity]

    def store_job(
        self,
        target: MessagePump,
        use_case: Callable[..., Any],
        *args,
        reply: Callable[[Any], Message] | None = None,
        refusal: Callable[[str], Message] | None = None,
        before_sign_in: bool = False,
        **kwargs,
    ) -> Worker:
        """Run `use_case(ctx, *args)` in a thread; post `reply(result)` to `target` when done.

        On failure the one handler below notifies the reason and, if given, posts `refusal(reason)`.
        """
        gate = self.gate
        call = gate.call_with_store if before_sign_in else gate.call

        def job() -> None:
            result = call(use_case, *args, **kwargs)
            if reply is not None:
                target.post_message(reply(result))

        worker = self.run_worker(job, thread=True, group="store", exit_on_error=False, description=use_case.__name__)
        if refusal is not None:
            self._refusals[worker] = (target, refusal)
        return worker

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        worker = event.worker
        if event.state is WorkerState.ERROR:
            reason = reason_for(worker.error)
            self.notify(reason, title="Not done", severity="error", markup=False, timeout=8)
            if worker in self._refusals:
                target, refusal = self._refusals[worker]
                target.post_message(refusal(reason))
        if event.state in (WorkerState.SUCCESS, WorkerState.ERROR, WorkerState.CANCELLED):
            self._refusals.pop(worker, None)

    def on_written(self, message: Written) -> None:
        self.notify(message.summary, markup=False)
        self.store_changed()

    def store_changed(self) -> None:
        """After a write: every screen that shows store data reads it again."""
        for screen in self.screen_stack:
            reload = getattr(screen, "reload", None)
            if reload is not None:
                reload()

    # --- actions

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "quick_log":
            typing = isinstance(self.focused, Input) or self.screen.is_modal
            return not typing and self.gate.actor is not None and self.gate.may("entry.log")
        return True

    def action_quick_log(self) -> None:
        patient_id = getattr(self.screen, "patient_id", None)
        self.push_screen(QuickLogScreen(patient_id, settled=getattr(self.screen, "patient_settled", False)))


def make_app(
    store: Store,
    today: date,
    account: str,
    as_staff: str | None = None,
    protocol: Protocol = DEFAULT_PROTOCOL,
    refresh_seconds: float = REFRESH_SECONDS,
) -> CaseloadApp:
    """The interface over `store` as of `today` for the OS `account` (or, for an admin's account, `as_staff`).

    An account mapped to no one gets the sign-in screen; any other refusal of the identity is raised
    here, before the interface opens.
    """
    actor = None if needs_sign_in(store, account) else resolve_actor(store, account, as_staff)
    return CaseloadApp(StoreGate(store, today, protocol, account, actor), refresh_seconds)
