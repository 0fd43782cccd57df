"""What the registration and patient forms share: one Clinic call in a worker, the clinic's nurses
read on opening, one line for a refusal, and the keys typed after the saving Enter sent on to the
screen behind once the form has closed."""

from __future__ import annotations

from typing import Any

from rich.text import Text
from textual.message import Message
from textual.widgets import Static

from caseload.core.model import Staff
from caseload.presentation.safe_text import printable
from caseload.tui.clinic_work import ClinicWork
from caseload.tui.saving import Saved
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.type_ahead import EarlyKeys, TypeAheadInput, replay


def nurses_line(nurses: tuple[Staff, ...]) -> Text:
    """The clinic's active nurses, for the forms that assign one."""
    text = Text("Nurses: ", style="dim")
    for n in nurses:
        text.append(n.id, style="bold").append(f" {printable(n.name)}  ")
    return text.append("(blank: no nurse yet)", style="dim")


class FormDialog(EarlyKeys, ClinicWork, Dialog[None]):
    """A subclass reads in its `read` worker (posting `NursesRead`) and saves in its `save` worker
    (posting `Done`); a failure of either is shown in the `#check` line."""

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

    def start_saving(self, field: TypeAheadInput | None, doing: str) -> None:
        self._saving = True
        self._typed_from = field
        self.query_one("#check", Static).update(Text(doing, style="dim"))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(self.Refused(reason if name == "save" else f"could not read the nurses ({reason})"))

    def on_form_dialog_done(self, message: Done) -> None:
        self.app.post_message(Saved(message.summary, message.result))
        typed_on = self._typed_from.take_held() if self._typed_from else []
        self.dismiss()
        replay(self.app, typed_on)

    def on_form_dialog_refused(self, message: Refused) -> None:
        self._saving = False
        if self._typed_from is not None:
            self._typed_from.drop_held()  # the refusal needs reading before anything else is typed
            self._typed_from = None
        check = self.query_one("#check", Static)
        check.set_class(True, "refused")
        check.update(Text(f"{self.REFUSED}: {message.reason}"))
