"""A patient's record made to travel: the referral pack (PDF or HTML) or the FHIR R4 bundle."""

from __future__ import annotations

from datetime import date
from pathlib import Path

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Label, Select, Static

from caseload.application.clinic import Clinic
from caseload.application.errors import InputError
from caseload.application.referral import PAPERS
from caseload.exports import fhir, pack_files
from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.presentation.safe_text import printable
from caseload.tui.file_messages import FileRefused, FileWritten, kept_if_there
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.key_bar import KeyBar

FORMATS = [("referral pack, PDF", "pdf"), ("referral pack, HTML", "html"), ("FHIR R4 bundle, JSON", "json")]
DEFAULT_CYCLES = "3"


def default_target(patient_id: str, today: date, fmt: str) -> Path:
    stem = "fhir" if fmt == "json" else "referral"
    return Path.home() / f"{stem}-{patient_id}-{today.isoformat()}.{fmt}"


def write_chosen(clinic: Clinic, patient_id: str, fmt: str, out: Path, cycles: str, paper: str) -> Path:
    """The chosen file, through the same Clinic calls as the commands `pack` and `fhir`."""
    if fmt == "json":
        return clinic.fhir_export(patient_id, out, None, False, False, fhir.write_bundle)[0]
    if not cycles.isdigit():
        raise InputError(f"cycles '{cycles}' not understood: give a whole number, 1 or more")
    return clinic.referral_pack(patient_id, out, int(cycles), paper, False, pack_files.render)


class ReferralDialog(ClinicWork, Dialog[None]):
    """Enter in a field writes the file; Esc closes. Offered to nurses and up."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss", "Close", id="referral.close")]

    def __init__(self, patient_id: str) -> None:
        super().__init__()
        self.patient_id = patient_id

    def compose(self) -> ComposeResult:
        today = self.app.clinic.as_of
        with Vertical(classes="dialog"):
            yield Label(f"Referral pack or FHIR export of {self.patient_id}", classes="dialog-title")
            yield Label("What")
            yield Select(FORMATS, value="pdf", allow_blank=False, id="format", compact=True)
            yield Label("Write to")
            yield Input(str(default_target(self.patient_id, today, "pdf")), id="out", compact=True)
            yield Label("Cycles to chart, paper")
            yield Input(DEFAULT_CYCLES, id="cycles", compact=True)
            yield Select([(p, p) for p in PAPERS], value=PAPERS[0], allow_blank=False, id="paper", compact=True)
            yield Static("Enter in a field writes the file (owner-only; an existing file is kept).", id="check",
                         classes="check")
        yield KeyBar()

    @on(Select.Changed, "#format")
    def _format(self, event: Select.Changed) -> None:
        self.query_one("#out", Input).value = str(default_target(self.patient_id, self.app.clinic.as_of, str(event.value)))

    @on(Input.Submitted)
    def _write(self) -> None:
        self.query_one("#check", Static).update(Text("Writing…", style="dim"))
        self._write_file(str(self.query_one("#format", Select).value), Path(self.query_one("#out", Input).value).expanduser(),
                         self.query_one("#cycles", Input).value.strip(), str(self.query_one("#paper", Select).value))

    @work(**STORE_WORK, name="referral")
    def _write_file(self, fmt: str, out: Path, cycles: str, paper: str) -> None:
        with kept_if_there():
            self.post_message(FileWritten(write_chosen(self.app.clinic, self.patient_id, fmt, out, cycles, paper)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(FileRefused(reason))

    def on_file_written(self, message: FileWritten) -> None:
        self.notify(f"Written to {printable(message.path)}", markup=False)
        self.dismiss()

    def on_file_refused(self, message: FileRefused) -> None:
        self.query_one("#check", Static).update(Text(f"Not written: {printable(message.reason)}", style="bold"))
