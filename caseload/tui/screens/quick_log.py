"""The phone line's quick log: patient, kind, value, Enter. Everything is checked as it is typed.

The day defaults to today (also "yesterday", "-2", or a date), is said in words when it is not
today, and goes back to today after each save; time, flags and a note are optional. A second
temperature on the same day offers a correction of the first instead of failing; an unusual entry
(a temperature outside the basal range, a second mucus or bleed that day) is saved only on a second
Enter. The dialog stays open after a save, so a caller's temperature and bleed go in one after the
other. Opened from a record, it logs for that patient until the patient field is unlocked.
"""

from __future__ import annotations

from rich.text import Text
from textual import events, on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.suggester import Suggester
from textual.widgets import Input, Label, Static

from caseload.tui.clinic_work import STORE_WORK, ClinicWork, Saved
from caseload.core.model import Kind
from caseload.core.parse import FLAGS_BY_KIND, InputError, ParsedEntry, one_line, parse_entry
from caseload.application.clinic import SameDayReading, SecondLook
from caseload.core.second_look import meant_celsius
from caseload.application.entries import Logged
from caseload.tui.screens.correct_entry import Correction, CorrectEntryDialog
from caseload.tui.widgets.patient_picker import PatientPicker
from caseload.tui.widgets.type_ahead import EarlyKeys, TypeAheadInput, as_typed
from caseload.presentation.glossary import (
    KIND_WORDS, WORDS_BY_KIND, complete_kind, kind_label, logged_summary, match_kind, not_used,
)
from caseload.presentation.days import long_day, short_day
from caseload.presentation.safe_text import literal, printable
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.key_bar import KeyBar

KINDS_HINT = " ".join(w.kind.value for w in KIND_WORDS)
DETAIL_FIELDS = ("value", "day", "time", "flags", "note")


class KindSuggester(Suggester):
    """Completes a KIND word, label or alias from its first letters, commonest kinds first."""

    async def get_suggestion(self, value: str) -> str | None:
        return complete_kind(value)


