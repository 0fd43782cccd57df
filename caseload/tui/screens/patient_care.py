"""Changing a patient's nurse, plan or status from her record (nurses and up).

The fields start at the current values, selected, so typing replaces them; Tab moves, Enter saves
what changed through the Clinic's `set_patient`: the permission, audit and refusals of
`caseload patient set`. A refusal is one line here and nothing is written.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Input, Label, Static

from caseload.core.model import Patient, PatientStatus, Plan
from caseload.core.parse import InputError, accepted
from caseload.presentation.safe_text import printable
from caseload.tui.choices import pick_nurse, pick_word
from caseload.tui.clinic_work import STORE_WORK
from caseload.tui.screens.form_dialog import FormDialog
from caseload.tui.widgets.type_ahead import TypeAheadInput
from caseload.tui.widgets.key_bar import KeyBar


def care_summary(patient: Patient) -> str:
    return f"{patient.id}: plan {patient.plan.value}, status {patient.status.value}, nurse {patient.nurse_id or '-'}."


class PatientDialog(FormDialog):
    """Opened with `c` on a record; only the fields that differ from the record are sent."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [
        Binding("escape", "dismiss", "Cancel", id="care.cancel"),
        Binding("ctrl+s", "save", "Save", id="care.save"),
    ]

    def __init__(self, patient: Patient) -> None:
        super().__init__()
        self.patient = patient

    def compose(self) -> ComposeResult:
        p = self.patient
        with Vertical(classes="dialog", id="care"):
            title = Text(f"Nurse, plan and status of {p.id} ", style="bold").append(printable(p.name))
            yield Label(title, classes="dialog-title")
            rows = (("nurse", "Nurse", p.nurse_id or "", "blank: no nurse"),
                    ("plan", "Plan", p.plan.value, accepted(c.value for c in Plan)),
                    ("status", "Status", p.status.value, accepted(c.value for c in PatientStatus)))
            for field, label, value, hint in rows:
                with Horizontal(classes="row"):
                    yield Label(label, classes="field")
                    typed = TypeAheadInput(value, placeholder=hint, id=field, compact=True, select_on_focus=False)
                    typed.select_all()  # typing replaces the current value, even typed before the focus lands
                    yield typed
            yield Static(Text("Reading the nurses…", style="dim"), id="nurses")
            yield Static(Text(f"Plans: {accepted(c.value for c in Plan)}. Status: "
                              f"{accepted(c.value for c in PatientStatus)}.", style="dim"))
            yield Static("", id="check", classes="check")
        yield KeyBar()

    def first_field(self) -> TypeAheadInput:
        return self.query_one("#nurse", TypeAheadInput)

    def _changes(self) -> dict[str, str]:
        """The fields that differ from the record, as the use case takes them; InputError for a bad one."""
        if self._nurses is None:
            raise InputError("reading the clinic's nurses…")
        typed = {f: self.query_one(f"#{f}", Input).value for f in ("nurse", "plan", "status")}
        p = self.patient
        changes = {}
        if typed["nurse"].strip() != (p.nurse_id or ""):
            nurse = pick_nurse(self._nurses, typed["nurse"])
            if (nurse.id if nurse else None) != p.nurse_id:
                changes["nurse"] = nurse.id if nurse else ""  # blank: the use case takes the nurse off
        plan = pick_word(Plan, typed["plan"], "plan")
        if plan is not p.plan:
            changes["plan"] = plan.value
        status = pick_word(PatientStatus, typed["status"], "status")
        if status is not p.status:
            changes["status"] = status.value
        return changes

    @on(Input.Changed)
    def _check(self) -> None:
        check = self.query_one("#check", Static)
        try:
            changes = self._changes()
        except InputError as err:
            check.set_class(True, "refused")
            check.update(Text(f"Not yet: {err}"))
            return
        check.set_class(False, "refused")
        if not changes:
            check.update(Text("No change yet: type a new nurse, plan or status · Tab moves", style="dim"))
            return
        said = ", ".join(f"{k} {v or 'none'}" for k, v in changes.items())
        check.update(Text(f"Ready: {said} · Enter saves"))

    @on(Input.Submitted)
    def _entered(self, event: Input.Submitted) -> None:
        if self.wait_for_nurses(event.input):
            return
        try:
            changes = self._changes()
        except InputError:
            event.input.keep_typing()  # the check line says why
            return
        if changes:
            self._save(event.input)
        else:
            event.input.keep_typing()  # Enter led nowhere: what follows it is typed on here

    def action_save(self) -> None:
        self._save(None)

    def _save(self, field: TypeAheadInput | None) -> None:
        try:
            changes = self._changes()
        except InputError:
            changes = {}
        if self._saving or not changes:
            if field is not None:
                self.set_aside(field)
            return
        self.start_saving(field, "Saving…")
        self._set(changes)

    @work(**STORE_WORK, name="save")
    def _set(self, changes: dict[str, str]) -> None:
        patient = self.app.clinic.set_patient(self.patient.id, **changes)
        self.post_message(self.Done(care_summary(patient), patient))
