"""The rows under the temperature plot: the day numbers, then flow, mucus, LH, hCG, scans and the
chance of a fertile day, each mark at its day's column of the shared `DayColumns`.

A marker row with nothing in the cycle is left out, so the plot keeps its height on a small screen.
"""

from __future__ import annotations

from rich.text import Text

from caseload.presentation.glossary import MUCUS_LEGEND
from caseload.tui.cycle_view import STRIP_ROWS, CycleView
from caseload.tui.day_columns import LABEL_WIDTH, DayColumns

FERTILE_ROW = "fertile"
# P(fertile) as a bar height in eighths; a forecast day below 1/16 is a dot, so the forecast shows.
BAR_LEVELS = "·▁▂▃▄▅▆▇█"
EARLIER, LATER = "◂", "▸"
LEGEND_ITEMS = {
    "flow": "flow ▁▃▅▇ spotting to heavy",
    "mucus": MUCUS_LEGEND,
    "LH": "LH + - or level",
    "hCG": "hCG + - or level",
    "scan": "scan: lead follicle mm",
    FERTILE_ROW: "fertile: P(fertile) · under 6%, ▁ to █ 100%",
}


def bar(p_fertile: float) -> str:
    return BAR_LEVELS[max(0, min(len(BAR_LEVELS) - 1, round(p_fertile * (len(BAR_LEVELS) - 1))))]


def row_marks(view: CycleView) -> dict[str, dict[int, str]]:
    """The rows drawn for `view`, in order, each cycle day -> mark: the rows with a mark in the cycle."""
    rows = {row: view.strip.get(row, {}) for row in STRIP_ROWS}
    rows[FERTILE_ROW] = {day: bar(p) for day, p in view.fertile}
    return {row: marks for row, marks in rows.items() if marks}


def _line(label: str, columns: DayColumns, label_style: str = "bold") -> Text:
    line = Text(label.ljust(LABEL_WIDTH)[:LABEL_WIDTH], style=label_style, no_wrap=True, end="")
    line.append(" " * (columns.shown * columns.width))
    return line


def _put(line: Text, column: int, text: str, style: str = "") -> None:
    """Write `text` over `line` from `column` on (the line is already as wide as the window)."""
    line.plain = line.plain[:column] + text + line.plain[column + len(text):]
    if style:
        line.stylize(style, column, column + len(text))


def day_line(view: CycleView, columns: DayColumns) -> Text:
    """The day numbers: today always, then day 1 and every day whose number leaves a space before
    the next number shown; arrows say when days lie outside the window."""
    line = _line("day", columns, label_style="dim")
    taken: list[tuple[int, int]] = []

    def place(day: int, style: str) -> None:
        column = columns.column(day)
        if column is None:
            return
        text = str(day)
        span = (column, column + len(text) + 1)
        if all(span[1] <= a or b <= span[0] for a, b in taken):
            taken.append(span)
            _put(line, column, text, style)

    if view.today_day is not None:
        place(view.today_day, "bold reverse")
    step = next(k for k in range(1, columns.days + 1) if k * columns.width >= len(str(columns.last)) + 1)
    for day in range(columns.first, columns.last + 1):
        if day == 1 or day % step == 0:
            place(day, "dim")
    if columns.earlier_hidden:
        _put(line, LABEL_WIDTH - 1, EARLIER, "bold")
    if columns.later_hidden:
        line.append(LATER, style="bold")
    return line


# Marks that fill their day's columns run into the next day's ("dadask"): every other day's is
# underlined, so each mark reads as its own.
TOUCHING_STYLE = "underline"


def _touches(mark: str, day: int, marks: dict[int, str], columns: DayColumns) -> bool:
    """Whether `day`'s mark is drawn underlined: an even day whose full-width mark meets a neighbour's."""
    full = len(mark) >= columns.width
    return day % 2 == 0 and full and (day - 1 in marks or day + 1 in marks)


def marker_lines(view: CycleView, columns: DayColumns) -> list[Text]:
    """The day numbers and one line per marker row, all on `columns`."""
    lines = [day_line(view, columns)]
    for row, marks in row_marks(view).items():
        line = _line(row, columns)
        for day, mark in sorted(marks.items()):
            column = columns.column(day)
            if column is not None:
                _put(line, column, mark[: columns.width], TOUCHING_STYLE if _touches(mark, day, marks, columns) else "")
        lines.append(line)
    return lines


def legend_items(view: CycleView) -> list[str]:
    """The legend of the marker rows drawn for `view`."""
    return [LEGEND_ITEMS[row] for row in row_marks(view)]
