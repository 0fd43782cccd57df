"""The summary as a workbook: one sheet per section, its tables side by side under one frozen
header row, typed cells (numbers, dates, times), fitted column widths and native bar charts."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime, time
from pathlib import Path

import xlsxwriter
from xlsxwriter.workbook import Workbook
from xlsxwriter.worksheet import Worksheet

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import CHARTS, DATE, DATETIME, FLOAT, INT, SHARE, Section, Table, caption, sections

TITLE_ROW, CAPTION_ROW, TABLE_TITLE_ROW, HEADER_ROW = 0, 1, 2, 3
FIRST_DATA_ROW = HEADER_ROW + 1
MAX_WIDTH = 80  # longer free text (a reason) is cut on screen, kept whole in the cell
NUMBER_FORMATS = {INT: "0", FLOAT: "0.00", SHARE: "0.0%", DATE: "yyyy-mm-dd", DATETIME: "yyyy-mm-dd hh:mm"}
# Shown widths of the formatted cells, for fitting columns.
SHOWN_WIDTH = {DATE: 10, DATETIME: 16, SHARE: 6}
CHART_ROWS = 18


@dataclass(frozen=True)
class Placed:
    """Where a table landed on its sheet."""

    first_column: int
    rows: int  # data rows, total row excluded


def _formats(book: Workbook) -> dict:
    made = {kind: book.add_format({"num_format": f}) for kind, f in NUMBER_FORMATS.items()}
    made |= {f"total-{kind}": book.add_format({"num_format": f, "bold": True, "top": 1})
             for kind, f in NUMBER_FORMATS.items()}
    made["text"] = book.add_format({})
    made["total-text"] = book.add_format({"bold": True, "top": 1})
    made["header"] = book.add_format({"bold": True, "bottom": 1, "text_wrap": True, "valign": "top"})
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


def _place(sheet: Worksheet, table: Table, first_col: int, formats: dict) -> Placed:
    sheet.write_string(TABLE_TITLE_ROW, first_col, table.title, formats["table-title"])
    widths = [len(c.title) for c in table.columns]
    rows = [*table.rows, *([table.total] if table.total else [])]
    for r, row in enumerate(rows):
        total = table.total is not None and r == len(table.rows)
        for i, (column, value) in enumerate(zip(table.columns, row)):
            kind = column.kind if not isinstance(value, str) else "text"
            fmt = formats[f"total-{kind}" if total else kind]
            widths[i] = max(widths[i], _write(sheet, FIRST_DATA_ROW + r, first_col + i, value, kind, fmt))
    for i, column in enumerate(table.columns):
        sheet.write_string(HEADER_ROW, first_col + i, column.title, formats["header"])
        sheet.set_column(first_col + i, first_col + i, min(widths[i], MAX_WIDTH) + 2)
    return Placed(first_col, len(table.rows))


def _chart(book: Workbook, sheet_name: str, table: Table, placed: Placed, category: str, values: tuple[str, ...],
           title: str, unit: str):
    ids = [c.id for c in table.columns]
    last = FIRST_DATA_ROW + placed.rows - 1
    cat = placed.first_column + ids.index(category)
    chart = book.add_chart({"type": "bar"})
    for value in values:
        col = placed.first_column + ids.index(value)
        chart.add_series({
            "name": [sheet_name, HEADER_ROW, col],
            "categories": [sheet_name, FIRST_DATA_ROW, cat, last, cat],
            "values": [sheet_name, FIRST_DATA_ROW, col, last, col],
        })
    chart.set_title({"name": title})
    chart.set_x_axis({"name": unit})
    chart.set_y_axis({"reverse": True})
    chart.set_legend({"position": "bottom" if len(values) > 1 else "none"})
    return chart


def _sheet(book: Workbook, section: Section, summary: WeeklySummary, formats: dict) -> None:
    sheet = book.add_worksheet(section.title)
    sheet.write_string(TITLE_ROW, 0, f"{section.title}, {summary.week.label}", formats["title"])
    sheet.write_string(CAPTION_ROW, 0, caption(summary))
    placed: dict[str, Placed] = {}
    col = 0
    for table in section.tables:
        placed[table.id] = _place(sheet, table, col, formats)
        col += len(table.columns) + 1
    sheet.freeze_panes(FIRST_DATA_ROW, 0)
    row = FIRST_DATA_ROW
    for chart in (c for c in CHARTS if c.section == section.id):
        table = section.table(chart.table)
        if not table.rows:
            continue
        drawn = _chart(book, section.title, table, placed[table.id], chart.category, chart.values, chart.title,
                       chart.unit)
        sheet.insert_chart(row, col, drawn, {"x_scale": 1.2, "y_scale": 1.2})
        row += CHART_ROWS


def write_xlsx(summary: WeeklySummary, path: Path) -> None:
    book = xlsxwriter.Workbook(str(path))
    formats = _formats(book)
    for section in sections(summary):
        _sheet(book, section, summary, formats)
    book.close()