class QuickLogScreen(EarlyKeys, ClinicWork, Dialog[None]):
    """Opened with `l` from anywhere. From a list the highlighted patient is offered (Enter picks her,
    typing replaces her); from a record her patient is picked. The title names a patient only once
    she is picked."""

    CSS_PATH = "quick_log.tcss"
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (80, "-wide")]  # the field rows' layout, see quick_log.tcss
    BINDINGS = [
        Binding("escape", "dismiss", "Close", id="quick_log.close"),
        Binding("ctrl+s", "save", "Save", id="quick_log.save"),
        Binding("ctrl+o", "change_patient", "Change patient", id="quick_log.change_patient"),
    ]
    FOCUS_ACTIONS = ("change_patient",)  # run by the field at once, see TypeAheadInput

    class Done(Message):
        def __init__(self, outcome: Logged | SameDayReading | SecondLook) -> None:
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
        self._confirmed_for: tuple[str, ...] | None = None  # what was typed when a second look was asked
        self._said_for: tuple[str, ...] | None = None  # what was typed when the outcome line said why not

    def compose(self) -> ComposeResult:
        with Vertical(id="quick-log"):
            yield Label("Log a call", id="whose", classes="dialog-title")
            with Horizontal(classes="row"):
                yield Label("Patient", classes="field")
                yield PatientPicker(self.app.roster, self._patient_id, picked=self._settled, id="picker")
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
            yield Static("", id="day-warning")
            yield Static("", id="check", classes="check")
            yield Static("", id="result")
        yield KeyBar()

    def first_field(self) -> TypeAheadInput:
        # From the list the highlighted patient is offered selected: Enter keeps it, typing replaces it.
        picker = self.query_one(PatientPicker)
        return self.query_one("#kind" if picker.patient and self._settled else "#patient", TypeAheadInput)

    def on_mount(self) -> None:
        if self._settled and self.query_one(PatientPicker).patient is not None:
            self.query_one("#patient", Input).disabled = True  # changing patient is an explicit act
        self.first_field().focus()
        self._check()

    def action_change_patient(self) -> None:
        """Unlock the patient field of a quick log opened from a record."""
        field = self.query_one("#patient", TypeAheadInput)
        field.disabled = False
        self.set_focus(field)  # at once: the keys typed behind ctrl+o follow it
        field.select_all()
        self._show_whose()

    def _text(self, field: str) -> str:
        return self.query_one(f"#{field}", Input).value

    def _parsed(self) -> ParsedEntry:
        kind = match_kind(self._text("kind"))
        if kind is None:
            typed = self._text("kind").strip()
            raise InputError(f"kind '{one_line(typed)}' not understood: use {KINDS_HINT}" if typed else f"type a kind: {KINDS_HINT}")
        return parse_entry(kind, self._text("value"), self.app.clinic.as_of, on=self._text("day") or "today",
                           at=self._text("time").strip() or None, flags=self._text("flags"), note=self._text("note"))

    def _typed(self) -> tuple[str, ...]:
        return tuple(self._text(f) for f in ("patient", "kind", *DETAIL_FIELDS))

    def _show_whose(self) -> None:
        patient = self.query_one(PatientPicker).patient
        whose = self.query_one("#whose", Label)
        if patient is None:
            whose.update(Text("Log a call: no patient chosen yet", style="bold"))
            return
        locked = " (ctrl+o: other patient)" if self.query_one("#patient", Input).disabled else ""
        whose.update(Text(f"Log a call for {patient.id} ", style="bold").append_text(literal(printable(patient.name)))
                     .append(locked, style="dim"))

    def _show_day(self, parsed: ParsedEntry | None) -> None:
        """A day other than today is said loudly, in words, before anything is saved."""
        warning = self.query_one("#day-warning", Static)
        today = self.app.clinic.as_of
        away = parsed is not None and parsed.day != today
        warning.display = away
        if away:
            ago = (today - parsed.day).days
            when = "yesterday" if ago == 1 else f"{ago} days ago"
            warning.update(Text(f"Not today: saving on {long_day(parsed.day)} ({when})", style="bold reverse"))

    @on(Input.Changed)
    def _check(self) -> None:
        self._show_whose()
        if self._said_for is not None and self._typed() != self._said_for:
            self._said_for = None  # that line spoke of what was typed then, not of what is typed now
            self.query_one("#result", Static).update("")
        kind = match_kind(self._text("kind"))
        value = self.query_one("#value", Input)
        value.placeholder = WORDS_BY_KIND[kind].hint if kind else ""
        flags = FLAGS_BY_KIND.get(kind, ()) if kind else ()
        self.query_one("#flags", Input).placeholder = ",".join(flags) if flags else "none"
        check = self.query_one("#check", Static)
        if not self._text("kind").strip():
            self._show_day(None)
            check.set_class(False, "refused")
            if self.query_one(PatientPicker).patient is None:
                check.update(Text("Next: the patient (an id or a name), then Enter", style="dim"))
            else:
                check.update(Text(f"Next: the kind ({KINDS_HINT}), then Enter", style="dim"))
            return
        try:
            parsed = self._parsed()
        except InputError as err:
            self._show_day(None)
            check.set_class(True, "refused")
            check.update(Text(f"Not yet: {err}{self._meant_hint(kind)}"))
            return
        self._show_day(parsed)
        check.set_class(False, "refused")
        shown = parsed.value.display() + (" C" if parsed.kind is Kind.TEMP else "")
        text = Text(f"Ready: {kind_label(parsed.kind)} ", style="bold")
        text.append_text(literal(shown))
        text.append(f" on {short_day(parsed.day)}" + (f" at {parsed.time}" if parsed.time else ""))
        if parsed.flags:
            text.append(f" ({', '.join(parsed.flags)})")
        text.append(" · Enter saves")
        check.update(text.append(self._meant_hint(kind)))

    def _meant_hint(self, kind: Kind | None) -> str:
        """A temperature typed with its point missing or misplaced: say what it probably meant, change nothing."""
        meant = meant_celsius(self._text("value")) if kind is Kind.TEMP else None
        return f" · did you mean {meant:.2f}".rstrip("0").rstrip(".") + "?" if meant is not None else ""

    def _move_on(self, source: TypeAheadInput, target_id: str) -> None:
        target = self.query_one(f"#{target_id}", TypeAheadInput)
        target.focus()
        source.pass_on(target)

    @on(PatientPicker.NoMatch)
    def _no_match(self, message: PatientPicker.NoMatch) -> None:
        self._say(f"No patient matches '{one_line(message.typed.strip())}': type an id or a name, then Enter.",
                  message.set_aside)

    @on(PatientPicker.Picked)
    def _picked(self, message: PatientPicker.Picked) -> None:
        self._show_whose()
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
            self._say("Pick a patient first: type an id or a name, then Enter.",
                      field.drop_held() if field is not None else [])
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
        confirmed = self._confirmed_for == self._typed()
        self._confirmed_for = None
        self._log_call(picker.patient.id, parsed.kind, self._text("value"), self._text("day") or "today",
                       self._text("time").strip() or None, self._text("flags"), self._text("note"), confirmed)

    @work(**STORE_WORK, name="save")
    def _log_call(self, patient_id: str, kind: Kind, value: str, on: str, at: str | None, flags: str, note: str,
                  confirmed: bool) -> None:
        self.post_message(self.Done(self.app.clinic.log_call(patient_id, kind, value, on, at, flags, note, confirmed)))

    @work(**STORE_WORK, name="save")
    def _amend(self, entry_id: int, value: str, reason: str) -> None:
        self.post_message(self.Done(self.app.clinic.amend(entry_id, value, reason)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.Refused(reason))

    def _finish_typing(self, next_field: str | None) -> list[events.Key]:
        """After a save: typing goes on in `next_field`, or, when the outcome needs a look, is set
        aside (the keys set aside)."""
        field, self._typed_from = self._typed_from, None
        if next_field is None:
            return field.drop_held() if field is not None else []
        if field is not None:
            self._move_on(field, next_field)
        else:
            self.query_one(f"#{next_field}", Input).focus()
        return []

    def _say(self, line: str, set_aside: list[events.Key], style: str = "bold") -> None:
        """The outcome line, and below it the keys typed ahead of it that were not used."""
        text = Text(line, style=style)
        if set_aside:
            text.append("\n" + not_used(as_typed(set_aside)), style="bold")
        self.query_one("#result", Static).update(text)
        self._said_for = self._typed()

    def on_quick_log_screen_refused(self, message: Refused) -> None:
        self._saving = False
        self._say(f"Not saved: {message.reason}", self._finish_typing(None))

    def on_quick_log_screen_done(self, message: Done) -> None:
        self._saving = False
        outcome = message.outcome
        if isinstance(outcome, SameDayReading):
            # Keys typed after Enter were meant for the next entry, not as an answer to a question
            # they were typed before: they are set aside, and the question (or the refusal) says so.
            self._same_day(outcome, self._finish_typing(None))
            return
        if isinstance(outcome, SecondLook):
            # Keys typed ahead are set aside: the next Enter must be a decision taken after reading this.
            self._confirmed_for = self._typed()
            self._say(f"Not saved yet: {outcome.question}. Enter again saves it as typed; or change it.",
                      self._finish_typing(None))
            return
        self._said_for = None
        self.query_one("#result", Static).update(Text(logged_summary(outcome)))
        for field in ("kind", "value", "time", "flags", "note"):
            self.query_one(f"#{field}", Input).value = ""
        self.query_one("#day", Input).value = "today"  # the next entry of the call is today's unless said
        self._finish_typing("kind")
        self.app.post_message(Saved(None, outcome))

    def _same_day(self, found: SameDayReading, set_aside: list[events.Key]) -> None:
        e = found.existing
        line = f"{e.patient_id} already has {e.value.display()} C on {short_day(e.day)} (entry #{e.id})"
        if not self.app.clinic.may("entry.amend"):
            self._say(f"Not saved: {line}; a nurse can replace it with a correction.", set_aside, style="")
            return

        def replace(correction: Correction | None) -> None:
            if correction is None:
                self.query_one("#result", Static).update(Text(f"Not saved: {line}, kept as it is."))
                return
            self._saving = True
            self._amend(e.id, correction.value, correction.reason)

        dialog = CorrectEntryDialog(e, amend=True, value=found.value, heading=f"{line}: replace it?", asked=True,
                                    set_aside=len(set_aside))
        self.app.push_screen(dialog, replace)
