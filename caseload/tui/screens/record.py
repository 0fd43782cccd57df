"""One patient's record: chart, cycle history, outlook, alerts and entries, in tabs that fit 80x24."""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.message import Message
from textual.screen import Screen
from textual.widgets import DataTable, Static, TabbedContent, TabPane, Tabs

from caseload.tui.clinic_work import STORE_WORK, ClinicWork, StoreChanged
from caseload.application.caseload_view import PatientRecord
from caseload.tui.cycle_view import cycle_view
from caseload.tui.record_text import classification_text, cycle_rows, outlook_text, title_text
from caseload.tui.screens.add_note import AddNoteDialog
from caseload.tui.screens.correct_entry import CorrectEntryDialog, correct_entry
from caseload.tui.screens.entry_detail import EntryDialog
from caseload.tui.screens.patient_care import PatientDialog
from caseload.tui.widgets.alert_list import AlertTable
from caseload.presentation.glossary import logged_summary
from caseload.tui.widgets.cycle_chart import CycleChart
from caseload.tui.widgets.entries_table import EntriesTable
from caseload.tui.widgets.evidence_panel import EvidencePanel
from caseload.tui.widgets.status_line import StatusLine
from caseload.tui.widgets.key_bar import KeyBar
from caseload.presentation.glossary import CAUTION

TABS = Binding.Group("Tabs")
CYCLES = Binding.Group("Cycle")
TAB_IDS = ("chart", "cycles", "outlook", "alerts", "entries")
TAB_FOCUS = {"chart": "#chart-plot", "cycles": "#cycle-table", "alerts": "#patient-alerts", "entries": "#entries-table"}
CYCLE_COLUMNS = ("#", "Start", "Length", "Bleed", "Ovulation", "Method", "Luteal")


