"""Correcting an entry: amend it (a new value and a reason) or void it (a reason). Nurses and up."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import Input, Label, Static

from caseload.core.model import Entry
from caseload.core.parse import InputError, parse_value
from caseload.presentation.glossary import kind_label, logged_summary, voided_summary
from caseload.presentation.days import short_day
from caseload.presentation.safe_text import literal
from caseload.tui.screens.dialog import Dialog, show_check
from caseload.tui.widgets.type_ahead import EarlyKeys, TypeAheadInput, replay
from caseload.tui.widgets.key_bar import KeyBar


@dataclass(frozen=True)
class Correction:
    reason: str
    value: str | None = None  # None: a void


def _entry_line(entry: Entry) -> Text:
    text = Text(f"#{entry.id} {short_day(entry.day)} {kind_label(entry.kind)}: ", style="bold")
    return text.append_text(literal(entry.value.display()))


# Keys closer together than this are one burst of typing, and nobody reads a question this fast:
# a question asked mid-burst takes keys only after this long without one (common practice).
QUIET_SECONDS = 0.5


class CorrectEntryDialog(EarlyKeys, Dialog[Correction | None]):
    """Enter in either field saves when both are valid; Esc leaves the entry as it is.

    Opened by a key (amend, void), it takes the keys typed after that key, in order, into its fields
    (Tab and Enter move on as they would once it is in view). Opened as a question
    (`asked`: a save found a reading already there), keys typed in the same burst as the save were
    typed before anyone could read it, for something else: they are not answers, and it says so. It
    takes keys once the typing has paused for `QUIET_SECONDS`."""

    CSS_PATH = "dialogs.tcss"
    AUTO_FOCUS = ""  # none: the field gets the focus when the dialog may take keys
    BINDINGS = [Binding("escape", "dismiss(None)", "Cancel", id="correct.cancel")]

    def __init__(self, entry: Entry, amend: bool, value: str = "", heading: str | None = None,
                 asked: bool = False, set_aside: int = 0) -> None:
        """`set_aside`: keys typed ahead that the screen behind already dropped for this question."""
        super().__init__()
        self.entry = entry
        self.amend = amend
        self._value = value
        self._heading = heading or ("Amend entry" if amend else "Void entry")
        self._waiting = asked  # keys are not answers until the typing pauses
        self._set_aside = set_aside

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(Text(self._heading), classes="dialog-title")
            yield Static(_entry_line(self.entry))
            if self.amend:
                yield Label("New value")
                yield TypeAheadInput(self._value, placeholder="the corrected value", id="value", compact=True)
            yield Label("Reason (kept with the record)")
            yield TypeAheadInput(placeholder="why it changes", id="reason", compact=True)
            yield Static("", id="check", classes="check")
            yield Static("", id="set-aside")
        yield KeyBar()

    def on_mount(self) -> None:
        self._check()
        if self._waiting:
            self._quiet = self.set_timer(QUIET_SECONDS, self._answerable)
            self._say_set_aside()
        else:
            self.first_field().focus()

    def first_field(self) -> TypeAheadInput:
        return self.query_one("#value" if self.amend and not self._value else "#reason", TypeAheadInput)

    def on_key(self, event: events.Key) -> None:
        # Runs before EarlyKeys' handler, which it stops while the keys are not answers.
        if self._waiting and event.key != "escape":  # Esc writes nothing: it may always close
            event.stop()
            event.prevent_default()
            self._set_aside += 1
            self._quiet.reset()  # still the same burst of typing: the quiet starts again
            self._say_set_aside()

    def _say_set_aside(self) -> None:
        if self._set_aside:
            self.query_one("#set-aside", Static).update(Text(
                "Keys typed before this question appeared were not used: nothing is saved until you answer.",
                style="bold"))

    def _answerable(self) -> None:
        self._waiting = False
        self.first_field().focus()

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
        show_check(self.query_one("#check", Static), self._problem(), "Enter saves.")

    @on(Input.Submitted)
    def _submit(self, event: Input.Submitted) -> None:
        field = event.input
        reason = self.query_one("#reason", TypeAheadInput)
        if field.id == "value" and not reason.value.strip():
            reason.focus()
            field.pass_on(reason)
            return
        if self._problem() is not None:
            field.keep_typing()  # the check line says why
            return
        typed_on = field.take_held()
        value = self.query_one("#value", Input).value if self.amend else None
        self.dismiss(Correction(reason.value.strip(), value))
        replay(self.app, typed_on)


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
