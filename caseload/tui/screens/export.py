"""Supervisors' export of the weekly summary (offered when this installation has the report service)."""

from __future__ import annotations

import importlib
from datetime import date
from pathlib import Path

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.screen import ModalScreen
from textual.widgets import Checkbox, Footer, Input, Label, Select, Static


FORMATS = ("csv", "xlsx", "html", "json")


def export_available() -> bool:
    try:
        importlib.import_module("caseload.services.reports")
    except ModuleNotFoundError:
        return False
    return True


def iso_week(day: date) -> str:
    year, week, _ = day.isocalendar()
    return f"{year}-W{week:02d}"


class ExportDialog(ModalScreen[None]):
    """Week, format, file and de-identification; Enter exports, Esc closes."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [Binding("escape", "dismiss", "Close", id="export.close")]

    class Exported(Message):
        def __init__(self, path: Path) -> None:
            super().__init__()
            self.path = path

    class Failed(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def compose(self) -> ComposeResult:
        week = iso_week(self.app.gate.today)
        with Vertical(classes="dialog"):
            yield Label("Export the weekly summary", classes="dialog-title")
            yield Label("Week (YYYY-Www)")
            yield Input(week, id="week", compact=True)
            yield Label("Format")
            yield Select([(f, f) for f in FORMATS], value="csv", allow_blank=False, id="format", compact=True)
            yield Label("File")
            yield Input(str(Path.home() / f"caseload-summary-{week}.csv"), id="out", compact=True)
            yield Checkbox("De-identify (pseudonyms, no names or birth dates)", value=True, id="deidentify", compact=True)
            yield Static("Enter in a field exports.", id="check", classes="check")
        yield Footer(compact=True)

    @on(Select.Changed, "#format")
    def _format(self, event: Select.Changed) -> None:
        out = self.query_one("#out", Input)
        out.value = str(Path(out.value).with_suffix(f".{event.value}"))

    @on(Input.Submitted)
    def _export(self) -> None:
        reports = importlib.import_module("caseload.services.reports")
        out = Path(self.query_one("#out", Input).value).expanduser()
        self.query_one("#check", Static).update(Text("Exporting…", style="dim"))
        self.app.store_job(
            self, reports.export_summary, self.query_one("#week", Input).value.strip(),
            str(self.query_one("#format", Select).value), out, self.query_one("#deidentify", Checkbox).value,
            reply=self.Exported, refusal=self.Failed,
        )

    def on_export_dialog_exported(self, message: Exported) -> None:
        self.notify(f"Summary written to {message.path}", markup=False)
        self.dismiss()

    def on_export_dialog_failed(self, message: Failed) -> None:
        self.query_one("#check", Static).update(Text(f"Not exported: {message.reason}", style="bold"))
