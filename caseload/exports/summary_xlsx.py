"""The summary as a workbook: one sheet per section, its tables one under another with their
charts beside them, typed cells (numbers, dates, times), fitted column widths and native bar
charts. Each sheet prints on A4 landscape, one page wide, with its title and caption on every page."""

from __future__ import annotations

import io
import math
from dataclasses import dataclass
from datetime import date, datetime, time
from pathlib import Path

import xlsxwriter
from xlsxwriter.workbook import Workbook
from xlsxwriter.worksheet import Worksheet

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import (
    CHARTS, DATE, DATETIME, FLOAT, INT, NONE, SHARE, Bars, Section, Table, bars, caption, sections,
)

TITLE_ROW, CAPTION_ROW, FIRST_TABLE_ROW = 0, 1, 3
MAX_WIDTH = 80  # longer free text (a reason, a note) runs on into the empty cells beside it, kept whole
NUMBER_FORMATS = {INT: "0", FLOAT: "0.00", SHARE: "0.0%", DATE: "yyyy-mm-dd", DATETIME: "yyyy-mm-dd hh:mm"}
# Shown widths of the formatted cells, for fitting columns.
SHOWN_WIDTH = {DATE: 10, DATETIME: 16, SHARE: 6}
A4 = 9  # xlsxwriter's paper code
ROW_PX = 20  # the default row height in pixels
CHART_WIDTH_PX = 520
CHART_FRAME_PX = 100  # title, value axis and legend around the bars
BAR_PX = 22  # per bar: every category label gets a line of its own
MAX_TICKS = 10  # marks on a value axis; the step between them is a whole number


@dataclass(frozen=True)
class Placed:
    """Where a table landed on its sheet."""

    header_row: int
    rows: int  # data rows, total row excluded
    next_row: int  # the first free row below it

    @property
    def first_data_row(self) -> int:
        return self.header_row + 1


def _formats(book: Workbook) -> dict:
    made = {kind: book.add_format({"num_format": f}) for kind, f in NUMBER_FORMATS.items()}
    made |= {f"total-{kind}": book.add_format({"num_format": f, "bold": True, "top": 1})
             for kind, f in NUMBER_FORMATS.items()}
    made["text"] = book.add_format({})
    made["total-text"] = book.add_format({"bold": True, "top": 1})
    made["header"] = book.add_format({"bold": True, "bottom": 1, "valign": "top"})
    made["header-number"] = book.add_format({"bold": True, "bottom": 1, "valign": "top", "align": "right"})
    made["title"] = book.add_format({"bold": True, "font_size": 14})
    made["table-title"] = book.add_format({"bold": True, "italic": True})
    return made


def _write(sheet: Worksheet, row: int, col: int, value, kind: str, fmt) -> int:
    """Write one typed cell; returns its shown width."""
    if value is None:
        sheet.write_blank(row, col, None, fmt)
        return 0
    if isinstance(value, datetime):
        sheet.write_datetime(row, col, value.replace(tzinfo=None), fmt)
        return SHOWN_WIDTH[DATETIME]
    if isinstance(value, date):
        sheet.write_datetime(row, col, datetime.combine(value, time()), fmt)
        return SHOWN_WIDTH[DATE]
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        sheet.write_number(row, col, value, fmt)
        return SHOWN_WIDTH.get(kind, len(f"{value:.2f}" if kind == FLOAT else str(value)))
    text = str(value)
    sheet.write_string(row, col, text, fmt)
    return len(text)


def _place(sheet: Worksheet, table: Table, row: int, formats: dict, widths: list[int]) -> Placed:
    """The table from `row` down: title, header, rows (or NONE), total; widens `widths` to fit it."""
    sheet.write_string(row, 0, table.title, formats["table-title"])
    header = row + 1
    for i, column in enumerate(table.columns):
        numeric = column.kind in NUMBER_FORMATS and column.kind not in (DATE, DATETIME)
        sheet.write_string(header, i, column.title, formats["header-number" if numeric else "header"])
    rows = [*table.rows, *([table.total] if table.total else [])]
    if not table.rows:
        sheet.write_string(header + 1, 0, NONE, formats["text"])
    first = header + 1 if table.rows else header + 2
    for r, values in enumerate(rows):
        total = table.total is not None and r == len(table.rows)
        for i, (column, value) in enumerate(zip(table.columns, values)):
            kind = column.kind if not isinstance(value, str) else "text"
            fmt = formats[f"total-{kind}" if total else kind]
            shown = _write(sheet, first + r, i, value, kind, fmt)
            widths[i] = max(widths[i], min(shown, MAX_WIDTH))
    for i, column in enumerate(table.columns):
        widths[i] = max(widths[i], len(column.title))
    return Placed(header, len(table.rows), first + len(rows) + 1)


