"""The home screen: every patient under care in triage order, with search and filters.

The list is read once from the stored snapshots; after that, every few seconds, one cheap question
to the store (has another connection committed anything?) and, only when it has, the rows of the
patients marked as changed since the last read are read again, so another terminal's changes appear
without a restart and an idle list costs next to nothing. On the first open of the day, if the
snapshots are older than today, the morning refresh runs in a worker and the list catches up after it.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.message import Message
from textual.screen import Screen
from textual.widgets import Input, Static

from caseload.tui.clinic_work import STORE_WORK, ClinicWork, StoreChanged
from caseload.presentation.glossary import refresh_progress_line
from caseload.application.caseload_view import CaseloadLine, CaseloadRead
from caseload.application.recompute import RefreshReport
from caseload.presentation.safe_text import quoted
from caseload.tui.widgets.caseload_table import CaseloadTable
from caseload.tui.widgets.filter_bar import FilterBar, Filters, Scope, SearchField, narrowed_by, visible
from caseload.tui.widgets.status_line import StatusLine
from caseload.tui.widgets.type_ahead import TypeAheadInput, replay
from caseload.tui.widgets.key_bar import KeyBar


STORE_CHECK_DELAY_S = 0.3
"""How long after the first list is drawn the whole-file store check starts: started at once, its
thread takes CPU from the frames that draw the list."""


def no_match_line(filters: Filters) -> str:
    """What Enter in a search that finds nobody says, naming the filters that may hide her."""
    others = [word for word in narrowed_by(filters) if word != "search"]
    shown = f" among the patients shown ({', '.join(others)})" if others else ""
    return f"No patient matches {quoted(filters.search.strip())}{shown}; nothing opened."


class CaseloadScreen(ClinicWork, Screen):
    """Who needs attention today, and why."""

    CSS_PATH = "caseload.tcss"
    AUTO_FOCUS = "CaseloadTable"
    BINDINGS = [
        # Priority bindings: taken as they arrive, in the order typed, so the keys typed straight after
        # them reach the field they focus and act on the list they set. They stand aside
        # (check_action) while a text field has the focus, where they are text.
        Binding("slash", "search", "Find", id="caseload.search", priority=True),
        Binding("m", "toggle_mine", "Mine", id="caseload.mine", priority=True),
        Binding("u", "toggle_unassigned", "Unassigned", id="caseload.unassigned", priority=True),
        # The lesser keys stay out of the footer, which must fit 80 columns; the help lists them.
        Binding("k", "pick_kind", "Kind", id="caseload.kind", show=False),
        Binding("p", "pick_plan", "Plan", id="caseload.plan", show=False),
        # Priority too, so the keys typed straight after them reach the queue or the form.
        Binding("a", "alert_queue", "Alerts", id="caseload.alerts", priority=True),
        Binding("e", "export", "Export", id="caseload.export", show=False, priority=True),
        Binding("n", "register", "New caller", id="caseload.register", priority=True),
        Binding("escape", "back_to_list", "Clear", id="caseload.back"),
    ]

    class Loaded(Message):
        """The list as read (`read`), the store's commit count before the read, and the roster the
        read started from (a save that landed meanwhile makes the read stale)."""

        def __init__(self, read: CaseloadRead, version: int, base: tuple[CaseloadLine, ...] | None) -> None:
            super().__init__()
            self.read = read
            self.version = version
            self.base = base

    class Unchanged(Message):
        pass

    class LoadFailed(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    class Refreshed(Message):
        def __init__(self, report: RefreshReport) -> None:
            super().__init__()
            self.report = report

    def __init__(self) -> None:
        super().__init__()
        self._loading = False
        self._again = False  # a change was reported while a read was under way
        self._refresh_checked = False
        self._mark: int | None = None  # the store's list mark the roster is current to
        self._version: int | None = None  # the store's commit count when the roster was read
        self._search_waiting: TypeAheadInput | None = None  # its Enter came before the list was read

    def compose(self) -> ComposeResult:
        yield StatusLine(id="status")
        yield FilterBar(mine=self.app.mine, id="filters")
        yield CaseloadTable(id="caseload")
        yield Static("", id="list-note")
        yield KeyBar()

    def on_mount(self) -> None:
        self.query_one("#list-note", Static).update("Reading the caseload…")
        self.watch(self.app, "mine", self._mine_changed, init=False)
        self.reload()
        self.set_interval(self.app.refresh_seconds, self._poll, name="caseload-poll")

    @property
    def patient_id(self) -> str | None:
        """The highlighted patient: the quick log opens with them picked."""
        return self.query_one(CaseloadTable).current_patient_id()

    def show_patient(self, patient_id: str) -> bool:
        """Draw the list now with the cursor on `patient_id`; False when the filters hide her."""
        self._show()
        table = self.query_one(CaseloadTable)
        if patient_id not in table.patient_ids:
            return False
        table.move_cursor(table.get_row_index(patient_id))
        return True

    # --- reading

    def reload(self) -> None:
        """Bring the list up to date with the store: the changed rows only, once it has been read."""
        self._read_list(always=True)

    def _poll(self) -> None:
        self._read_list(always=False)

    def _read_list(self, always: bool) -> None:
        if self._loading:
            self._again = self._again or always
            return
        self._loading = True
        if self._mark is None:
            self._load()
        else:
            self._catch_up(always)

    @work(**STORE_WORK, name="load")
    def _load(self) -> None:
        clinic = self.app.clinic
        version = clinic.store_version()
        self.post_message(self.Loaded(clinic.caseload_read(), version, None))

    @work(**STORE_WORK, name="load")
    def _catch_up(self, always: bool) -> None:
        """Unless `always`, first ask whether another connection committed anything since the last
        read. (The roster is taken here, not passed in: a worker's arguments are spelt out in its
        description, which for a large caseload costs more than the whole check.)"""
        clinic, mark, roster = self.app.clinic, self._mark, self.app.roster
        version = clinic.store_version()
        if not always and version == self._version:
            self.post_message(self.Unchanged())
            return
        self.post_message(self.Loaded(clinic.caseload_since(mark, roster), version, roster))

    class RefreshProgress(Message):
        def __init__(self, note: str) -> None:
            super().__init__()
            self.note = note

    @work(**STORE_WORK, name="refresh")
    def _morning_refresh(self) -> None:
        """On a store connection of its own, never holding the clinic's lock: the list can be read
        and entries saved while it runs; its progress shows under the list."""
        shown = [""]

        def progress(stage: str, done: int, total: int) -> None:
            note = refresh_progress_line(stage, done, total)
            if note != shown[0]:  # one message per step of the percentage, not per patient
                shown[0] = note
                self.post_message(self.RefreshProgress(note))

        self.post_message(self.Refreshed(self.app.clinic.refresh_on_own_connection(progress)))

    def work_failed(self, name: str, reason: str) -> None:
        if name == "load":
            self.post_message(self.LoadFailed(reason))

    def on_store_changed(self, message: StoreChanged) -> None:
        """After a save: the list already holds a logged entry's row; anything else is read again."""
        if message.row_updated:
            self._show()
        else:
            self.reload()

    def on_caseload_screen_loaded(self, message: Loaded) -> None:
        self._loading = False
        if message.base is not None and message.base is not self.app.roster:
            self._read_list(always=True)  # a save changed the roster meanwhile: merge into it instead
            return
        self._mark, self._version = message.read.mark, message.version
        if message.read.lines is not self.app.roster or not self._refresh_checked:  # the first read always shows
            self.app.roster = message.read.lines
            self.app.roster_read = True
            self._show()
        if self._search_waiting is not None:  # that Enter now counts, with the keys held behind it
            field, self._search_waiting = self._search_waiting, None
            self._open_top_match(field)
        if not self._refresh_checked:
            self._refresh_checked = True
            self.set_timer(STORE_CHECK_DELAY_S, self.app.check_store)
            if self.app.clinic.morning_refresh_due(message.read.lines):
                self.query_one("#list-note", Static).update("Bringing today's picture up to date…")
                self._morning_refresh()
        if self._again:
            self._again = False
            self._read_list(always=True)

    def on_caseload_screen_unchanged(self) -> None:
        self._loading = False
        if self._again:
            self._again = False
            self._read_list(always=True)

    def on_caseload_screen_load_failed(self, message: LoadFailed) -> None:
        self._loading = self._again = False
        if self._search_waiting is not None:  # nothing to match against: the keys typed on stay text
            self._search_waiting.keep_typing()
            self._search_waiting = None
        self.query_one("#list-note", Static).update(Text(f"Could not read the caseload: {message.reason}"))

    def on_caseload_screen_refresh_progress(self, message: RefreshProgress) -> None:
        self.query_one("#list-note", Static).update(message.note)

    def on_caseload_screen_refreshed(self, message: Refreshed) -> None:
        r = message.report
        self.notify(f"Morning refresh done: {r.patients} patients, {r.raised} alerts raised, {r.resolved} cleared.")
        self.reload()

    def _show(self) -> None:
        """Draw the list and count it as the filters read now (their Changed messages may still be on
        their way: a key typed straight after one acts on the list it set)."""
        filters = self.query_one(FilterBar).filters
        self.app.mine = filters.mine
        if self._mark is None:
            return  # not read yet: filters set meanwhile apply when it is
        me = self.app.clinic.actor.id
        lines = visible(self.app.roster, filters, me)
        # The names of the whole scope set the patient column, so it stays put as a search narrows it.
        self.query_one(CaseloadTable).show(lines, fit=visible(self.app.roster, Filters(filters.scope), me))
        self.query_one(StatusLine).show_filters(filters)
        total = len(self.app.roster)
        note = f"{len(lines)} of {total} patients"
        if filters.search.strip():
            note += " matching the search, best first (Enter opens the top one, Esc clears)"
        self.query_one("#list-note", Static).update(note)

    def _mine_changed(self) -> None:
        # The app's value now, not the one this call was queued with: keys typed since may have moved it.
        self.query_one(FilterBar).set_mine(self.app.mine)

    @on(FilterBar.Changed)
    def _filters_changed(self) -> None:
        self._show()
        self.refresh_bindings()

    def on_descendant_focus(self) -> None:
        self.refresh_bindings()

    # --- acting

    @on(CaseloadTable.RowSelected)
    def _row_chosen(self, event: CaseloadTable.RowSelected) -> None:
        self._open(event.patient_id)

    @on(Input.Submitted, "#search")
    def _search_done(self, message: Input.Submitted) -> None:
        """Enter in the search opens the top match of the text as typed at that Enter (the keys typed
        on after it are held by the field), whatever the list drawn so far has caught up with."""
        if self._mark is None:
            self._search_waiting = message.input  # decided once the list is read
        else:
            self._open_top_match(message.input)

    def _open_top_match(self, field: TypeAheadInput) -> None:
        self._show()
        table = self.query_one(CaseloadTable)
        filters = self.query_one(FilterBar).filters
        if filters.search.strip() and not table.row_count:
            field.keep_typing()
            self.notify(no_match_line(filters), severity="warning", markup=False)
            return
        typed_on = field.take_held()
        self.set_focus(table)
        if filters.search.strip():
            table.move_cursor(0)
            self._open(table.current_patient_id())
        # else nothing was typed to match: Enter goes back to the list
        replay(self.app, typed_on)

    def _open(self, patient_id: str | None) -> None:
        if patient_id:
            self.app.push_screen(_record(patient_id))

    async def action_open_highlighted(self) -> None:
        """Enter on the list, taken as it arrives: the keys typed after it wait in the app's queue
        until the record is mounted, then act on it (its note, its quick log, its tabs)."""
        patient_id = self.patient_id
        if patient_id:
            await self.app.push_screen(_record(patient_id))

    # Focus moves at once (not on the next turn, as `focus()` does) and the list is drawn at once, so
    # that each key of a burst lands where the key before it sent the nurse, on the list it set.

    def action_search(self) -> None:
        self.set_focus(self.query_one("#search", Input))

    def action_back_to_list(self) -> None:
        self.query_one(FilterBar).clear_search()
        self.set_focus(self.query_one(CaseloadTable))
        self._show()

    @on(SearchField.Left)
    def _search_left(self, message: SearchField.Left) -> None:
        """Escape in the search, taken after the letters typed before it; the keys after it go to the list."""
        typed_on = message.field.take_held()
        self.action_back_to_list()
        replay(self.app, typed_on)

    def action_toggle_mine(self) -> None:
        self.query_one(FilterBar).toggle(Scope.MINE)
        self._show()

    def action_toggle_unassigned(self) -> None:
        self.query_one(FilterBar).toggle(Scope.UNASSIGNED)
        self._show()

    def action_pick_kind(self) -> None:
        self.query_one("#alert-kind").action_show_overlay()

    def action_pick_plan(self) -> None:
        self.query_one("#plan").action_show_overlay()

    def action_alert_queue(self) -> None:
        from caseload.tui.screens.alert_queue import AlertQueueScreen  # on demand: see `_record`

        self.app.push_screen(AlertQueueScreen())

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "back_to_list":
            return bool(self.query_one(FilterBar).filters.search) or not self.query_one(CaseloadTable).has_focus
        if action == "export":
            return not isinstance(self.focused, Input) and self.app.clinic.may("summary.export")
        if action in ("search", "toggle_mine", "toggle_unassigned", "alert_queue"):
            return not isinstance(self.focused, Input)
        if action == "register":
            return not isinstance(self.focused, Input) and self.app.clinic.may("patient.add")
        return True

    def action_register(self) -> None:
        from caseload.tui.screens.register import RegisterDialog  # on demand: see `_record`

        self.app.push_screen(RegisterDialog())

    def action_export(self) -> None:
        # Loaded on demand: the report writers cost a fifth of a second at start-up, and most never export.
        from caseload.tui.screens.export import ExportDialog

        self.app.push_screen(ExportDialog())


def _record(patient_id: str) -> Screen:
    """A patient's record screen. The screens behind the list (record, alert queue, registration)
    are loaded when first opened, not at start-up: together they cost the launch a tenth of a
    second, and the list is what every user waits for."""
    from caseload.tui.screens.record import RecordScreen

    return RecordScreen(patient_id)
