"""The alert queue: open alerts across the caseload (or the acting nurse's), grouped by severity."""

from __future__ import annotations

from rich.text import Text
from textual import events, on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Static

from caseload.tui.clinic_work import STORE_WORK, ClinicWork, StoreChanged
from caseload.core.model import Alert
from caseload.tui.handle_alert import start_handling
from caseload.tui.screens.record import RecordScreen
from caseload.tui.widgets.alert_list import AlertTable
from caseload.tui.widgets.evidence_panel import EvidencePanel
from caseload.tui.widgets.status_line import StatusLine
from caseload.tui.widgets.key_bar import KeyBar
from caseload.tui.widgets.type_ahead import replay


class AlertQueueScreen(ClinicWork, Screen):
    """Enter opens the patient's record with the alert's evidence in view."""

    CSS_PATH = "alert_queue.tcss"
    AUTO_FOCUS = "AlertTable"
    BINDINGS = [
        Binding("escape", "app.pop_screen", "Back", id="queue.back"),
        # A priority binding: the record opens before the next key is read, so a tab key typed
        # straight after Enter reaches the record.
        Binding("enter", "open", "Open", id="queue.open", priority=True),
        Binding("m", "toggle_mine", "Mine/all", id="queue.mine"),
    ]

    class Loaded(Message):
        def __init__(self, alerts: list[Alert]) -> None:
            super().__init__()
            self.alerts = alerts

    class LoadFailed(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def __init__(self) -> None:
        super().__init__()
        self._loading = False
        self._shown: list[Alert] | None = None
        self._early: list[events.Key] | None = []  # keys typed before the alerts were first read

    def compose(self) -> ComposeResult:
        yield StatusLine(id="status")
        yield Static("", id="queue-title")
        yield AlertTable(with_patient=True, id="queue")
        with VerticalScroll(id="evidence-scroll"):
            yield EvidencePanel("", id="evidence")
        yield KeyBar()

    def on_mount(self) -> None:
        self.reload()
        self.set_interval(self.app.refresh_seconds, self.reload, name="queue-poll")

    @property
    def patient_id(self) -> str | None:
        alert = self.query_one(AlertTable).current_alert()
        return alert.patient_id if alert else None

    def reload(self) -> None:
        if self._loading:
            return
        self._loading = True
        self._load(self.app.clinic.actor.id if self.app.mine else None)

    @work(**STORE_WORK, name="load")
    def _load(self, nurse: str | None) -> None:
        self.post_message(self.Loaded(self.app.clinic.alerts("open", None, nurse)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.LoadFailed(reason))

    def on_store_changed(self, message: StoreChanged) -> None:
        self.reload()

    def on_key(self, event: events.Key) -> None:
        """Keys typed straight after `a`, before the alerts are read (an acknowledgement and its note),
        wait for them rather than act on an empty list; they are sent on once it is shown."""
        if self._early is not None:
            event.stop()
            event.prevent_default()
            self._early.append(event)

    def _send_on_early_keys(self) -> None:
        early, self._early = self._early or [], None
        replay(self.app, early)

    def on_alert_queue_screen_load_failed(self, message: LoadFailed) -> None:
        self._loading = False
        self._send_on_early_keys()

    def on_alert_queue_screen_loaded(self, message: Loaded) -> None:
        self._loading = False
        scope = "my patients" if self.app.mine else "all patients"
        title = Text(f"Open alerts, {scope}: {len(message.alerts)}", style="bold")
        self.query_one("#queue-title", Static).update(title)
        if message.alerts == self._shown:
            return
        self._shown = message.alerts
        names = {line.patient.id: line.patient.name for line in self.app.roster}
        table = self.query_one(AlertTable)
        table.show(message.alerts, names)
        self.query_one(EvidencePanel).show(table.current_alert())
        self._send_on_early_keys()

    @on(AlertTable.Highlighted)
    def _highlighted(self, message: AlertTable.Highlighted) -> None:
        self.query_one(EvidencePanel).show(message.alert, message.steps)

    @on(AlertTable.Opened)
    def _opened(self, message: AlertTable.Opened) -> None:
        """A row clicked with the mouse."""
        self.app.push_screen(RecordScreen(message.alert.patient_id, alert_id=message.alert.id))

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "open":
            return self.query_one(AlertTable).current_alert() is not None
        return True

    async def action_open(self) -> None:
        """The keys typed after Enter wait in the app's queue until the record is mounted, then act on it."""
        alert = self.query_one(AlertTable).current_alert()
        if alert is not None:
            await self.app.push_screen(RecordScreen(alert.patient_id, alert_id=alert.id))

    def action_toggle_mine(self) -> None:
        self.app.mine = not self.app.mine
        self._shown = None
        self.reload()
