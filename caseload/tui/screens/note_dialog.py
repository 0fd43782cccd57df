"""The note that goes with acknowledging, snoozing or resolving an alert (and the day a snooze ends)."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Label, Static

from caseload.core.model import Alert
from caseload.core.alerts.lifecycle import parse_future_day
from caseload.core.parse import InputError
from caseload.presentation.glossary import alert_label
from caseload.presentation.safe_text import literal
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.type_ahead import TypeAheadInput, as_typed
from caseload.tui.widgets.key_bar import KeyBar

UNTIL_DEFAULT = "tomorrow"


@dataclass(frozen=True)
class HandleNote:
    note: str
    until: date | None = None
    set_aside: str = ""  # keys typed after the saving Enter, as typed: not used, and said so


class NoteDialog(Dialog[HandleNote | None]):
    """Enter saves when the fields are valid; Esc leaves the alert as it is."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss(None)", "Cancel", id="note.cancel")]

    def __init__(self, alert: Alert, verb: str, today: date, note_required: bool) -> None:
        super().__init__()
        self.alert = alert
        self.verb = verb
        self.today = today
        self.note_required = note_required

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(f"{self.verb.capitalize()} alert #{self.alert.id}", classes="dialog-title")
            line = Text(f"{self.alert.patient_id} · {alert_label(self.alert.kind)}: ", style="bold")
            yield Static(line.append_text(literal(self.alert.message)))
            if self.verb == "snooze":
                yield Label("Until (YYYY-MM-DD, tomorrow or +N days)")
                yield TypeAheadInput(placeholder=f"{UNTIL_DEFAULT} (Enter keeps it)", id="until", compact=True)
            yield Label("Note" + (" (needed for a clinical alert)" if self.note_required else " (optional)"))
            yield TypeAheadInput(placeholder="what was done or decided", id="note", compact=True)
            yield Static("", id="check", classes="check")
        yield KeyBar()

    def _first_field(self) -> TypeAheadInput:
        # Fields in the order they are shown: a snooze asks until when first, then goes on to the note.
        return self.query_one("#until" if self.verb == "snooze" else "#note", TypeAheadInput)

    def on_mount(self) -> None:
        self._first_field().focus()
        self._check()

    def on_key(self, event: events.Key) -> None:
        """Keys typed straight after a, z or r, before a field has the focus, go to the field getting it
        (in order: the field holds what follows an Enter or a Tab until the focus has moved on)."""
        if not isinstance(self.focused, Input) and (event.is_printable or event.key in ("enter", "tab")):
            event.stop()
            event.prevent_default()
            self._first_field().post_message(events.Key(event.key, event.character))

    def _until(self) -> date | None:
        if self.verb != "snooze":
            return None
        return parse_future_day(self.query_one("#until", Input).value.strip() or UNTIL_DEFAULT, self.today,
                                self.alert.severity)

    def _problem(self) -> str | None:
        try:
            self._until()
        except InputError as err:
            return str(err)
        if self.note_required and not self.query_one("#note", Input).value.strip():
            return "a note is needed: say what was done or decided"
        return None

    @on(Input.Changed)
    def _check(self) -> None:
        problem = self._problem()
        check = self.query_one("#check", Static)
        check.set_class(problem is not None, "refused")
        check.update(Text(problem or "Enter saves."))

    @on(Input.Submitted, "#until")
    def _until_done(self, event: Input.Submitted) -> None:
        note = self.query_one("#note", TypeAheadInput)
        note.focus()
        event.input.pass_on(note)

    @on(Input.Submitted, "#note")
    def _submit(self, event: Input.Submitted) -> None:
        if self._problem() is None:
            # Not passed on to the list behind: a key there could handle the next alert unread.
            set_aside = as_typed(event.input.drop_held())
            self.dismiss(HandleNote(self.query_one("#note", Input).value.strip(), self._until(), set_aside))
        else:
            event.input.keep_typing()