def _step(top: float) -> int:
    """A whole-number step between value axis marks, giving at most MAX_TICKS of them."""
    return max(1, math.ceil(top / MAX_TICKS))


def _chart(book: Workbook, sheet_name: str, b: Bars, table: Table, placed: Placed):
    ids = [c.id for c in table.columns]
    first, last = placed.first_data_row, placed.first_data_row + placed.rows - 1
    cat = ids.index(b.chart.category)
    chart = book.add_chart({"type": "bar"})
    for value in b.chart.values:
        col = ids.index(value)
        chart.add_series({
            "name": [sheet_name, placed.header_row, col],
            "categories": [sheet_name, first, cat, last, cat],
            "values": [sheet_name, first, col, last, col],
            "gap": 60,
        })
    chart.set_title({"name": b.chart.title, "name_font": {"size": 11}})
    chart.set_x_axis({"name": b.chart.unit, "min": 0, "major_unit": _step(b.top), "num_format": "0",
                      "major_gridlines": {"visible": True}})
    # Categories run top to bottom, each labelled (a label skipped for lack of room is a label lost).
    chart.set_y_axis({"reverse": True, "interval_unit": 1, "num_font": {"size": 9}})
    chart.set_legend({"position": "bottom" if len(b.series) > 1 else "none"})
    bars_drawn = len(b.items) * len(b.series)
    chart.set_size({"width": CHART_WIDTH_PX, "height": CHART_FRAME_PX + bars_drawn * BAR_PX})
    return chart


def _sheet(book: Workbook, section: Section, summary: WeeklySummary, formats: dict) -> None:
    sheet = book.add_worksheet(section.title)
    sheet.write_string(TITLE_ROW, 0, f"{section.title}, {summary.week.label}", formats["title"])
    sheet.write_string(CAPTION_ROW, 0, caption(summary))
    widest = max(len(t.columns) for t in section.tables)
    widths = [0] * widest
    chart_col = widest + 1
    row = FIRST_TABLE_ROW
    for table in section.tables:
        placed = _place(sheet, table, row, formats, widths)
        row = placed.next_row
        for chart in (c for c in CHARTS if c.section == section.id and c.table == table.id):
            b = bars(chart, section)
            if b.empty:
                sheet.write_string(placed.header_row - 1, chart_col, f"{chart.title}: {NONE}", formats["table-title"])
                continue
            drawn = _chart(book, section.title, b, table, placed)
            sheet.insert_chart(placed.header_row - 1, chart_col, drawn)
            # The rows below are kept clear of the chart, so no table prints under it.
            height = CHART_FRAME_PX + len(b.items) * len(b.series) * BAR_PX
            row = max(row, placed.header_row - 1 + math.ceil(height / ROW_PX) + 1)
    for i, width in enumerate(widths):
        sheet.set_column(i, i, width + 2)
    sheet.freeze_panes(FIRST_TABLE_ROW, 0)
    sheet.set_landscape()
    sheet.set_paper(A4)
    sheet.fit_to_pages(1, 0)  # one page wide, as many pages tall as it takes
    sheet.repeat_rows(TITLE_ROW, CAPTION_ROW)
    sheet.set_margins(left=0.5, right=0.5, top=0.6, bottom=0.6)
    sheet.set_footer("&L" + summary.week.label + "&R&P / &N")


def write_xlsx(summary: WeeklySummary, path: Path) -> None:
    # Built in memory, then written in one call: a full disk fails that call cleanly, where
    # xlsxwriter's own file writing would leave its zip file open.
    buffer = io.BytesIO()
    book = xlsxwriter.Workbook(buffer, {"in_memory": True})
    formats = _formats(book)
    for section in sections(summary):
        _sheet(book, section, summary, formats)
    book.close()
    path.write_bytes(buffer.getvalue())
