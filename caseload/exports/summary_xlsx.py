"""The summary as a workbook: one sheet per section, its tables one under another with their
charts beside them, typed cells (numbers, dates, times), fitted column widths and native bar
charts. Each sheet prints on A4 landscape with its title and caption on every page, one page wide
when that keeps the print readable (MIN_PRINT_SCALE), and carries the tool's caution under them.

A column's width is shared by every table on the sheet: counts and shares sit at its right edge as
figures do, and everything else (text, identifiers, dates and times) at its left edge, as the HTML
page shows them, so a right-aligned figure is never printed against the next column's text
("16950P0028"). Text longer than MAX_WIDTH wraps within its column, on a row made tall enough."""

from __future__ import annotations

import io
import math
import textwrap
from dataclasses import dataclass
from datetime import date, datetime, time
from pathlib import Path

import xlsxwriter
from xlsxwriter.workbook import Workbook
from xlsxwriter.worksheet import Worksheet

from caseload.application.week.figures import WeeklySummary
from caseload.exports.summary_tables import (
    CHARTS, DATE, DATETIME, FLOAT, ID, INT, NONE, SHARE, Bars, Section, Table, bars, caption, sections,
)
from caseload.presentation.glossary import CAUTION

TITLE_ROW, CAPTION_ROW, CAUTION_ROW, FIRST_TABLE_ROW = 0, 1, 2, 3
MAX_WIDTH = 40  # characters: longer text (a name, a reason, a note) wraps within the column
NUMBER_FORMATS = {INT: "0", FLOAT: "0.00", SHARE: "0.0%", ID: "0", DATE: "yyyy-mm-dd", DATETIME: "yyyy-mm-dd hh:mm"}
FIGURES = (INT, FLOAT, SHARE)  # right-aligned, as figures are; the other kinds are left-aligned
# Shown widths of the formatted cells, for fitting columns.
SHOWN_WIDTH = {DATE: 10, DATETIME: 16, SHARE: 6}
A4 = 9  # xlsxwriter's paper code
ROW_PX = 20  # the default row height in pixels
ROW_POINTS = 15  # the same in points, per line of a wrapped cell
CHAR_PX, COLUMN_PADDING_PX, DEFAULT_COLUMN_PX = 7, 5, 64  # Excel's column widths: characters of its default font
DEFAULT_WIDTH = 8.43  # characters: a column left at Excel's default width (64 pixels)
# A4 landscape less the side margins (0.5 in each), in pixels at 96 per inch.
PRINT_WIDTH_PX = round((297 / 25.4 - 2 * 0.5) * 96)
MIN_PRINT_SCALE = 70  # percent: a sheet is shrunk to one page wide only down to this, never to unreadable type
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
    made = {}
    for kind, f in NUMBER_FORMATS.items():
        align = {} if kind in FIGURES else {"align": "left"}
        made[kind] = book.add_format({"num_format": f, "valign": "top", **align})
        made[f"total-{kind}"] = book.add_format({"num_format": f, "bold": True, "top": 1, "valign": "top", **align})
    made["text"] = book.add_format({"valign": "top"})
    made["wrapped"] = book.add_format({"valign": "top", "text_wrap": True})
    made["total-text"] = book.add_format({"bold": True, "top": 1, "valign": "top"})
    made["total-wrapped"] = book.add_format({"bold": True, "top": 1, "valign": "top", "text_wrap": True})
    made["header"] = book.add_format({"bold": True, "bottom": 1, "valign": "top", "text_wrap": True})
    made["header-number"] = book.add_format({"bold": True, "bottom": 1, "valign": "top", "align": "right",
                                             "text_wrap": True})
    made["title"] = book.add_format({"bold": True, "font_size": 14})
    made["caption"] = book.add_format({"valign": "top", "text_wrap": True})
    made["caution"] = book.add_format({"valign": "top", "text_wrap": True, "italic": True, "font_color": "#B35900"})
    made["table-title"] = book.add_format({"bold": True, "italic": True})
    return made


def _shown_width(value, kind: str) -> int:
    """How many characters a cell shows."""
    if value is None:
        return 0
    if isinstance(value, datetime):
        return SHOWN_WIDTH[DATETIME]
    if isinstance(value, date):
        return SHOWN_WIDTH[DATE]
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return SHOWN_WIDTH.get(kind, len(f"{value:.2f}" if kind == FLOAT else str(value)))
    return len(str(value))


def _lines(text: str, width: float) -> int:
    """How many lines `text` takes wrapped at spaces in a column `width` characters wide."""
    return max(1, len(textwrap.wrap(text, max(1, int(width)), break_on_hyphens=False)))


def _write(sheet: Worksheet, row: int, col: int, value, fmt) -> None:
    """Write one typed cell."""
    if value is None:
        sheet.write_blank(row, col, None, fmt)
    elif isinstance(value, datetime):
        sheet.write_datetime(row, col, value.replace(tzinfo=None), fmt)
    elif isinstance(value, date):
        sheet.write_datetime(row, col, datetime.combine(value, time()), fmt)
    elif isinstance(value, (int, float)) and not isinstance(value, bool):
        sheet.write_number(row, col, value, fmt)
    else:
        sheet.write_string(row, col, str(value), fmt)


def _widths(tables) -> list[int]:
    """Each column's width in characters: its widest cell or header on the sheet, up to MAX_WIDTH
    (a header's longest word always fits: a header wraps at its spaces, never inside a word)."""
    widths = [0] * max(len(t.columns) for t in tables)
    for table in tables:
        for i, column in enumerate(table.columns):
            head = max(len(w) for w in column.title.split())
            widths[i] = max(widths[i], head, min(len(column.title), MAX_WIDTH))
        for values in (*table.rows, *([table.total] if table.total else [])):
            for i, (column, value) in enumerate(zip(table.columns, values)):
                widths[i] = max(widths[i], min(_shown_width(value, column.kind), MAX_WIDTH))
    return widths