class RecordScreen(ClinicWork, Screen):
    """Opened from the list or the alert queue; `alert_id` opens the alerts tab with that alert in view."""

    CSS_PATH = "record.tcss"
    AUTO_FOCUS = "#chart-plot"  # the arrow keys move a long cycle's days
    patient_settled = True  # the quick log opened here logs for this patient
    BINDINGS = [
        # On the entries list only (check_action), for the roles that may, on an entry still current;
        # priority bindings, as `c` and `n` below.
        Binding("a", "correct(True)", "Amend", id="record.amend", priority=True),
        Binding("v", "correct(False)", "Void", id="record.void", priority=True),
        Binding("escape", "app.pop_screen", "Back", id="record.back"),
        # Out of the footer, which must fit 80 columns with the alerts' keys: the tabs show their
        # digits, and the help lists every key.
        Binding("1", "tab('chart')", "Chart", group=TABS, id="record.tab_chart", show=False),
        Binding("2", "tab('cycles')", "Cycles", group=TABS, id="record.tab_cycles", show=False),
        Binding("3", "tab('outlook')", "Outlook", group=TABS, id="record.tab_outlook", show=False),
        Binding("4", "tab('alerts')", "Alerts", group=TABS, id="record.tab_alerts", show=False),
        Binding("5", "tab('entries')", "Entries", group=TABS, id="record.tab_entries", show=False),
        Binding("left_square_bracket", "cycle(-1)", "Earlier", group=CYCLES, id="record.cycle_earlier", show=False),
        Binding("right_square_bracket", "cycle(1)", "Later", group=CYCLES, id="record.cycle_later", show=False),
        Binding("p", "referral", "Pack/FHIR", id="record.referral", show=False),
        # Priority bindings open their dialog before the keys typed after them are routed, so those
        # keys reach the dialog and not this screen (the record has no text field to stand aside for).
        Binding("c", "care", "Care", id="record.care", priority=True),
        Binding("n", "add_note", "Add note", id="record.add_note", priority=True),
    ]

    class Loaded(Message):
        def __init__(self, record: PatientRecord) -> None:
            super().__init__()
            self.record = record

    class LoadFailed(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def __init__(self, patient_id: str, alert_id: int | None = None) -> None:
        super().__init__()
        self.patient_id = patient_id
        self._alert_id = alert_id
        if alert_id is not None:
            self.AUTO_FOCUS = "*"  # not the chart: focusing it would show its tab instead of the alert
        self._record: PatientRecord | None = None
        self._cycle: int | None = None  # None: the latest
        self._loading = False
        self._stale: set[str] = set()  # tabs whose content is older than the record

    def compose(self) -> ComposeResult:
        yield StatusLine(id="status")
        yield Static(Text(self.patient_id), id="record-title")
        with TabbedContent(initial="alerts" if self._alert_id else "chart", id="record-tabs"):
            with TabPane("1 Chart", id="chart"):
                with Vertical():
                    yield Static("", id="chart-title")
                    yield CycleChart(id="chart-plot")
            with TabPane("2 Cycles", id="cycles"):
                with VerticalScroll():
                    yield DataTable(id="cycle-table", cursor_type="row", zebra_stripes=True)
                    yield Static("", id="classification")
            with TabPane("3 Outlook", id="outlook"):
                with VerticalScroll():
                    yield Static("", id="outlook-text")
            with TabPane("4 Alerts", id="alerts"):
                with Vertical():
                    yield AlertTable(with_patient=False, id="patient-alerts")
                    with VerticalScroll(id="evidence-scroll"):
                        yield EvidencePanel("", id="evidence")
            with TabPane("5 Entries", id="entries"):
                yield EntriesTable(id="entries-table")
        yield Static(CAUTION, id="caution")
        yield KeyBar()

    def on_mount(self) -> None:
        self.reload()
        self.set_interval(self.app.refresh_seconds, self.reload, name="record-poll")

    def reload(self) -> None:
        if self._loading:
            return
        self._loading = True
        self._load()

    @work(**STORE_WORK, name="load")
    def _load(self) -> None:
        self.post_message(self.Loaded(self.app.clinic.patient_record(self.patient_id)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.LoadFailed(reason))

    def on_store_changed(self, message: StoreChanged) -> None:
        self.reload()

    def on_record_screen_load_failed(self, message: LoadFailed) -> None:
        self._loading = False
        if self._record is None:
            self.query_one("#record-title", Static).update(Text(f"Could not open {self.patient_id}: {message.reason}"))

    def on_record_screen_loaded(self, message: Loaded) -> None:
        self._loading = False
        if message.record == self._record:
            return
        self._record = message.record
        self._show(message.record)

    def _show(self, record: PatientRecord) -> None:
        """The title now and the open tab now; the other tabs when they are opened (a long entries
        list costs more to lay out than everything else together)."""
        self.query_one("#record-title", Static).update(title_text(record))
        self._stale = set(TAB_IDS)
        self._render_tab(self.query_one(TabbedContent).active)

    @on(TabbedContent.TabActivated)
    def _tab_opened(self, event: TabbedContent.TabActivated) -> None:
        self._render_tab(event.pane.id)

    def _render_tab(self, tab: str) -> None:
        record = self._record
        if record is None or tab not in self._stale:
            return
        self._stale.discard(tab)
        if tab == "chart":
            self._show_cycle()
        elif tab == "cycles":
            table = self.query_one("#cycle-table", DataTable)
            table.clear(columns=True)
            table.add_columns(*CYCLE_COLUMNS)
            table.add_rows(cycle_rows(record.analysis))
            self.query_one("#classification", Static).update(classification_text(record.analysis))
        elif tab == "outlook":
            self.query_one("#outlook-text", Static).update(outlook_text(record))
        elif tab == "alerts":
            alerts = self.query_one(AlertTable)
            alerts.show(list(record.alerts), focus_id=self._alert_id, resolved=record.resolved, steps=record.steps)
            self.query_one(EvidencePanel).show(alerts.current_alert(), alerts.current_steps())
            if self._alert_id is not None:
                alerts.focus()
                self._alert_id = None
        elif tab == "entries":
            self.query_one(EntriesTable).show(record.entries)

    def _show_cycle(self) -> None:
        record = self._record
        if record is None:
            return
        count = len(record.analysis.cycles)
        index = count - 1 if self._cycle is None else self._cycle
        view = cycle_view(record, index, self.app.clinic.as_of)
        self.query_one("#chart-title", Static).update(
            Text(view.title if view else "No cycle recorded yet", style="bold")
        )
        self.query_one(CycleChart).show(view)

    # --- actions

    def action_tab(self, tab: str) -> None:
        if tab not in TAB_FOCUS:
            # Nothing of its own to focus: a focus left in the pane being hidden would take its tab back.
            self.query_one(Tabs).focus()
        self.query_one(TabbedContent).active = tab
        if tab in TAB_FOCUS:
            self.query_one(TAB_FOCUS[tab]).focus()

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "referral":
            return self.app.clinic.may("referral.pack")
        if action == "care":
            return None if self._record is None else self.app.clinic.may("patient.update")
        if action == "add_note":
            return self.app.clinic.may("entry.log")
        if action == "correct":
            return self._correctable("entry.amend" if parameters[0] else "entry.void")
        return True

    def _correctable(self, permission: str) -> bool | None:
        """Shown on the focused entries list to a role with `permission`; dimmed on a corrected entry."""
        table = self.query_one(EntriesTable)
        if not table.has_focus or not self.app.clinic.may(permission):
            return False
        entry = table.current_entry()
        return True if entry is not None and entry.current else None

    def action_care(self) -> None:
        if self._record is not None:
            self.app.push_screen(PatientDialog(self._record.patient))

    def action_add_note(self) -> None:
        def save(text: str | None) -> None:
            if text is not None:
                self.app.save(self.app.clinic.log, self.patient_id, "note", text, summary=logged_summary)

        self.app.push_screen(AddNoteDialog(self.patient_id), save)

    def action_referral(self) -> None:
        # Loaded on demand, like the summary export: most sessions never make a pack.
        from caseload.tui.screens.referral import ReferralDialog

        self.app.push_screen(ReferralDialog(self.patient_id))

    def action_cycle(self, step: int) -> None:
        if self._record is None or not self._record.analysis.cycles:
            return
        last = len(self._record.analysis.cycles) - 1
        current = last if self._cycle is None else self._cycle
        self._cycle = max(0, min(last, current + step))
        self.query_one(TabbedContent).active = "chart"
        self._stale.add("chart")
        self._render_tab("chart")

    @on(AlertTable.Highlighted)
    def _alert_highlighted(self, message: AlertTable.Highlighted) -> None:
        self.query_one(EvidencePanel).show(message.alert, message.steps)

    def action_correct(self, amend: bool) -> None:
        entry = self.query_one(EntriesTable).current_entry()
        if entry is not None and entry.current:
            self.app.push_screen(CorrectEntryDialog(entry, amend=amend), correct_entry(self, entry))

    @on(EntriesTable.DetailsAsked)
    def _details(self, message: EntriesTable.DetailsAsked) -> None:
        entries = self._record.entries if self._record else ()
        self.app.push_screen(EntryDialog(message.entry, {e.id: e for e in entries}))
