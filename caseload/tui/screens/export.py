"""Supervisors' export of the weekly summary: week, format, where to, and whether to de-identify."""

from __future__ import annotations

from pathlib import Path

from rich.text import Text
from textual import events, on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import Input, Label, Select, Static

from caseload.tui.clinic_work import STORE_WORK, ClinicWork
from caseload.application.weekly_summary import FOLDER_FORMATS, FORMATS
from caseload.exports.summary_files import write
from caseload.presentation.safe_text import printable
from caseload.tui.file_messages import FileRefused, FileWritten, kept_if_there
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.key_bar import KeyBar

DEFAULT_FORMAT = "xlsx"
PRIVACY = [("pseudonyms (no names or birth dates)", True), ("names and birth dates", False)]


def default_target(week: str, fmt: str) -> Path:
    """A file in the home folder, or a folder for the formats written as several files."""
    name = f"caseload-summary-{week}"
    return Path.home() / (name if fmt in FOLDER_FORMATS else f"{name}.{fmt}")


class ExportDialog(ClinicWork, Dialog[None]):
    """Enter in a field exports; Esc closes. Offered to supervisors and admins only."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss", "Close", id="export.close")]

    def __init__(self) -> None:
        super().__init__()
        self._proposed = ""  # the file name last proposed: while #out still holds it, the user has not edited it
        self._typed_early = False  # text typed before a field had the focus went into the week

    def compose(self) -> ComposeResult:
        week = self.app.clinic.last_complete_week()  # as the CLI: never a week still in progress
        self._proposed = str(default_target(week, DEFAULT_FORMAT))
        with Vertical(classes="dialog"):
            yield Label("Export the weekly summary", classes="dialog-title")
            yield Label("Week (YYYY-Www)")
            yield Input(week, id="week", compact=True)
            yield Label("Format")
            yield Select([(f, f) for f in FORMATS], value=DEFAULT_FORMAT, allow_blank=False, id="format", compact=True)
            yield Label("Write to")
            yield Input(self._proposed, id="out", compact=True)
            yield Label("Patients shown as")
            yield Select(PRIVACY, value=True, allow_blank=False, id="deidentify", compact=True)
            yield Static("Enter in a field exports.", id="check", classes="check")
        yield KeyBar()

    def on_key(self, event: events.Key) -> None:
        """Keys typed straight after `e`, before a field has the focus, are not lost on the dialog:
        Enter exports what is offered, and text replaces the week offered."""
        if self.focused is not None or not (event.is_printable or event.key == "enter"):
            return
        event.stop()
        event.prevent_default()
        if event.key == "enter":
            self._export()
            return
        week = self.query_one("#week", Input)
        week.value = ("" if not self._typed_early else week.value) + event.character
        self._typed_early = True
        self._propose()  # now, not on the Changed message: an Enter typed next exports to its name

    @on(Input.Changed, "#week")
    @on(Select.Changed, "#format")
    def _propose(self) -> None:
        """The proposed file name follows the week and the format, until the user types a name of her own."""
        out = self.query_one("#out", Input)
        if out.value != self._proposed:
            return
        week = self.query_one("#week", Input).value.strip()
        self._proposed = out.value = str(default_target(week, str(self.query_one("#format", Select).value)))

    @on(Input.Submitted)
    def _export(self) -> None:
        self.query_one("#check", Static).update(Text("Exporting…", style="dim"))
        self._write_summary(self.query_one("#week", Input).value.strip(), str(self.query_one("#format", Select).value),
                            Path(self.query_one("#out", Input).value).expanduser(),
                            bool(self.query_one("#deidentify", Select).value))

    @work(**STORE_WORK, name="export")
    def _write_summary(self, week: str, fmt: str, out: Path, deidentify: bool) -> None:
        with kept_if_there():
            self.post_message(FileWritten(self.app.clinic.export_summary(week, fmt, out, deidentify, write)))

    def work_failed(self, name: str, reason: str) -> None:
        self.post_message(FileRefused(reason))

    def on_file_written(self, message: FileWritten) -> None:
        self.notify(f"Summary written to {printable(message.path)}", markup=False)
        self.dismiss()

    def on_file_refused(self, message: FileRefused) -> None:
        self.query_one("#check", Static).update(Text(f"Not exported: {printable(message.reason)}", style="bold"))
