"""Picking a patient by typing an id or a name: up to 8 matches listed as you type, each with her date
of birth (two callers may share a name); Enter takes the highlighted one, and typing goes on in the next field."""

from __future__ import annotations

from rich.text import Text
from textual import events, on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.widgets import Input, OptionList
from textual.widgets.option_list import Option

from caseload.core.model import Patient
from caseload.application.caseload_view import CaseloadLine
from caseload.tui.search import find_patients
from caseload.tui.widgets.type_ahead import TypeAheadInput
from caseload.presentation.glossary import phase_label
from caseload.presentation.safe_text import literal, printable

SHOWN = 8


def typed_form(patient: Patient) -> str:
    return f"{patient.id} {printable(patient.name)}"


def picked_label(line: CaseloadLine) -> Text:
    p = line.patient
    text = Text(p.id + " ", style="bold").append_text(literal(p.name))
    text.append(f"  born {p.born.isoformat()}")
    if line.cycle_day is not None:
        text.append(f"  · cycle day {line.cycle_day}", style="dim")
    if line.snapshot is not None:
        text.append(f", {phase_label(line.snapshot.phase)}", style="dim")
    return text


class PatientPicker(Vertical):
    """Up/Down move through the matches; Enter or a click picks; editing the text un-picks.

    `patient` is the picked patient, or None: a patient only offered (her id and name in the field,
    selected, so Enter picks her and typing replaces her) or highlighted among the matches is not
    picked, and nothing may be logged for her until she is."""

    BINDINGS = [
        Binding("down", "move(1)", "Next match", id="picker.next"),
        Binding("up", "move(-1)", "Previous match", id="picker.previous"),
    ]

    class Picked(Message):
        def __init__(self, patient: Patient | None) -> None:
            super().__init__()
            self.patient = patient

    class NoMatch(Message):
        """Enter found no patient for what was typed; `set_aside` are the keys typed after it."""

        def __init__(self, typed: str, set_aside: list[events.Key]) -> None:
            super().__init__()
            self.typed = typed
            self.set_aside = set_aside

    def __init__(self, lines: tuple[CaseloadLine, ...], offered: str | None = None, picked: bool = False, **kwargs):
        """`offered`: the patient who starts in the field; `picked`: she is picked already (a record's)."""
        super().__init__(**kwargs)
        self._lines = {line.patient.id: line for line in lines}
        self._patients = [line.patient for line in lines]
        # The patient whose id and name are in the field, picked or only offered.
        self._in_field: Patient | None = self._lines[offered].patient if offered in self._lines else None
        self.patient: Patient | None = self._in_field if picked else None
        self._matches: list[Patient] = []
        self._enter_waiting = False  # an Enter typed before the caseload was read, decided once it is

    def compose(self) -> ComposeResult:
        start = typed_form(self._in_field) if self._in_field else ""
        field = TypeAheadInput(start, placeholder="patient id or name", id="patient", compact=True, select_on_focus=False)
        # Selected once, from the start, rather than on focus: keys typed ahead of the focus must
        # replace the offered patient, and the focus arriving later must not select what they typed.
        field.select_all()
        yield field
        matches = OptionList(id="matches", compact=True)
        matches.can_focus = False  # the typing stays in the field; Up/Down move through the matches
        yield matches

    def on_mount(self) -> None:
        self._show_matches()
        self.watch(self.app, "roster", self._roster_changed, init=False)
        self.watch(self.app, "roster_read", self._roster_changed, init=False)

    def _roster_changed(self) -> None:
        """The caseload was read or a save changed it: matches come from it now, and an Enter typed
        before it was read counts now, with the keys held behind it."""
        self._lines = {line.patient.id: line for line in self.app.roster}
        self._patients = [line.patient for line in self.app.roster]
        self._show_matches()
        if self._enter_waiting and self.app.roster_read:
            self._enter_waiting = False
            self._decide_enter()

    @on(Input.Changed, "#patient")
    def _typed(self, event: Input.Changed) -> None:
        # Not stopped: the screen around checks the whole call again as any field changes.
        if self._in_field is not None and event.value != typed_form(self._in_field):
            self._in_field = None
            if self.patient is not None:
                self.patient = None
                self.post_message(self.Picked(None))
        self._show_matches()

    def _show_matches(self) -> None:
        options = self.query_one("#matches", OptionList)
        typed = self.query_one("#patient", Input).value
        self._matches = [] if self._in_field or not typed.strip() else find_patients(self._patients, typed, SHOWN)
        options.set_options(Option(picked_label(self._lines[p.id]), id=p.id) for p in self._matches)
        options.display = bool(self._matches) or (bool(typed.strip()) and self._in_field is None)
        if not self._matches and typed.strip() and self._in_field is None:
            options.set_options([Option(Text("no patient matches", style="dim"), disabled=True)])
        elif self._matches:
            options.highlighted = 0

    def action_move(self, step: int) -> None:
        options = self.query_one("#matches", OptionList)
        if self._matches:
            options.highlighted = ((options.highlighted or 0) + step) % len(self._matches)

    @on(Input.Submitted, "#patient")
    def _enter(self, event: Input.Submitted) -> None:
        event.stop()
        if self._in_field is None and not self._matches and not self.app.roster_read:
            self._enter_waiting = True  # the field holds the keys typed after it meanwhile
            return
        self._decide_enter()

    def _decide_enter(self) -> None:
        if self._in_field is not None:
            self._pick(self._in_field)
            return
        options = self.query_one("#matches", OptionList)
        field = self.query_one("#patient", TypeAheadInput)
        if self._matches:
            self._pick(self._matches[options.highlighted or 0])
        elif field.value.strip():
            self.post_message(self.NoMatch(field.value, field.drop_held()))
        else:
            field.keep_typing()

    @on(OptionList.OptionSelected, "#matches")
    def _clicked(self, event: OptionList.OptionSelected) -> None:
        event.stop()
        self._pick(self._lines[event.option.id].patient)

    def _pick(self, patient: Patient) -> None:
        self.patient = self._in_field = patient
        self.query_one("#patient", Input).value = typed_form(patient)
        self._show_matches()
        self.post_message(self.Picked(patient))
