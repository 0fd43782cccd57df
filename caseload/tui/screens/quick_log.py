"""The phone line's quick log: patient, kind, value, Enter. Everything is checked as it is typed.

The day defaults to today (also "yesterday", "-2", or a date); time, flags and a note are optional.
A second temperature on the same day offers a correction of the first instead of failing; the
dialog stays open after a save, so a caller's temperature and bleed go in one after the other.
"""

from __future__ import annotations

from rich.text import Text
from textual import events, on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.screen import ModalScreen
from textual.suggester import Suggester
from textual.widgets import Footer, Input, Label, Static

from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.core.model import Kind
from caseload.core.parse import FLAGS_BY_KIND, InputError, ParsedEntry, one_line, parse_entry
from caseload.application.clinic import SameDayReading
from caseload.application.entries import Logged
from caseload.tui.screens.correct_entry import Correction, CorrectEntryDialog
from caseload.tui.widgets.patient_picker import PatientPicker
from caseload.tui.widgets.type_ahead import TypeAheadInput
from caseload.presentation.glossary import KIND_WORDS, WORDS_BY_KIND, complete_kind, kind_label, match_kind
from caseload.presentation.days import short_day
from caseload.tui.rich_text import literal
from caseload.tui.saving import Saved, logged_summary

KINDS_HINT = " ".join(w.kind.value for w in KIND_WORDS)
DETAIL_FIELDS = ("value", "day", "time", "flags", "note")


class KindSuggester(Suggester):
    """Completes a KIND word, label or alias from its first letters, commonest kinds first."""

    async def get_suggestion(self, value: str) -> str | None:
        return complete_kind(value)


