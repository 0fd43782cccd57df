"""Alerts grouped by severity, most pressing first, with the actions the acting role may take;
on a record, the resolved ones after them as the alert history."""

from __future__ import annotations

from rich.text import Text
from textual.binding import Binding
from textual.coordinate import Coordinate
from textual.message import Message
from textual.widgets import DataTable

from caseload.core.alerts import ALERT_KINDS, triage_key
from caseload.core.model import Alert, AlertState, AlertStep, Severity
from caseload.tui.handle_alert import may_handle, refusal, start_handling
from caseload.presentation.glossary import alert_label
from caseload.presentation.days import short_day
from caseload.presentation.safe_text import literal

GROUP = "group:"
RESOLVED_GROUP = GROUP + "resolved"
PATIENT_WIDTH = 20
DAY_WIDTH = 6
STATE_WIDTH = len(AlertState.ACKNOWLEDGED.value)


def state_text(a: Alert) -> str:
    if a.state is AlertState.SNOOZED and a.snooze_until is not None:
        return f"until {short_day(a.snooze_until)}"
    return a.state.value


class AlertTable(DataTable):
    """Rows keyed by alert id; a heading row before each group, which the cursor steps over."""

    # Priority bindings (while the list has the focus): the note dialog opens before the next key is
    # read, so a note typed straight after the key goes into it and never acts on the screen behind.
    BINDINGS = [
        Binding("a", "handle('acknowledge')", "Acknowledge", id="alerts.acknowledge", priority=True),
        Binding("z", "handle('snooze')", "Snooze", id="alerts.snooze", priority=True),
        Binding("r", "handle('resolve')", "Resolve", id="alerts.resolve", priority=True),
        # The same keys where they cannot act (no alert, a resolved one, a role that may not):
        # never in the footer, and one line saying why when pressed.
        Binding("a", "refuse('acknowledge')", "Acknowledge", show=False, id="alerts.refuse_acknowledge", priority=True),
        Binding("z", "refuse('snooze')", "Snooze", show=False, id="alerts.refuse_snooze", priority=True),
        Binding("r", "refuse('resolve')", "Resolve", show=False, id="alerts.refuse_resolve", priority=True),
        # The arrows too, stepping over headings at once, so an Enter typed after them opens the
        # alert they reached, not the one highlighted before.
        Binding("down", "step(1)", "Down", show=False, priority=True, id="alerts.move"),
        Binding("up", "step(-1)", "Up", show=False, priority=True, id="alerts.move"),
    ]

    class Opened(Message):
        def __init__(self, alert: Alert) -> None:
            super().__init__()
            self.alert = alert

    class Highlighted(Message):
        def __init__(self, alert: Alert | None, steps: tuple[AlertStep, ...]) -> None:
            super().__init__()
            self.alert = alert
            self.steps = steps

    def __init__(self, with_patient: bool, **kwargs):
        super().__init__(cursor_type="row", **kwargs)
        self.with_patient = with_patient
        self._by_key: dict[str, Alert] = {}
        self._names: dict[str, str] = {}
        self._steps: tuple[AlertStep, ...] = ()
        self._last_row = 0
        self.shown = False  # whether the alerts have been read and shown once: until then no key acts

    def _add_columns(self) -> None:
        """Fixed widths, so the columns stay put as alerts come and go; the message takes the rest."""
        alert_width = max(len(alert_label(kind)) for kind in ALERT_KINDS)
        if self.with_patient:
            self.add_column(Text("Patient", style="bold"), width=PATIENT_WIDTH, key="Patient")
        self.add_column(Text("Alert", style="bold"), width=alert_width, key="Alert")
        if not self.with_patient:  # the queue holds open alerts only
            self.add_column(Text("State", style="bold"), width=STATE_WIDTH, key="State")
        self.add_column(Text("Raised", style="bold"), width=DAY_WIDTH, key="Raised")
        self.add_column(Text("Due", style="bold"), width=DAY_WIDTH, key="Due")
        self.add_column(Text("Message", style="bold"), key="Message")

    def show(self, alerts: list[Alert], names: dict[str, str] | None = None, focus_id: int | None = None,
             resolved: tuple[Alert, ...] = (), steps: tuple[AlertStep, ...] = ()) -> None:
        """The alerts by severity, then (on a record) the resolved ones; `steps` their history."""
        keep = self.current_alert()
        self.shown = True
        self._names = names or {}
        self._steps = steps
        self._by_key = {str(a.id): a for a in (*alerts, *resolved)}
        self.clear()
        if not self.columns:
            self._add_columns()
        tone = self.app.tone
        for severity in Severity:
            group = sorted((a for a in alerts if a.severity is severity), key=triage_key)
            self._add_group(GROUP + severity.value, Text(f"{severity.value} ({len(group)})", style=tone(severity)), group)
        self._add_group(RESOLVED_GROUP, Text(f"resolved ({len(resolved)})", style="dim"), list(resolved))
        wanted = focus_id if focus_id is not None else (keep.id if keep else None)
        if wanted is not None and str(wanted) in self._by_key:
            self.move_cursor(row=self.get_row_index(str(wanted)), animate=False)
        elif self.row_count > 1:
            self.move_cursor(row=1, animate=False)
        self._last_row = self.cursor_row

    def _add_group(self, key: str, heading: Text, group: list[Alert]) -> None:
        if group:
            self.add_row(heading, *[""] * (len(self.columns) - 1), key=key)
            for a in group:
                self.add_row(*self._cells(a), key=str(a.id))

    def _cells(self, a: Alert) -> list[Text]:
        cells: list[Text] = []
        if self.with_patient:
            name = literal(self._names.get(a.patient_id, ""))
            cells.append(Text(a.patient_id + " ", style="bold").append_text(name))
        cells.append(Text(alert_label(a.kind)))
        if not self.with_patient:
            cells.append(Text(state_text(a)))
        cells += [Text(short_day(a.raised_on)), Text(short_day(a.due)), literal(a.message)]
        if a.state is AlertState.RESOLVED:
            for cell in cells:
                cell.stylize("dim")
        return cells

    def current_alert(self) -> Alert | None:
        if not self.row_count:
            return None
        key = self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value
        return self._by_key.get(key)

    def current_steps(self) -> tuple[AlertStep, ...]:
        alert = self.current_alert()
        return () if alert is None else tuple(s for s in self._steps if s.alert_id == alert.id)

    def _step_over_heading(self) -> bool:
        """On a heading, move on the way the cursor was going (back, at either end); True if moved."""
        row = self.cursor_row
        key = self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value
        if not key.startswith(GROUP):
            return False
        step = 1 if row >= self._last_row else -1
        target = row + step if 0 <= row + step < self.row_count else row - step
        if 0 <= target < self.row_count and target != row:
            self.move_cursor(row=target, animate=False)
            return True
        return False

    def action_step(self, step: int) -> None:
        """The next alert row up or down, headings passed over; at either end the cursor stays."""
        row = self.cursor_row + step
        while 0 <= row < self.row_count and self._key_at(row).startswith(GROUP):
            row += step
        if 0 <= row < self.row_count:
            self._last_row = row
            self.move_cursor(row=row, animate=False)

    def _key_at(self, row: int) -> str:
        return self.coordinate_to_cell_key(Coordinate(row, 0)).row_key.value

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        event.stop()
        if self.row_count and self._step_over_heading():
            return
        self._last_row = self.cursor_row
        self.refresh_bindings()
        self.post_message(self.Highlighted(self.current_alert(), self.current_steps()))

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        alert = self.current_alert()
        if alert is not None:
            self.post_message(self.Opened(alert))

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if not self.shown:
            return False  # a key typed before the alerts are read waits for them (see AlertQueueScreen)
        if action in ("handle", "refuse"):
            alert = self.current_alert()
            can = alert is not None and may_handle(self.app.clinic, alert)
            return can if action == "handle" else not can
        return True

    def action_handle(self, verb: str) -> None:
        """The note dialog opens here and now, so the note typed straight after the key goes into it."""
        alert = self.current_alert()
        if alert is not None and may_handle(self.app.clinic, alert):
            start_handling(self.screen, alert, verb)

    def action_refuse(self, verb: str) -> None:
        self.notify(refusal(self.app.clinic, self.current_alert(), verb), severity="warning", markup=False)
