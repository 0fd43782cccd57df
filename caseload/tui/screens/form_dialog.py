"""What the registration and patient forms share: one Clinic call in a worker, the clinic's nurses
read on opening, one line for a refusal, and the keys typed after the saving Enter sent on to the
screen behind once the form has closed. An Enter typed before the nurses are read waits for them
(holding what is typed after it) rather than being lost."""

from __future__ import annotations

from typing import Any

from rich.text import Text
from textual import events, work
from textual.message import Message
from textual.widgets import Input, Static

from caseload.core.model import Staff
from caseload.presentation.glossary import not_used
from caseload.presentation.safe_text import printable
from caseload.tui.choices import active_nurses
from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.tui.clinic_work import Saved
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.type_ahead import EarlyKeys, TypeAheadInput, as_typed, replay


def nurses_line(nurses: tuple[Staff, ...]) -> Text:
    """The clinic's active nurses, for the forms that assign one."""
    text = Text("Nurses: ", style="dim")
    for n in nurses:
        text.append(n.id, style="bold").append(f" {printable(n.name)}  ")
    return text.append("(blank: no nurse yet)", style="dim")


class FormDialog(EarlyKeys, ClinicWork, Dialog[None]):
    """The clinic's nurses are read on opening (with the subclass's `proposal`); a subclass saves in
    its `save` worker, posting `Done`; a failure of either is shown in the `#check` line."""

    REFUSED = "Not saved"

    class NursesRead(Message):
        def __init__(self, nurses: tuple[Staff, ...], proposed_id: str = "") -> None:
            super().__init__()
            self.nurses = nurses
            self.proposed_id = proposed_id

    class Done(Message):
        def __init__(self, summary: str, result: Any) -> None:
            super().__init__()
            self.summary = summary
            self.result = result

    class Refused(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def __init__(self) -> None:
        super().__init__()
        self._nurses: tuple[Staff, ...] | None = None  # None until read
        self._saving = False
        self._typed_from: TypeAheadInput | None = None  # the field whose Enter saved: it holds what follows
        self._waiting: TypeAheadInput | None = None  # the field whose Enter came before the nurses were read

    def on_mount(self) -> None:
        self.first_field().focus()
        self._read()
        self._check()

    @work(**STORE_WORK, name="read")
    def _read(self) -> None:
        clinic = self.app.clinic
        self.post_message(self.NursesRead(active_nurses(clinic.staff_list()), self.proposal(clinic)))

    def proposal(self, clinic) -> str:
        """What the form offers once read, besides the nurses (the registration's next id)."""
        return ""

    def offer(self, proposal: str) -> None:
        """Put the proposal read on opening into the form."""

    def _check(self) -> None:
        """Say in the `#check` line what is wrong or ready (on each change)."""
        raise NotImplementedError

    def on_form_dialog_nurses_read(self, message: NursesRead) -> None:
        self._nurses = message.nurses
        self.query_one("#nurses", Static).update(nurses_line(message.nurses))
        self.offer(message.proposed_id)
        self._check()
        if self._waiting is not None:  # that Enter now counts, with the keys held behind it
            field, self._waiting = self._waiting, None
            field.post_message(Input.Submitted(field, field.value))

    def wait_for_nurses(self, field: TypeAheadInput) -> bool:
        """Whether `field`'s Enter must wait until the nurses are read (it is then taken again)."""
        if self._nurses is not None:
            return False
        self._waiting = field
        return True

    def start_saving(self, field: TypeAheadInput | None, doing: str) -> None:
        self._saving = True
        self._typed_from = field
        self.query_one("#check", Static).update(Text(doing, style="dim"))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.Refused(reason if name == "save" else f"could not read the nurses ({reason})"))

    def on_form_dialog_done(self, message: Done) -> None:
        typed_on = self._typed_from.take_held() if self._typed_from else []
        self.dismiss()
        self.saved(message.summary, message.result, typed_on)

    def saved(self, summary: str, result: Any, typed_on: list[events.Key]) -> None:
        """Saved and closed: the app is told, and the keys typed after the last Enter go to what is behind."""
        self.app.post_message(Saved(summary, result))
        replay(self.app, typed_on)

    def on_form_dialog_refused(self, message: Refused) -> None:
        self._saving = False
        check = self.query_one("#check", Static)
        check.set_class(True, "refused")
        check.update(Text(f"{self.REFUSED}: {message.reason}"))
        if self._typed_from is not None:
            self.set_aside(self._typed_from)  # the refusal needs reading before anything else is typed
            self._typed_from = None

    def set_aside(self, field: TypeAheadInput) -> None:
        """Enter led to a line that needs reading first: the keys typed after it are not used, and the
        check line names them below what it says."""
        keys = field.drop_held()
        if keys:
            check = self.query_one("#check", Static)
            check.update(Text(f"{check.content}\n{not_used(as_typed(keys))}"))