class QuickLogScreen(ClinicWork, ModalScreen[None]):
    """Opened with `l` from anywhere; the highlighted patient (or the record's) comes preselected."""

    CSS_PATH = "quick_log.tcss"
    BINDINGS = [
        Binding("escape", "dismiss", "Close", id="quick_log.close"),
        Binding("ctrl+s", "save", "Save", id="quick_log.save"),
    ]

    class Done(Message):
        def __init__(self, outcome: Logged | SameDayReading) -> None:
            super().__init__()
            self.outcome = outcome

    class Refused(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def __init__(self, patient_id: str | None = None, settled: bool = False) -> None:
        super().__init__()
        self._patient_id = patient_id
        self._settled = settled  # opened from a record: the patient is not in question
        self._saving = False
        self._typed_from: TypeAheadInput | None = None

    def compose(self) -> ComposeResult:
        with Vertical(id="quick-log"):
            yield Label("Log a call", classes="dialog-title")
            with Horizontal(classes="row"):
                yield Label("Patient", classes="field")
                yield PatientPicker(self.app.roster, self._patient_id, id="picker")
            with Horizontal(classes="row"):
                yield Label("Kind", classes="field")
                yield TypeAheadInput(placeholder="temp, bleed…", id="kind", suggester=KindSuggester(), compact=True)
                yield Label("Value", classes="field")
                yield TypeAheadInput(placeholder="", id="value", compact=True)
            with Horizontal(classes="row"):
                yield Label("Day", classes="field")
                yield TypeAheadInput("today", id="day", compact=True)
                yield Label("Time", classes="field")
                yield TypeAheadInput(placeholder="HH:MM", id="time", compact=True)
                yield Label("Flags", classes="field")
                yield TypeAheadInput(placeholder="", id="flags", compact=True)
            with Horizontal(classes="row"):
                yield Label("Note", classes="field")
                yield TypeAheadInput(placeholder="optional", id="note", compact=True)
            yield Static("", id="check", classes="check")
            yield Static("", id="result")
        yield Footer(compact=True)

    def _first_field(self) -> TypeAheadInput:
        # From the list the highlighted patient is offered selected: Enter keeps it, typing replaces it.
        picker = self.query_one(PatientPicker)
        return self.query_one("#kind" if picker.patient and self._settled else "#patient", TypeAheadInput)

    def on_mount(self) -> None:
        self._first_field().focus()
        self._check()

    def on_key(self, event: events.Key) -> None:
        """Keys typed right after `l`, before a field has the focus, go to the field that is getting it."""
        if not isinstance(self.focused, Input) and (event.is_printable or event.key in ("enter", "tab")):
            event.stop()
            event.prevent_default()
            self._first_field().post_message(events.Key(event.key, event.character))

    def _text(self, field: str) -> str:
        return self.query_one(f"#{field}", Input).value

    def _parsed(self) -> ParsedEntry:
        kind = match_kind(self._text("kind"))
        if kind is None:
            typed = self._text("kind").strip()
            raise InputError(f"kind '{one_line(typed)}' not understood: use {KINDS_HINT}" if typed else f"type a kind: {KINDS_HINT}")
        return parse_entry(kind, self._text("value"), self.app.clinic.as_of, on=self._text("day") or "today",
                           at=self._text("time").strip() or None, flags=self._text("flags"), note=self._text("note"))

    @on(Input.Changed)
    def _check(self) -> None:
        kind = match_kind(self._text("kind"))
        value = self.query_one("#value", Input)
        value.placeholder = WORDS_BY_KIND[kind].hint if kind else ""
        flags = FLAGS_BY_KIND.get(kind, ()) if kind else ()
        self.query_one("#flags", Input).placeholder = ",".join(flags) if flags else "none"
        check = self.query_one("#check", Static)
        if not self._text("kind").strip():
            check.set_class(False, "refused")
            check.update(Text(f"Next: the kind ({KINDS_HINT}), then Enter", style="dim"))
            return
        try:
            parsed = self._parsed()
        except InputError as err:
            check.set_class(True, "refused")
            check.update(Text(f"Not yet: {err}"))
            return
        check.set_class(False, "refused")
        shown = parsed.value.display() + (" C" if parsed.kind is Kind.TEMP else "")
        text = Text(f"Ready: {kind_label(parsed.kind)} ", style="bold")
        text.append_text(literal(shown))
        text.append(f" on {short_day(parsed.day)}" + (f" at {parsed.time}" if parsed.time else ""))
        if parsed.flags:
            text.append(f" ({', '.join(parsed.flags)})")
        text.append(" · Enter saves")
        check.update(text)

    def _move_on(self, source: TypeAheadInput, target_id: str) -> None:
        target = self.query_one(f"#{target_id}", TypeAheadInput)
        target.focus()
        source.pass_on(target)

    @on(PatientPicker.Picked)
    def _picked(self, message: PatientPicker.Picked) -> None:
        if message.patient is not None:
            self._move_on(self.query_one("#patient", TypeAheadInput), "kind")

    @on(Input.Submitted, "#kind")
    def _kind_entered(self, event: Input.Submitted) -> None:
        kind = match_kind(event.value)
        if kind is None:
            event.input.keep_typing()
            return
        event.input.value = kind.value
        self._move_on(event.input, "value")

    @on(Input.Submitted)
    def _detail_entered(self, event: Input.Submitted) -> None:
        if event.input.id in DETAIL_FIELDS:
            self._save(event.input)

    def action_save(self) -> None:
        self._save(None)

    def _save(self, field: TypeAheadInput | None) -> None:
        """Save what is typed; `field` is where Enter was pressed (its typed-ahead keys wait for the outcome)."""
        picker = self.query_one(PatientPicker)
        result = self.query_one("#result", Static)
        if self._saving:
            if field is not None:
                field.keep_typing()
            return
        if picker.patient is None:
            result.update(Text("Pick a patient first: type an id or a name, then Enter.", style="bold"))
            if field is not None:
                field.drop_held()
            self.query_one("#patient", Input).focus()
            return
        try:
            parsed = self._parsed()
        except InputError:
            if field is not None:
                field.keep_typing()  # the check line already says why
            return
        self._saving = True
        self._typed_from = field
        result.update(Text("Saving…", style="dim"))
        self._log_call(picker.patient.id, parsed.kind, self._text("value"), self._text("day") or "today",
                       self._text("time").strip() or None, self._text("flags"), self._text("note"))

    @work(**STORE_WORK, name="save")
    def _log_call(self, patient_id: str, kind: Kind, value: str, on: str, at: str | None, flags: str, note: str) -> None:
        self.post_message(self.Done(self.app.clinic.log_call(patient_id, kind, value, on, at, flags, note)))

    @work(**STORE_WORK, name="save")
    def _amend(self, entry_id: int, value: str, reason: str) -> None:
        self.post_message(self.Done(self.app.clinic.amend(entry_id, value, reason)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.Refused(reason))

    def _finish_typing(self, next_field: str | None) -> None:
        """After a save: typing goes on in `next_field`, or, when the outcome needs a look, is dropped."""
        field, self._typed_from = self._typed_from, None
        if next_field is None:
            if field is not None:
                field.drop_held()
        elif field is not None:
            self._move_on(field, next_field)
        else:
            self.query_one(f"#{next_field}", Input).focus()

    def on_quick_log_screen_refused(self, message: Refused) -> None:
        self._saving = False
        self._finish_typing(None)
        self.query_one("#result", Static).update(Text(f"Not saved: {message.reason}", style="bold"))

    def on_quick_log_screen_done(self, message: Done) -> None:
        self._saving = False
        outcome = message.outcome
        if isinstance(outcome, SameDayReading):
            self._finish_typing(None)
            self._same_day(outcome)
            return
        self.query_one("#result", Static).update(Text(logged_summary(outcome)))
        for field in ("kind", "value", "time", "flags", "note"):
            self.query_one(f"#{field}", Input).value = ""
        self._finish_typing("kind")
        self.app.post_message(Saved(None, outcome))

    def _same_day(self, found: SameDayReading) -> None:
        e = found.existing
        line = f"{e.patient_id} already has {e.value.display()} C on {short_day(e.day)} (entry #{e.id})"
        if not self.app.clinic.may("entry.amend"):
            self.query_one("#result", Static).update(Text(f"Not saved: {line}; a nurse can replace it with a correction."))
            return

        def replace(correction: Correction | None) -> None:
            if correction is None:
                self.query_one("#result", Static).update(Text(f"Not saved: {line}, kept as it is."))
                return
            self._saving = True
            self._amend(e.id, correction.value, correction.reason)

        dialog = CorrectEntryDialog(e, amend=True, value=found.value, heading=f"{line}: replace it?")
        self.app.push_screen(dialog, replace)
