"""Adding a note to a record: a `note` entry (the KIND word of the scriptable interface) dated today."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Label, Static

from caseload.core.model import Kind
from caseload.core.parse import TEXT_MAX, InputError, parse_value
from caseload.tui.widgets.type_ahead import EarlyKeys, TypeAheadInput, replay
from caseload.tui.screens.dialog import Dialog, show_check
from caseload.tui.widgets.key_bar import KeyBar


class AddNoteDialog(EarlyKeys, Dialog[str | None]):
    """Opened with `n` on a record; Enter saves the note when it is valid, Esc leaves the record as it is."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss(None)", "Cancel", id="add_note.cancel")]

    def __init__(self, patient_id: str) -> None:
        super().__init__()
        self.patient_id = patient_id

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(f"Add a note to {self.patient_id}'s record (today)", classes="dialog-title")
            yield TypeAheadInput(placeholder=f"the note, up to {TEXT_MAX} characters", id="note-text", compact=True)
            yield Static("", id="check", classes="check")
        yield KeyBar()

    def first_field(self) -> TypeAheadInput:
        return self.query_one("#note-text", TypeAheadInput)

    def on_mount(self) -> None:
        self.first_field().focus()
        self._check()

    def _problem(self) -> str | None:
        try:
            parse_value(Kind.NOTE, self.first_field().value)
        except InputError as err:
            return str(err)
        return None

    @on(Input.Changed)
    def _check(self) -> None:
        show_check(self.query_one("#check", Static), self._problem(), "Enter saves the note.")

    @on(Input.Submitted)
    def _submit(self, event: Input.Submitted) -> None:
        if self._problem() is not None:
            event.input.keep_typing()
            return
        typed_on = event.input.take_held()
        self.dismiss(event.value)
        replay(self.app, typed_on)
