"""Alerts grouped by severity, most pressing first, with the actions the acting role may take."""

from __future__ import annotations

from rich.text import Text
from textual.binding import Binding
from textual.message import Message
from textual.widgets import DataTable

from caseload.core.alerts import triage_key
from caseload.core.model import Alert, Severity
from caseload.tui.handle_alert import may_handle
from caseload.presentation.glossary import alert_label
from caseload.presentation.days import short_day
from caseload.presentation.safe_text import literal

GROUP = "group:"


class AlertTable(DataTable):
    """Rows keyed by alert id; a heading row before each severity group."""

    BINDINGS = [
        Binding("a", "handle('acknowledge')", "Acknowledge", id="alerts.acknowledge"),
        Binding("z", "handle('snooze')", "Snooze", id="alerts.snooze"),
        Binding("r", "handle('resolve')", "Resolve", id="alerts.resolve"),
    ]

    class HandleAsked(Message):
        def __init__(self, alert: Alert, verb: str) -> None:
            super().__init__()
            self.alert = alert
            self.verb = verb

    class Opened(Message):
        def __init__(self, alert: Alert) -> None:
            super().__init__()
            self.alert = alert

    class Highlighted(Message):
        def __init__(self, alert: Alert | None) -> None:
            super().__init__()
            self.alert = alert

    def __init__(self, with_patient: bool, **kwargs):
        super().__init__(cursor_type="row", **kwargs)
        self.with_patient = with_patient
        self._by_key: dict[str, Alert] = {}
        self._names: dict[str, str] = {}

    def show(self, alerts: list[Alert], names: dict[str, str] | None = None, focus_id: int | None = None) -> None:
        keep = self.current_alert()
        self._names = names or {}
        self._by_key = {str(a.id): a for a in alerts}
        self.clear(columns=True)
        labels = (["Patient"] if self.with_patient else []) + ["Alert", "State", "Raised", "Due", "Message"]
        for label in labels:
            self.add_column(Text(label, style="bold"), key=label)
        tone = self.app.tone
        for severity in Severity:
            group = sorted((a for a in alerts if a.severity is severity), key=triage_key)
            if not group:
                continue
            heading = Text(f"{severity.value} ({len(group)})", style=tone(severity))
            self.add_row(heading, *[""] * (len(labels) - 1), key=GROUP + severity.value)
            for a in group:
                self.add_row(*self._cells(a), key=str(a.id))
        wanted = focus_id if focus_id is not None else (keep.id if keep else None)
        if wanted is not None and str(wanted) in self._by_key:
            self.move_cursor(row=self.get_row_index(str(wanted)), animate=False)
        elif self.row_count > 1:
            self.move_cursor(row=1, animate=False)

    def _cells(self, a: Alert) -> list[Text]:
        cells: list[Text] = []
        if self.with_patient:
            cells.append(Text(a.patient_id + " ", style="bold").append_text(literal(self._names.get(a.patient_id, ""))))
        cells += [
            Text(alert_label(a.kind)),
            Text(a.state.value if a.snooze_until is None else f"snoozed to {short_day(a.snooze_until)}"),
            Text(short_day(a.raised_on)),
            Text(short_day(a.due)),
            literal(a.message),
        ]
        return cells

    def current_alert(self) -> Alert | None:
        if not self.row_count:
            return None
        key = self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value
        return self._by_key.get(key)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self.refresh_bindings()
        self.post_message(self.Highlighted(self.current_alert()))

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        alert = self.current_alert()
        if alert is not None:
            self.post_message(self.Opened(alert))

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "handle":
            alert = self.current_alert()
            if alert is None:
                return None
            return True if may_handle(self.app.clinic, alert) else False
        return True

    def action_handle(self, verb: str) -> None:
        alert = self.current_alert()
        if alert is not None and may_handle(self.app.clinic, alert):
            self.post_message(self.HandleAsked(alert, verb))
