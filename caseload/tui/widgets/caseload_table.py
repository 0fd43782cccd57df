"""The morning list: one row per patient under care, in the triage order the Clinic gives.

A virtual table: it holds the lines and draws only the rows in view (Textual's line API), so a
caseload of 10,000 costs no more to show, scroll or filter than a screenful; nothing is built per row
until it is on screen.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

from rich.cells import cell_len
from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.geometry import Size
from textual.message import Message
from textual.scroll_view import ScrollView
from textual.strip import Strip

from caseload.application.caseload_view import CaseloadLine
from caseload.presentation.glossary import alert_short, more_alerts, next_event_short, phase_short
from caseload.presentation.days import short_day
from caseload.presentation.safe_text import literal, printable

GAP_WARN_DAYS = 3  # days without an entry worth a glance (the logging-gap default)


@dataclass(frozen=True)
class Column:
    key: str
    label: str
    width: int  # 0: takes the room the others leave


PATIENT = Column("patient", "Patient", 0)
NEXT = Column("next", "Next", 15)
COLUMNS = (
    PATIENT,
    Column("cd", " CD", 4),
    Column("phase", "Phase", 13),
    Column("alert", "Most urgent alert", 0),
    NEXT,
    Column("last", "Last", 5),
    Column("plan", "Plan", 20),
    Column("nurse", "Nurse", 10),
)
WIDE_KEYS = ("plan", "nurse")  # from WIDE_FROM columns; a narrower terminal leaves them out
WIDE_FROM = 120
MIN_ALERT_WIDTH = 25  # "today long bleed +1 more" and the blank after it
MAX_ALERT_WIDTH = 36
MIN_PATIENT_WIDTH = 16
MAX_PATIENT_WIDTH = 40
SCROLLBAR = 1


def patient_cell(line: CaseloadLine) -> Text:
    text = Text(line.patient.id + " ", style="bold", no_wrap=True)
    text.append_text(literal(line.patient.name))
    return text


def patient_room(line: CaseloadLine) -> int:
    """The width the patient cell needs, with its blank after (what `patient_cell` draws, measured
    without building it: a large caseload measures every line on each redraw)."""
    return len(line.patient.id) + 1 + _name_width(line.patient.name) + 1


@lru_cache(maxsize=65536)
def _name_width(name: str) -> int:
    return cell_len(printable(name))


def alert_cell(line: CaseloadLine, tone, width: int) -> Text:
    """Severity, the most pressing alert and how many more, in a column `width` wide: a long label
    is cut, never the count."""
    top = line.top_alert
    if top is None:
        return Text("-", style="dim")
    more = f" {more_alerts(len(line.alerts) - 1)}" if len(line.alerts) > 1 else ""
    severity = f"{top.severity.value} "
    room = width - 1 - len(severity) - len(more)
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


def row_cells(line: CaseloadLine, tone, alert_width: int) -> dict[str, Text]:
    s = line.snapshot
    return {
        "patient": patient_cell(line),
        "cd": Text(f"{'-' if line.cycle_day is None else line.cycle_day:>3}"),
        "phase": Text(phase_short(s.phase if s else None)),
        "alert": alert_cell(line, tone, alert_width),
        "next": next_cell(line),
        "last": last_cell(line),
        "plan": Text(line.patient.plan.value),
        "nurse": literal(line.patient.nurse_id or "-"),
    }


def fitted(cell: Text, width: int) -> Text:
    """The cell cut to its column with one blank column after it (the table has no padding)."""
    cell = cell.copy()
    cell.truncate(width - 1, overflow="ellipsis", pad=True)
    cell.pad_right(1)
    cell.no_wrap = True
    return cell


def layout(width: int, patient_room: int) -> list[tuple[Column, int]]:
    """The columns for a table `width` cells wide, with their widths. The patient column gets the
    room its longest id and name need (within limits) before the alert column takes the rest; plan
    and nurse come in from WIDE_FROM columns. Names and the alert come before the next expected
    event (the record has it): on a narrow terminal the next column goes before either is cut."""
    columns = [c for c in COLUMNS if width >= WIDE_FROM or c.key not in WIDE_KEYS]
    room = width - SCROLLBAR - sum(c.width for c in columns)
    wanted = min(patient_room, MAX_PATIENT_WIDTH) + MIN_ALERT_WIDTH
    if room < wanted <= room + NEXT.width:
        columns.remove(NEXT)
        room += NEXT.width
    patient = max(MIN_PATIENT_WIDTH, min(patient_room, MAX_PATIENT_WIDTH, room - MIN_ALERT_WIDTH))
    alert = max(MIN_ALERT_WIDTH, min(room - patient, MAX_ALERT_WIDTH))
    sizes = {PATIENT.key: patient, "alert": alert}
    return [(c, sizes.get(c.key, c.width)) for c in columns]


class CaseloadTable(ScrollView, can_focus=True):
    """Rows keyed by patient id, a header that stays put, a cursor that stays on its patient
    when the lines change under it."""

    COMPONENT_CLASSES = {"caseload-table--header", "caseload-table--even-row", "caseload-table--cursor"}
    # Priority bindings: taken as they arrive, in the order typed, as the list screen's other keys
    # are, so a key typed straight after an arrow acts on the row it moved to, and one typed after
    # Enter on the record it opens (the screen holds it until that record is mounted). Only while the table has the focus (a priority binding of a
    # widget counts only in the focus chain): in a text field they are that field's.
    BINDINGS = [
        Binding("enter", "screen.open_highlighted", "Open", id="caseload.open", priority=True),
        Binding("up", "scroll_up", "Up", show=False, priority=True, id="caseload.move"),
        Binding("down", "scroll_down", "Down", show=False, priority=True, id="caseload.move"),
        Binding("pageup", "page_up", "Page up", show=False, priority=True, id="caseload.move"),
        Binding("pagedown", "page_down", "Page down", show=False, priority=True, id="caseload.move"),
        Binding("home", "scroll_home", "First", show=False, priority=True, id="caseload.move"),
        Binding("end", "scroll_end", "Last", show=False, priority=True, id="caseload.move"),
    ]

    class RowSelected(Message):
        """Enter (or a click) on a row: open that patient."""

        def __init__(self, patient_id: str) -> None:
            super().__init__()
            self.patient_id = patient_id

    def __init__(self, **kwargs):
        super().__init__(**kwargs)
        self._lines: tuple[CaseloadLine, ...] = ()
        self._cursor = 0
        self._patient_room = MIN_PATIENT_WIDTH
        self._fitted: tuple[CaseloadLine, ...] | None = None  # the lines the patient column was fitted to

    # --- what it shows

    @property
    def lines(self) -> tuple[CaseloadLine, ...]:
        return self._lines

    @property
    def row_count(self) -> int:
        return len(self._lines)

    @property
    def patient_ids(self) -> list[str]:
        return [line.patient.id for line in self._lines]

    @property
    def cursor_row(self) -> int:
        return self._cursor

    def show(self, lines: tuple[CaseloadLine, ...], fit: tuple[CaseloadLine, ...] | None = None) -> None:
        """Show `lines`; the cursor stays on its patient while she is among them. The patient column
        fits the names of `fit` (by default `lines`): given the whole caseload, the columns stay put
        while a search or a filter narrows it."""
        keep = self.current_patient_id()
        self._lines = lines
        fit = lines if fit is None else fit
        if fit is not self._fitted:
            self._fitted = fit
            self._patient_room = max((patient_room(line) for line in fit), default=0)
        ids = {line.patient.id: i for i, line in enumerate(lines)} if keep is not None else {}
        self._cursor = ids.get(keep, min(self._cursor, max(len(lines) - 1, 0)))
        self.virtual_size = Size(self._width(), len(lines) + 1)
        self._scroll_to_cursor()
        self.refresh()

    def current_patient_id(self) -> str | None:
        return self._lines[self._cursor].patient.id if self._lines else None

    def get_cell(self, patient_id: str, column: str) -> Text:
        """The text of one cell as drawn at the current width, without the blanks that pad it."""
        (line,) = [line for line in self._lines if line.patient.id == patient_id]
        widths = {c.key: w for c, w in self._layout()}
        cell = fitted(row_cells(line, self.app.tone, widths["alert"])[column], widths[column])
        cell.rstrip()
        return cell

    def get_row_index(self, patient_id: str) -> int:
        """Where a patient's row is among the lines shown."""
        return self.patient_ids.index(patient_id)

    def column_keys(self) -> list[str]:
        return [c.key for c, _ in self._layout()]

    def move_cursor(self, row: int) -> None:
        if self._lines:
            self._cursor = max(0, min(row, len(self._lines) - 1))
            self._scroll_to_cursor()
            self.refresh()

    # --- keys and mouse: the scrolling keys a ScrollView binds move the cursor here (the wheel still scrolls)

    def action_scroll_up(self) -> None:
        self.move_cursor(self._cursor - 1)

    def action_scroll_down(self) -> None:
        self.move_cursor(self._cursor + 1)

    def action_page_up(self) -> None:
        self.move_cursor(self._cursor - max(1, self._rows_in_view() - 1))

    def action_page_down(self) -> None:
        self.move_cursor(self._cursor + max(1, self._rows_in_view() - 1))

    def action_scroll_home(self) -> None:
        self.move_cursor(0)

    def action_scroll_end(self) -> None:
        self.move_cursor(len(self._lines) - 1)

    def action_select_cursor(self) -> None:
        if self._lines:
            self.post_message(self.RowSelected(self._lines[self._cursor].patient.id))

    def on_click(self, event: events.Click) -> None:
        row = int(self.scroll_offset.y) + event.y - 1
        if event.y >= 1 and 0 <= row < len(self._lines):
            self.move_cursor(row)
            self.action_select_cursor()

    def on_resize(self) -> None:
        self.virtual_size = Size(self._width(), len(self._lines) + 1)
        self._scroll_to_cursor()
        self.refresh()

    def on_focus(self) -> None:
        self.refresh()

    def on_blur(self) -> None:
        self.refresh()

    # --- drawing

    def _width(self) -> int:
        return max(self.size.width - SCROLLBAR, 0)

    def _layout(self) -> list[tuple[Column, int]]:
        return layout(self.size.width, self._patient_room)

    def _rows_in_view(self) -> int:
        return max(self.size.height - 1, 1)  # the header takes the first line

    def _scroll_to_cursor(self) -> None:
        top, view = int(self.scroll_offset.y), self._rows_in_view()
        if self._cursor < top:
            self.scroll_to(y=self._cursor, animate=False, immediate=True)
        elif self._cursor >= top + view:
            self.scroll_to(y=self._cursor - view + 1, animate=False, immediate=True)

    def render_line(self, y: int) -> Strip:
        width = self._width()
        if y == 0:
            style = self.get_component_rich_style("caseload-table--header")
            text = Text(no_wrap=True, end="")
            for column, size in self._layout():
                text.append_text(fitted(Text(column.label), size))
            return self._strip(text, width, style)
        index = int(self.scroll_offset.y) + y - 1
        if index >= len(self._lines):
            return Strip.blank(width, self.rich_style)
        if index == self._cursor:
            style = self.get_component_rich_style("caseload-table--cursor")
        elif index % 2:
            style = self.get_component_rich_style("caseload-table--even-row")
        else:
            style = self.rich_style
        columns = self._layout()
        cells = row_cells(self._lines[index], self.app.tone, next(w for c, w in columns if c.key == "alert"))
        text = Text(no_wrap=True, end="")
        for column, size in columns:
            text.append_text(fitted(cells[column.key], size))
        return self._strip(text, width, style)

    def _strip(self, text: Text, width: int, style: Style) -> Strip:
        """The row's text over the row's style (a cell's own style wins), filling `width`."""
        return Strip(text.render(self.app.console)).adjust_cell_length(width).apply_style(style)
