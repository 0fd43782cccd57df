"""The morning list: one row per patient under care, in the triage order the Clinic gives."""

from __future__ import annotations

from dataclasses import dataclass
from rich.text import Text
from textual.binding import Binding
from textual.widgets import DataTable

from caseload.application.caseload_view import CaseloadLine
from caseload.presentation.glossary import alert_short, more_alerts, next_event_short, phase_short
from caseload.presentation.days import short_day
from caseload.tui.rich_text import literal

GAP_WARN_DAYS = 3  # days without an entry worth a glance (the logging-gap default)


@dataclass(frozen=True)
class Column:
    key: str
    label: str
    width: int  # 0: takes the room the others leave


COLUMNS = (
    Column("patient", "Patient", 0),
    Column("cd", " CD", 4),
    Column("where", "Phase", 13),
    Column("alert", "Most urgent alert", 25),
    Column("next", "Next", 15),
    Column("last", "Last", 5),
    Column("plan", "Plan", 20),
    Column("nurse", "Nurse", 12),
)
# The last columns are for wide terminals; at 80 columns they are off to the right.
NARROW_COLUMNS = 6
MIN_PATIENT_WIDTH = 16
WIDE_PATIENT_WIDTH = 30
MAX_PATIENT_WIDTH = 40


def patient_cell(line: CaseloadLine) -> Text:
    text = Text(line.patient.id + " ", style="bold", no_wrap=True)
    text.append_text(literal(line.patient.name))
    return text


def alert_cell(line: CaseloadLine, tone) -> Text:
    """Severity, the most pressing alert and how many more: a long label is cut, never the count."""
    top = line.top_alert
    if top is None:
        return Text("-", style="dim")
    more = f" {more_alerts(len(line.alerts) - 1)}" if len(line.alerts) > 1 else ""
    severity = f"{top.severity.value} "
    room = next(c.width for c in COLUMNS if c.key == "alert") - 1 - len(severity) - len(more)
    label = Text(alert_short(top.kind))
    label.truncate(room, overflow="ellipsis")
    return Text(severity, style=tone(top.severity)).append_text(label).append(more, style="dim")


def next_cell(line: CaseloadLine) -> Text:
    s = line.snapshot
    if s is None or s.next_event is None:
        return Text("-", style="dim")
    return Text(f"{next_event_short(s.next_event)} {short_day(s.next_event_day)}")


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
        Text(phase_short(s.phase if s else None)),
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
        self._drawn_width = 0

    @property
    def lines(self) -> tuple[CaseloadLine, ...]:
        return self._lines

    def show(self, lines: tuple[CaseloadLine, ...]) -> None:
        """Same patients in the same order: only the changed rows are redrawn (a full redraw of a
        large caseload takes long enough to feel); anything else redraws the table."""
        before, self._lines = self._lines, lines
        same_rows = [b.patient.id for b in before] == [line.patient.id for line in lines]
        if same_rows and self.row_count == len(lines) and self._drawn_width == self.size.width:
            self._update_rows(before, lines)
        else:
            self._redraw()

    def current_patient_id(self) -> str | None:
        if not self.row_count:
            return None
        return self.coordinate_to_cell_key(self.cursor_coordinate).row_key.value

    def on_resize(self) -> None:
        if self.size.width != self._drawn_width:
            self._redraw()

    def _layout(self) -> list[tuple[Column, int]]:
        """The columns that fit, with widths: the patient column takes the room the others leave,
        and the wide-terminal columns come in once it can still be WIDE_PATIENT_WIDTH."""
        columns = COLUMNS
        room = self.size.width - 1 - sum(c.width for c in COLUMNS[1:])
        if room < WIDE_PATIENT_WIDTH:
            columns = COLUMNS[:NARROW_COLUMNS]
            room = max(MIN_PATIENT_WIDTH, self.size.width - 1 - sum(c.width for c in columns[1:]))
        room = min(room, MAX_PATIENT_WIDTH)
        return [(c, room if c.width == 0 else c.width) for c in columns]

    def _update_rows(self, before: tuple[CaseloadLine, ...], after: tuple[CaseloadLine, ...]) -> None:
        layout = self._layout()
        for old, new in zip(before, after):
            if old == new:
                continue
            for cell, (column, width) in zip(row_cells(new, self.app.tone), layout):
                self.update_cell(new.patient.id, column.key, fitted(cell, width))

    def _redraw(self) -> None:
        keep = self.current_patient_id()
        self._drawn_width = self.size.width
        layout = self._layout()
        self.clear(columns=True)
        for column, width in layout:
            self.add_column(Text(column.label, style="bold"), width=width, key=column.key)
        tone = self.app.tone
        for line in self._lines:
            cells = [fitted(c, w) for c, (_, w) in zip(row_cells(line, tone), layout)]
            self.add_row(*cells, key=line.patient.id)
        if keep is not None and keep in {line.patient.id for line in self._lines}:
            self.move_cursor(row=self.get_row_index(keep), animate=False)
