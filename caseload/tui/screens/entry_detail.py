"""One entry in full: the reading, who logged it and when it was recorded, its corrections and its note."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.widgets import Label, Static

from caseload.core.model import Entry, Kind
from caseload.presentation.days import logged_at, long_day
from caseload.presentation.glossary import kind_label
from caseload.presentation.safe_text import printable
from caseload.tui.widgets.entries_table import status_cell
from caseload.tui.screens.dialog import Dialog
from caseload.tui.widgets.key_bar import KeyBar


def entry_text(entry: Entry, by_id: dict[int, Entry], zone: str) -> Text:
    """Every field of an entry, one per line, user text shown as typed and wrapped, never cut."""
    text = Text()

    def line(label: str, value: Text | str) -> None:
        text.append(f"{label}: ", style="bold")
        text.append_text(value if isinstance(value, Text) else Text(printable(value)))
        text.append("\n")

    value = entry.value.display() + (" C" if entry.kind is Kind.TEMP else "")
    line("Day", long_day(entry.day) + (f" at {entry.time}" if entry.time else ""))
    line("Note" if entry.kind is Kind.NOTE else "Value", value)
    if entry.flags:
        line("Flags", ", ".join(entry.flags))
    line("Logged by", entry.by or "-")
    line("Recorded", logged_at(entry.at, zone) + f" ({zone})")
    status = status_cell(entry, by_id)
    line("Status", status if status.plain else Text("counts"))
    if entry.supersedes is not None and entry.amend_reason:
        line("Why corrected", entry.amend_reason)
    if entry.note:
        line("Note", entry.note)
    text.rstrip()
    return text


class EntryDialog(Dialog[None]):
    """Opened with Enter on the record's entries table; Esc or Enter closes it."""

    CSS_PATH = "dialogs.tcss"
    BINDINGS = [
        Binding("escape,enter", "dismiss", "Close", id="entry.close"),
    ]

    def __init__(self, entry: Entry, by_id: dict[int, Entry]) -> None:
        super().__init__()
        self.entry = entry
        self._by_id = by_id

    def compose(self) -> ComposeResult:
        e = self.entry
        with Vertical(classes="dialog"):
            yield Label(f"Entry #{e.id} of {e.patient_id}: {kind_label(e.kind)}", classes="dialog-title")
            with VerticalScroll(id="entry-scroll"):
                yield Static(entry_text(e, self._by_id, self.app.clinic.timezone), id="entry-text")
        yield KeyBar()
