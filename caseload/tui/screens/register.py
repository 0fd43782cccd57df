"""Registering a new caller: name, date of birth, a nurse from the clinic's nurses, and the proposed id.

Each field is checked as it is typed with the CLI's own rules (`core/parse.py`); Enter moves on and
saves from the nurse or id field. The Clinic's `register_patient` checks everything again, with the
same permission, audit and refusals as `caseload patient add`; a refusal is one line here and
nothing is written. The plan starts as natural: changing it is a nurse's decision, on the record.
"""

from __future__ import annotations

from rich.text import Text
from textual import events, on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Input, Label, Static

from caseload.core.model import Patient
from caseload.core.parse import InputError, parse_birth_date, parse_id, parse_name
from caseload.presentation.safe_text import printable
from caseload.tui.choices import pick_nurse
from caseload.tui.clinic_work import STORE_WORK
from caseload.tui.screens.form_dialog import FormDialog
from caseload.tui.widgets.type_ahead import TypeAheadInput
from caseload.tui.widgets.key_bar import KeyBar

FIELDS = ("name", "born", "nurse", "patient-id")


def registered_summary(patient: Patient) -> str:
    nurse = f"nurse {patient.nurse_id}" if patient.nurse_id else "no nurse yet (on the unassigned list)"
    return f"Registered {patient.id} ({printable(patient.name)}), born {patient.born.isoformat()}, {nurse}."


class RegisterDialog(FormDialog):
    """Opened with `n` on the caseload list; the new patient's id is proposed, name and birth date needed."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [
        Binding("escape", "dismiss", "Cancel", id="register.cancel"),
        Binding("ctrl+s", "save", "Register", id="register.save"),
    ]

    REFUSED = "Not registered"

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog", id="register"):
            yield Label("Register a new caller", classes="dialog-title")
            for field, label, hint in (("name", "Name", "full name"), ("born", "Born", "YYYY-MM-DD"),
                                       ("nurse", "Nurse", "nurse id or name"), ("patient-id", "Id", "")):
                with Horizontal(classes="row"):
                    yield Label(label, classes="field")
                    yield TypeAheadInput(placeholder=hint, id=field, compact=True)
            yield Static(Text("Reading the nurses…", style="dim"), id="nurses")
            yield Static("", id="check", classes="check")
        yield KeyBar()

    def first_field(self) -> TypeAheadInput:
        return self.query_one("#name", TypeAheadInput)

    def proposal(self, clinic) -> str:
        return clinic.next_patient_id()

    def offer(self, proposal: str) -> None:
        field = self.query_one("#patient-id", Input)
        if not field.value:  # never over what was typed
            field.value = proposal

    def _problems(self) -> dict[str, str]:
        """What is wrong with each field, in the CLI's words; a field not yet read says so."""
        today = self.app.clinic.as_of
        checks = {
            "name": lambda t: parse_name(t),
            "born": lambda t: parse_birth_date(t, today),
            "nurse": lambda t: pick_nurse(self._nurses or (), t),
            "patient-id": lambda t: parse_id(t, "patient"),
        }
        problems = {}
        for field, check in checks.items():
            try:
                check(self.query_one(f"#{field}", Input).value)
            except InputError as err:
                problems[field] = str(err)
        if self._nurses is None:
            problems.setdefault("nurse", "reading the clinic's nurses…")
        return problems

    @on(Input.Changed)
    def _check(self) -> None:
        problems = self._problems()
        check = self.query_one("#check", Static)
        check.set_class(bool(problems), "refused")
        if problems:
            field = next(f for f in FIELDS if f in problems)
            check.update(Text(f"Not yet: {problems[field]}"))
            return
        nurse = pick_nurse(self._nurses or (), self.query_one("#nurse", Input).value)
        who = f"nurse {nurse.id} {printable(nurse.name)}" if nurse else "no nurse yet"
        check.update(Text(f"Ready: {self.query_one('#patient-id', Input).value.strip()}, {who} · Enter registers"))

    @on(Input.Submitted)
    def _entered(self, event: Input.Submitted) -> None:
        field = event.input
        if field.id in ("nurse", "patient-id") and self.wait_for_nurses(field):
            return
        if field.id in self._problems():
            field.keep_typing()  # the check line says why
            return
        if field.id in ("name", "born"):
            target = self.query_one(f"#{FIELDS[FIELDS.index(field.id) + 1]}", TypeAheadInput)
            target.focus()
            field.pass_on(target)
            return
        self._save(field)

    def action_save(self) -> None:
        self._save(None)

    def _save(self, field: TypeAheadInput | None) -> None:
        problems = self._problems()
        if self._saving or problems:
            if problems:
                self.query_one(f"#{next(f for f in FIELDS if f in problems)}", Input).focus()
            if field is not None:
                self.set_aside(field)
            return
        self.start_saving(field, "Registering…")
        nurse = pick_nurse(self._nurses or (), self.query_one("#nurse", Input).value)
        values = [self.query_one(f"#{f}", Input).value for f in ("patient-id", "name", "born")]
        self._register(*values, nurse.id if nurse else None)

    def saved(self, summary: str, result: Patient, typed_on: list[events.Key]) -> None:
        self.app.registered(result, summary, typed_on)

    @work(**STORE_WORK, name="save")
    def _register(self, patient_id: str, name: str, born: str, nurse: str | None) -> None:
        patient = self.app.clinic.register_patient(patient_id, name, born, nurse)
        self.post_message(self.Done(registered_summary(patient), patient))