def _place(sheet: Worksheet, table: Table, row: int, formats: dict, widths: list[int]) -> Placed:
    """The table from `row` down: title, header, rows (or NONE), total. Text wider than its column
    wraps, and its row is made tall enough for every line."""
    sheet.write_string(row, 0, table.title, formats["table-title"])
    header = row + 1
    for i, column in enumerate(table.columns):
        sheet.write_string(header, i, column.title, formats["header-number" if column.kind in FIGURES else "header"])
    heading_lines = max(_lines(c.title, w) for c, w in zip(table.columns, widths))
    if heading_lines > 1:
        sheet.set_row(header, ROW_POINTS * heading_lines)
    rows = [*table.rows, *([table.total] if table.total else [])]
    if not table.rows:
        sheet.write_string(header + 1, 0, NONE, formats["text"])
    first = header + 1 if table.rows else header + 2
    for r, values in enumerate(rows):
        total = table.total is not None and r == len(table.rows)
        lines = 1
        for i, (column, value) in enumerate(zip(table.columns, values)):
            kind = column.kind if not isinstance(value, str) else "text"
            if isinstance(value, str) and len(value) > widths[i]:
                kind = "wrapped"
                lines = max(lines, _lines(value, widths[i]))
            _write(sheet, first + r, i, value, formats[f"total-{kind}" if total else kind])
        if lines > 1:
            # Set, not left to the program: a spreadsheet program does not grow a row for wrapped
            # text when opening a file. Counted a character to a unit of column width, which
            # proportional letters seldom exceed: at worst a little room to spare, never a cut line.
            sheet.set_row(first + r, ROW_POINTS * lines)
    return Placed(header, len(table.rows), first + len(rows) + 1)


def _column_px(width: float) -> int:
    return int(width * CHAR_PX + 0.5) + COLUMN_PADDING_PX


def _print_scale(wide_px: int) -> int | None:
    """The scale that prints `wide_px` one page wide, or None when it fits at full size."""
    return None if wide_px <= PRINT_WIDTH_PX else max(1, math.floor(100 * PRINT_WIDTH_PX / wide_px))


def _readable(wide_px: int) -> bool:
    scale = _print_scale(wide_px)
    return scale is None or scale >= MIN_PRINT_SCALE


def _banner(sheet: Worksheet, row: int, text: str, fmt, spans: list[float]) -> None:
    """A line of text across columns as wide as `spans` (characters), wrapped there: it prints
    whole within the page."""
    if len(spans) > 1:
        sheet.merge_range(row, 0, row, len(spans) - 1, text, fmt)
    else:
        sheet.write_string(row, 0, text, fmt)
    lines = _lines(text, sum(spans))
    if lines > 1:
        sheet.set_row(row, ROW_POINTS * lines)


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
    widths = _widths(section.tables)
    widest = len(widths)
    tables_px = sum(_column_px(w + 2) for w in widths)
    # Charts stand beside their tables where the sheet still prints one page wide at a readable
    # size; otherwise each goes below its table.
    beside = _readable(tables_px + DEFAULT_COLUMN_PX + CHART_WIDTH_PX)
    chart_col = widest + 1
    # The caption and the caution span the tables and, beside them, the charts' columns.
    charted = beside and any(c.section == section.id for c in CHARTS)
    chart_columns = 1 + math.ceil(CHART_WIDTH_PX / DEFAULT_COLUMN_PX) if charted else 0
    spans = [w + 2 for w in widths] + [DEFAULT_WIDTH] * chart_columns
    sheet.write_string(TITLE_ROW, 0, f"{section.title}, {summary.week.label}", formats["title"])
    _banner(sheet, CAPTION_ROW, caption(summary), formats["caption"], spans)
    _banner(sheet, CAUTION_ROW, CAUTION, formats["caution"], spans)
    wide_px = tables_px
    row = FIRST_TABLE_ROW
    for table in section.tables:
        placed = _place(sheet, table, row, formats, widths)
        row = placed.next_row
        for chart in (c for c in CHARTS if c.section == section.id and c.table == table.id):
            b = bars(chart, section)
            at_row, at_col = (placed.header_row - 1, chart_col) if beside else (row, 0)
            if b.empty:
                sheet.write_string(at_row, at_col, f"{chart.title}: {NONE}", formats["table-title"])
                if beside:
                    wide_px = max(wide_px, tables_px + DEFAULT_COLUMN_PX + len(f"{chart.title}: {NONE}") * CHAR_PX)
                else:
                    row += 2
                continue
            sheet.insert_chart(at_row, at_col, _chart(book, section.title, b, table, placed))
            wide_px = max(wide_px, tables_px + DEFAULT_COLUMN_PX + CHART_WIDTH_PX if beside else CHART_WIDTH_PX)
            # The rows below are kept clear of the chart, so no table prints under it.
            height = CHART_FRAME_PX + len(b.items) * len(b.series) * BAR_PX
            row = max(row, at_row + math.ceil(height / ROW_PX) + 1)
    for i, width in enumerate(widths):
        sheet.set_column(i, i, width + 2)
    sheet.freeze_panes(FIRST_TABLE_ROW, 0)
    sheet.set_landscape()
    sheet.set_paper(A4)
    if _readable(wide_px):
        sheet.fit_to_pages(1, 0)  # one page wide, as many pages tall as it takes
    else:
        # Wider than one page at a readable size: printed at that size across pages, each band of
        # rows whole (left part, then right part) before the next.
        sheet.set_print_scale(MIN_PRINT_SCALE)
        sheet.print_across()
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
