"""A patient's entries, newest first, with every correction visible.

A corrected entry stays on the list struck through, with who corrected it and why; a void stays
with its reason. Each row says who logged it and when it was recorded; Enter shows one in full.
Amend and void are the record screen's keys, so the dialog opens before the keys typed after them
are read.
"""

from __future__ import annotations

from rich.text import Text
from textual.binding import Binding
from textual.message import Message
from textual.widgets import DataTable

from caseload.core.model import Entry, Kind
from caseload.presentation.glossary import kind_label
from caseload.presentation.days import logged_at, short_day
from caseload.presentation.safe_text import literal

# Who logged an entry and when it was recorded come before the often empty status and flags, so
# they are in view at 80 columns.
COLUMNS = ("#", "Day", "Kind", "Value", "Time", "By", "Logged", "Status", "Flags", "Note")
VALUE_WIDTH = 18
NOTE_WIDTH = 40


def status_cell(entry: Entry, by_id: dict[int, Entry]) -> Text:
    if entry.voided_reason is not None:
        text = Text("void: ", style="bold")
        return text.append_text(literal(entry.voided_reason))
    if entry.superseded_by is not None:
        newer = by_id.get(entry.superseded_by)
        text = Text(f"replaced by #{entry.superseded_by}", style="bold")
        if newer is not None:
            text.append_text(literal(f" ({newer.by}: {newer.amend_reason or ''})"))
        return text
    if entry.supersedes is not None:
        return Text(f"corrects #{entry.supersedes}", style="dim")
    return Text("")


def entry_cells(entry: Entry, by_id: dict[int, Entry], zone: str) -> list[Text]:
    gone = "strike dim" if not entry.current else ""
    value = entry.value.display() + (" C" if entry.kind is Kind.TEMP else "")
    cells = [
        Text(str(entry.id), justify="right"),
        Text(short_day(entry.day)),
        Text(kind_label(entry.kind)),
        clipped(literal(value), VALUE_WIDTH),
    ]
    for cell in cells:
        cell.stylize(gone)
    return cells + [
        Text(entry.time or ""),
        literal(entry.by),
        Text(logged_at(entry.at, zone)),
        status_cell(entry, by_id),
        Text(",".join(entry.flags)),
        clipped(literal(entry.note), NOTE_WIDTH),
    ]


def clipped(text: Text, width: int) -> Text:
    text.truncate(width, overflow="ellipsis")
    return text


class EntriesTable(DataTable):
    """Rows keyed by entry id."""

    BINDINGS = [
        Binding("enter", "details", "Details", id="entries.details"),
    ]

    class DetailsAsked(Message):
        def __init__(self, entry: Entry) -> None:
            super().__init__()
            self.entry = entry

    def __init__(self, **kwargs):
        super().__init__(cursor_type="row", zebra_stripes=True, **kwargs)
        self._by_id: dict[int, Entry] = {}

    def show(self, entries: tuple[Entry, ...]) -> None:
        keep = self.current_entry()
        self._by_id = {e.id: e for e in entries}
        self.clear(columns=True)
        for label in COLUMNS:
            self.add_column(Text(label, style="bold"), key=label)
        for entry in sorted(entries, key=lambda e: (e.day, e.id), reverse=True):
            self.add_row(*entry_cells(entry, self._by_id, self.app.clinic.timezone), key=str(entry.id))
        if keep is not None and keep.id in self._by_id:
            self.move_cursor(row=self.get_row_index(str(keep.id)), animate=False)

    def current_entry(self) -> Entry | None:
        if not self.row_count:
            return None
        key = self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value
        return self._by_id.get(int(key))

    def on_data_table_row_highlighted(self) -> None:
        self.refresh_bindings()  # the record's amend and void depend on the highlighted entry

    def action_details(self) -> None:
        entry = self.current_entry()
        if entry is not None:
            self.post_message(self.DetailsAsked(entry))
