"""The morning list: one row per patient under care, in the triage order the service gives."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from rich.text import Text
from textual.binding import Binding
from textual.widgets import DataTable

from caseload.services.caseload import CaseloadLine
from caseload.tui.words import alert_label, literal, phase_label, short_day

NEXT_SHORT = {"window start": "window", "period": "period", "trigger size": "trigger", "pregnancy test": "hCG test"}
GAP_WARN_DAYS = 3  # days without an entry worth a glance (the logging-gap default)


@dataclass(frozen=True)
class Column:
    key: str
    label: str
    width: int  # 0: takes the room the others leave


COLUMNS = (
    Column("patient", "Patient", 0),
    Column("cd", " CD", 4),
    Column("where", "Where", 13),
    Column("alert", "Most urgent alert", 25),
    Column("next", "Next", 15),
    Column("last", "Last", 4),
    Column("plan", "Plan", 20),
    Column("nurse", "Nurse", 10),
)
# The last columns are for wide terminals; at 80 columns they are off to the right.
NARROW_COLUMNS = 6
MIN_PATIENT_WIDTH = 16


def patient_cell(line: CaseloadLine) -> Text:
    text = Text(line.patient.id + " ", style="bold", no_wrap=True)
    text.append_text(literal(line.patient.name))
    return text


def alert_cell(line: CaseloadLine, tone) -> Text:
    top = line.top_alert
    if top is None:
        return Text("-", style="dim")
    text = Text(f"{top.severity.value} ", style=tone(top.severity))
    text.append(alert_label(top.kind))
    if len(line.alerts) > 1:
        text.append(f" +{len(line.alerts) - 1}", style="dim")
    return text


def next_cell(line: CaseloadLine) -> Text:
    s = line.snapshot
    if s is None or s.next_event is None:
        return Text("-", style="dim")
    return Text(f"{NEXT_SHORT.get(s.next_event, s.next_event)} {short_day(s.next_event_day)}")


def last_cell(line: CaseloadLine) -> Text:
    days = line.days_since_entry
    if days is None:
        return Text("-", style="dim")
    return Text(f"{days}d", style="bold" if days >= GAP_WARN_DAYS else "")


def row_cells(line: CaseloadLine, tone) -> list[Text]:
    s = line.snapshot
    return [
        patient_cell(line),
        Text(f"{'-' if line.cycle_day is None else line.cycle_day:>3}"),
        Text(phase_label(s.phase if s else None)),
        alert_cell(line, tone),
        next_cell(line),
        last_cell(line),
        Text(line.patient.plan.value),
        literal(line.patient.nurse_id or "-"),
    ]


def fitted(cell: Text, width: int) -> Text:
    """The cell cut to its column with one blank column after it (the table has no padding)."""
    cell = cell.copy()
    cell.truncate(width - 1, overflow="ellipsis")
    cell.no_wrap = True
    return cell


class CaseloadTable(DataTable):
    """Rows keyed by patient id. Redraws keep the cursor on the same patient."""

    BINDINGS = [Binding("enter", "select_cursor", "Open", id="caseload.open")]

    def __init__(self, **kwargs):
        super().__init__(cursor_type="row", zebra_stripes=True, cell_padding=0, **kwargs)
        self._lines: tuple[CaseloadLine, ...] = ()
        self._today: date | None = None
        self._drawn_width = 0

    @property
    def lines(self) -> tuple[CaseloadLine, ...]:
        return self._lines

    def show(self, lines: tuple[CaseloadLine, ...]) -> None:
        self._lines = lines
        self._redraw()

    def current_patient_id(self) -> str | None:
        if not self.row_count:
            return None
        return self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value

    def on_resize(self) -> None:
        if self.size.width != self._drawn_width:
            self._redraw()

    def _widths(self) -> list[int]:
        fixed = sum(c.width for c in COLUMNS[1:NARROW_COLUMNS])
        room = max(MIN_PATIENT_WIDTH, self.size.width - fixed - 1)
        return [room if c.width == 0 else c.width for c in COLUMNS]

    def _redraw(self) -> None:
        keep = self.current_patient_id()
        self._drawn_width = self.size.width
        widths = self._widths()
        self.clear(columns=True)
        for column, width in zip(COLUMNS, widths):
            self.add_column(Text(column.label, style="bold"), width=width, key=column.key)
        tone = self.app.tone
        for line in self._lines:
            cells = [fitted(c, w) for c, w in zip(row_cells(line, tone), widths)]
            self.add_row(*cells, key=line.patient.id)
        if keep is not None and keep in {line.patient.id for line in self._lines}:
            self.move_cursor(row=self.get_row_index(keep), animate=False)
