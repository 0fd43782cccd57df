"""Correcting an entry: amend it (a new value and a reason) or void it (a reason). Nurses and up."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen, Screen
from textual.widgets import Footer, Input, Label, Static

from caseload.core.model import Entry
from caseload.core.parse import InputError, parse_value
from caseload.presentation.glossary import kind_label, logged_summary, voided_summary
from caseload.presentation.days import short_day
from caseload.presentation.safe_text import literal


@dataclass(frozen=True)
class Correction:
    reason: str
    value: str | None = None  # None: a void


def _entry_line(entry: Entry) -> Text:
    text = Text(f"#{entry.id} {short_day(entry.day)} {kind_label(entry.kind)}: ", style="bold")
    return text.append_text(literal(entry.value.display()))


class CorrectEntryDialog(ModalScreen[Correction | None]):
    """Enter in either field saves when both are valid; Esc leaves the entry as it is."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss(None)", "Cancel", id="correct.cancel")]

    def __init__(self, entry: Entry, amend: bool, value: str = "", heading: str | None = None) -> None:
        super().__init__()
        self.entry = entry
        self.amend = amend
        self._value = value
        self._heading = heading or ("Amend entry" if amend else "Void entry")

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text(self._heading), classes="dialog-title")
            yield Static(_entry_line(self.entry))
            if self.amend:
                yield Label("New value")
                yield Input(self._value, placeholder="the corrected value", id="value", compact=True)
            yield Label("Reason (kept with the record)")
            yield Input(placeholder="why it changes", id="reason", compact=True)
            yield Static("", id="check", classes="check")
        yield Footer(compact=True)

    def on_mount(self) -> None:
        self.query_one("#value" if self.amend and not self._value else "#reason", Input).focus()
        self._check()

    def _problem(self) -> str | None:
        if self.amend:
            try:
                parse_value(self.entry.kind, self.query_one("#value", Input).value)
            except InputError as err:
                return str(err)
        if not self.query_one("#reason", Input).value.strip():
            return "a reason is needed: say why the entry changes"
        return None

    @on(Input.Changed)
    def _check(self) -> None:
        problem = self._problem()
        check = self.query_one("#check", Static)
        check.set_class(problem is not None, "refused")
        check.update(Text(problem or "Enter saves.", no_wrap=False))

    @on(Input.Submitted)
    def _submit(self, event: Input.Submitted) -> None:
        if event.input.id == "value" and not self.query_one("#reason", Input).value.strip():
            self.query_one("#reason", Input).focus()
            return
        if self._problem() is None:
            value = self.query_one("#value", Input).value if self.amend else None
            self.dismiss(Correction(self.query_one("#reason", Input).value.strip(), value))


def correct_entry(screen: Screen, entry: Entry) -> Callable[[Correction | None], None]:
    """The dialog's result handler: amend or void in a worker, then the app shows what it did."""

    def done(correction: Correction | None) -> None:
        if correction is None:
            return
        if correction.value is not None:
            screen.app.save(screen.app.clinic.amend, entry.id, correction.value, correction.reason, summary=logged_summary)
        else:
            screen.app.save(screen.app.clinic.void, entry.id, correction.reason, summary=voided_summary)

    return done
