"""The same hand-worked numbers read back from each format: XLSX with openpyxl, HTML with the
standard library's html.parser, CSV with the csv module, JSON with json."""

from __future__ import annotations

import csv
import html
import math
import json
import re
from datetime import date, datetime, time
from html.parser import HTMLParser

import openpyxl
import pytest
from openpyxl.utils import get_column_letter

from caseload.core.alerts import ALERT_KINDS
from caseload.exports.summary_files import write
from caseload.exports.summary_tables import CHARTS, DATE, DATETIME, FLOAT, ID, INT, NONE, SHARE, sections
from caseload.exports.summary_xlsx import MAX_WIDTH, _step
from caseload.application.weekly_summary import compute_summary, export_summary
from caseload.presentation.glossary import CAUTION
from tests.application.week.conftest import W43
from tests.application.week.expected import KEYS, w43

FORMATS = {"xlsx": "week.xlsx", "html": "week.html", "csv": "week-csv", "json": "week.json"}


@pytest.fixture(scope="module")
def exported(clinic, tmp_path_factory):
    folder = tmp_path_factory.mktemp("exports")
    ctx = clinic.context()
    return {fmt: export_summary(ctx, W43, fmt, folder / name, False, write) for fmt, name in FORMATS.items()}


@pytest.fixture(scope="module")
def kinds(clinic):
    """Column kinds per table, to turn text cells back into values."""
    summary = compute_summary(clinic.context(), W43)
    return {(s.id, t.id): [c.kind for c in t.columns] for s in sections(summary) for t in s.tables}


@pytest.fixture(scope="module")
def expected(clinic):
    return w43(clinic.entry_ids)


def _typed(text: str, kind: str):
    """A text cell as a value; 'total' labels and blanks pass through."""
    if text in ("", "–"):
        return None
    if text == "total" or kind not in (INT, ID, FLOAT, SHARE, DATE, DATETIME):
        return text
    if kind in (INT, ID):
        return int(text)
    if kind == SHARE:
        return float(text[:-1]) / 100 if text.endswith("%") else float(text)
    if kind == FLOAT:
        return float(text)
    return date.fromisoformat(text) if kind == DATE else datetime.fromisoformat(text)


def _rows(key, expected) -> list[tuple]:
    rows, total = expected[key]
    return rows + ([total] if total else [])


# --- XLSX


@pytest.fixture(scope="module")
def workbook(exported):
    return openpyxl.load_workbook(exported["xlsx"])


def _xlsx_table(sheet, title: str, height: int) -> list[tuple]:
    """A table by its title (in column A), its header on the next row, `height` rows below."""
    top = next(cell.row for cell in sheet["A"] if cell.value == title)
    width = 0
    while sheet.cell(top + 1, 1 + width).value is not None:
        width += 1
    first = top + 2 + (sheet.cell(top + 2, 1).value == NONE)
    return [tuple(sheet.cell(r, 1 + i).value for i in range(width)) for r in range(first, first + height)]


def _xlsx_expected(value):
    if isinstance(value, datetime):
        return value.replace(tzinfo=None)  # cells hold the clinic's wall-clock time
    if isinstance(value, date):
        return datetime.combine(value, time())
    return value


SHEETS = {"census": "Census", "alerts": "Alerts", "clinical": "Clinical events", "quality": "Data quality",
          "workload": "Workload"}


@pytest.mark.parametrize("key", KEYS, ids=lambda k: "-".join(k))
def test_xlsx_cells_hold_the_numbers_and_dates(workbook, clinic, expected, key):
    summary = compute_summary(clinic.context(), W43)
    table = next(t for s in sections(summary) if s.id == key[0] for t in s.tables if t.id == key[1])
    want = _rows(key, expected)
    got = _xlsx_table(workbook[SHEETS[key[0]]], table.title, len(want))
    assert got == [tuple(_xlsx_expected(v) for v in row) for row in want]
    for row in got:
        for value, column in zip(row, table.columns):
            if column.kind in (INT, FLOAT, SHARE) and value is not None and value != "total":
                assert isinstance(value, (int, float)) and not isinstance(value, bool)
            if column.kind in (DATE, DATETIME) and value != "total":
                assert isinstance(value, datetime)


def test_xlsx_has_a_sheet_per_section_with_frozen_headers_and_native_charts(workbook):
    assert workbook.sheetnames == list(SHEETS.values())
    for sheet in workbook:
        assert sheet.freeze_panes == "A4"  # the title and caption stay put
    charts = {name: len(workbook[name]._charts) for name in SHEETS.values()}
    assert charts == {"Census": 1, "Alerts": 2, "Clinical events": 0, "Data quality": 0, "Workload": 0}


def test_xlsx_number_formats_and_column_widths(workbook):
    sheet = workbook["Data quality"]
    share = next(c for row in sheet.iter_rows() for c in row if c.value == 0.7857)
    assert share.number_format == "0.0%"
    changes = workbook["Data quality"]
    when = next(c for row in changes.iter_rows(min_row=5) for c in row if isinstance(c.value, datetime)
                and c.value.hour == 9)
    assert when.number_format == "yyyy-mm-dd hh:mm"
    counts = workbook["Clinical events"]
    description = next(c for row in counts.iter_rows() for c in row if c.value == "Description")
    texts = [str(counts.cell(r, description.column).value or "") for r in range(description.row + 1, description.row + 9)]
    # Fitted to the longest text, up to a cap beyond which the text runs on into the empty cells beside it.
    width = counts.column_dimensions[get_column_letter(description.column)].width
    assert width >= min(max(map(len, texts)), MAX_WIDTH)


# --- HTML


class Tables(HTMLParser):
    """Collect every <table id=...>: (header cells, body rows, foot rows, classes of the body cells)."""

    def __init__(self):
        super().__init__()
        self.tables: dict[str, dict] = {}
        self.current = self.part = self.row = None
        self.tags: list[str] = []
        self.cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        attrs = dict(attrs)
        if tag == "table":
            self.current = {"head": [], "body": [], "foot": []}
            self.tables[attrs["id"]] = self.current
        elif tag in ("thead", "tbody", "tfoot") and self.current is not None:
            self.part = {"thead": "head", "tbody": "body", "tfoot": "foot"}[tag]
        elif tag == "tr" and self.current is not None:
            self.row = []
        elif tag in ("td", "th") and self.row is not None:
            self.cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self.cell is not None:
            self.row.append("".join(self.cell).strip())
            self.cell = None
        elif tag == "tr" and self.row is not None:
            self.current[self.part].append(self.row)
            self.row = None
        elif tag == "table":
            self.current = None

    def handle_data(self, data):
        if self.cell is not None:
            self.cell.append(data)


@pytest.fixture(scope="module")
def page(exported):
    return exported["html"].read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def html_tables(page):
    parser = Tables()
    parser.feed(page)
    return parser.tables


def _html_expected(value, kind):
    if value == "":
        return None
    if isinstance(value, datetime):
        return value.replace(tzinfo=None)  # shown as the clinic's wall-clock time
    if kind == SHARE and isinstance(value, float):
        return round(value, 3)  # shown as a percentage with one decimal
    return value


@pytest.mark.parametrize("key", KEYS, ids=lambda k: "-".join(k))
def test_html_tables_show_the_numbers(html_tables, kinds, expected, key):
    table = html_tables["-".join(key)]
    rows, total = expected[key]
    body = [] if table["body"] == [["none this week"]] else table["body"]
    cols = kinds[key]
    parsed = [tuple(_typed(text, kind) for text, kind in zip(row, cols)) for row in body + table["foot"]]
    want = [tuple(_html_expected(v, k) for v, k in zip(row, cols)) for row in rows + ([total] if total else [])]
    got = [tuple(round(v, 3) if k == SHARE and isinstance(v, float) else v for v, k in zip(row, cols))
           for row in parsed]
    assert got == want


@pytest.mark.parametrize("key", [k for k in KEYS if w43({"P4 void": 0, "P7 void": 0, "P2 correction": 0})[k][1]],
                         ids=lambda k: "-".join(k))
def test_html_totals_are_the_sums_of_their_columns(html_tables, kinds, key):
    table = html_tables["-".join(key)]
    (foot,) = table["foot"]
    for i, kind in enumerate(kinds[key]):
        if kind == INT:
            assert sum(int(row[i]) for row in table["body"]) == int(foot[i]), (key, i)


def test_html_page_is_self_contained_with_inline_svg_charts(page):
    assert "<script" not in page and "<link" not in page and "src=" not in page and "@import" not in page
    assert re.findall(r"https?://[^\s\"']+", page) == ["http://www.w3.org/2000/svg"] * 3  # namespaces only
    assert page.count("<svg") == 3 and page.count("<rect") > 20
    assert "<style>" in page


def test_html_chart_values_read_as_their_tables_show_them(page):
    kinds = page[page.index('id="chart-alerts-by-kind"'):]
    kinds = kinds[:kinds.index("</figure>")]
    labels = re.findall(r'class="value">([^<]*)<', kinds)
    titles = re.findall(r"<title>([^<]*)</title>", kinds)
    # Counts of alerts are whole numbers: "1", never "1.0" or "Total: 1.00". One bar for each kind (16).
    assert len(labels) == len(titles) == len(ALERT_KINDS) == 16 and all(re.fullmatch(r"\d+", t) for t in labels + titles)
    hours = page[page.index('id="chart-hours-to-acknowledge"'):]
    assert "<title>41.75</title>" in hours[:hours.index("</figure>")]  # median hours keep two decimals


# --- CSV


def test_csv_folder_holds_one_file_per_table_and_the_week(exported):
    names = sorted(p.name for p in exported["csv"].iterdir())
    assert names == sorted(["week.csv", *(f"{s}-{t}.csv" for s, t in KEYS)])
    with open(exported["csv"] / "week.csv", newline="", encoding="utf-8-sig") as f:
        (week,) = list(csv.DictReader(f))
    # Yes-or-no cells read "yes" or "no" (reported: Python's "True"/"False"); the caution rides along.
    assert week == {"week": "2026-W43", "first_day": "2026-10-19", "last_day": "2026-10-25",
                    "timezone": "Europe/London", "hours": "169", "prepared_on": "2026-11-10", "complete": "yes",
                    "deidentified": "no", "caution": CAUTION}
    # RFC 3629 section 6: a UTF-8 byte order mark is EF BB BF; spreadsheet programs take it to mean UTF-8.
    assert all(p.read_bytes().startswith(b"\xef\xbb\xbf") for p in exported["csv"].iterdir())


@pytest.mark.parametrize("key", KEYS, ids=lambda k: "-".join(k))
def test_csv_files_hold_the_numbers(exported, kinds, expected, key):
    with open(exported["csv"] / f"{key[0]}-{key[1]}.csv", newline="", encoding="utf-8-sig") as f:
        reader = csv.reader(f)
        header = next(reader)
        rows = [tuple(_typed(text, kind) for text, kind in zip(row, kinds[key])) for row in reader]
    assert len(header) == len(kinds[key])
    assert rows == [tuple(None if v == "" else v for v in row) for row in _rows(key, expected)]


# --- JSON


@pytest.fixture(scope="module")
def document(exported):
    return json.loads(exported["json"].read_text(encoding="utf-8"))


def _json_expected(value):
    if isinstance(value, datetime):
        return value.isoformat(timespec="minutes")
    if isinstance(value, date):
        return value.isoformat()
    return value


@pytest.mark.parametrize("key", KEYS, ids=lambda k: "-".join(k))
def test_json_document_holds_the_numbers(document, expected, key):
    table = document[key[0]][key[1]]
    rows, total = expected[key]
    assert [tuple(r.values()) for r in table["rows"]] == [tuple(_json_expected(v) for v in row) for row in rows]
    assert (None if table["total"] is None else tuple(table["total"].values())) == (
        None if total is None else tuple(_json_expected(v) for v in total))


def test_json_week_and_times_carry_their_offsets(document):
    assert document["week"] == {"label": "2026-W43", "first_day": "2026-10-19", "last_day": "2026-10-25",
                                "timezone": "Europe/London", "start": "2026-10-18T23:00:00+00:00",
                                "end": "2026-10-26T00:00:00+00:00", "hours": 169}
    assert document["deidentified"] is False and document["complete"] is True  # JSON booleans (RFC 8259)
    ats = [r["at"] for r in document["quality"]["changes"]["rows"]]
    assert ats == ["2026-10-19T09:00+01:00", "2026-10-22T10:00+01:00", "2026-10-24T11:00+01:00"]


# --- XLSX printing


def test_xlsx_sheets_print_a4_landscape_one_page_wide_with_titles_repeated(workbook):
    # ECMA-376 part 1, 18.3.1.63 pageSetup: paperSize 9 is A4; fitToHeight 0 means "as many pages as needed".
    for sheet in workbook:
        setup = sheet.page_setup
        assert setup.orientation == "landscape" and int(setup.paperSize) == 9
        assert sheet.sheet_properties.pageSetUpPr.fitToPage
        assert (int(setup.fitToWidth or 1), int(setup.fitToHeight)) == (1, 0)  # fitToWidth is 1 when left out
        assert sheet.print_title_rows == "$1:$2"  # the sheet's title and the week's caption on every page


def test_xlsx_charts_show_every_label_on_whole_number_axes_sized_to_their_bars(workbook):
    # openpyxl reads a bar chart's category axis as x_axis and its value axis as y_axis.
    for name in ("Census", "Alerts"):
        for chart in workbook[name]._charts:
            assert chart.x_axis.tickLblSkip == 1
            assert chart.y_axis.majorUnit == int(chart.y_axis.majorUnit) >= 1
            assert chart.y_axis.number_format.formatCode == "0"
    kinds = next(c for c in workbook["Alerts"]._charts if len(c.series) == 1)
    nurses = workbook["Census"]._charts[0]
    # 14 alert kinds, one bar each, against 3 nurses with two bars each: the chart with more bars is taller.
    def rows(chart) -> int:  # a chart is anchored from one cell to another
        return chart.anchor.to.row - chart.anchor._from.row

    assert rows(kinds) > rows(nurses) >= 7


@pytest.mark.parametrize(("top", "step"), [(1, 1), (5, 1), (10, 1), (11, 2), (40, 4), (73.15, 8)])
def test_value_axis_steps_are_whole_numbers_with_at_most_ten_marks(top, step):
    assert _step(top) == step and math.ceil(top / step) <= 10


def test_an_empty_chart_says_none_this_week(fresh_clinic, tmp_path):
    # 2026-W45 has no alert raised and none acknowledged.
    path = export_summary(fresh_clinic.context(), "2026-W45", "xlsx", tmp_path / "w45.xlsx", deidentify=False, render=write)
    sheet = openpyxl.load_workbook(path)["Alerts"]
    said = [c.value for row in sheet.iter_rows() for c in row if isinstance(c.value, str) and NONE in c.value]
    assert "Alerts raised by kind: none this week" in said and not sheet._charts


def test_an_empty_chart_on_the_page_says_what_the_workbook_says(fresh_clinic, tmp_path):
    # 2026-W30 (July) is before anyone was registered: every chart is empty. Jinja reads a variable
    # named `none` as its own None, which the page once printed as "None".
    def export(fmt: str):
        return export_summary(fresh_clinic.context(), "2026-W30", fmt, tmp_path / f"w30.{fmt}", deidentify=False,
                              render=write)

    page = export("html").read_text(encoding="utf-8")
    book = openpyxl.load_workbook(export("xlsx"))
    in_book = {c.value for sheet in book for row in sheet.iter_rows() for c in row
               if isinstance(c.value, str) and c.value.endswith(f": {NONE}")}
    titles = {chart.id: chart.title for chart in CHARTS}
    on_page = {f"{titles[chart]}: {said}"
               for chart, said in re.findall(r'<figure class="chart" id="chart-([^"]+)">\s*<p class="none">([^<]*)</p>', page)}
    assert "None" not in page
    assert on_page == in_book == {f"{chart.title}: none this week" for chart in CHARTS}


# --- the caution, in every format, from the one wording the whole tool shows


def test_every_format_carries_the_tools_caution_in_its_one_wording(exported, workbook, page, document):
    assert CAUTION.startswith("Predictions are estimates, not contraception advice;")
    for sheet in workbook:  # under the title and caption of each sheet, across its tables, kept in view
        assert sheet["A3"].value == CAUTION and sheet["A3"].alignment.wrap_text
        assert any(str(r).startswith("A3:") for r in sheet.merged_cells.ranges)
    assert html.unescape(page).count(CAUTION) == 2  # under the caption, and at the foot of the page
    with open(exported["csv"] / "week.csv", newline="", encoding="utf-8-sig") as f:
        assert next(csv.DictReader(f))["caution"] == CAUTION
    assert document["caution"] == CAUTION


def test_the_caution_is_the_glossarys_never_a_copy():
    from pathlib import Path
    import caseload.exports as exports
    for module in ("summary_xlsx", "summary_html", "summary_csv", "summary_json", "templates/summary.html.j2"):
        path = Path(exports.__file__).parent / (module if "." in module else f"{module}.py")
        assert "contraception" not in path.read_text(encoding="utf-8"), module


def test_the_json_document_only_gained_the_caution(document):
    # Additive: every key a reader of the earlier document used is still there, under its name.
    assert list(document)[:5] == ["week", "prepared_on", "complete", "deidentified", "caution"]
    assert set(document) == {"week", "prepared_on", "complete", "deidentified", "caution", *SHEETS}
    assert document["complete"] is True and document["deidentified"] is False  # still JSON booleans


# --- XLSX: readable printed rows


def test_xlsx_ids_and_dates_sit_left_and_figures_right_so_a_printed_row_reads_right(workbook, expected):
    # Reported: on the Data quality sheet every table shares each column's width, so the entry id
    # sat at the right of the Reason column's 54 characters, against the patient: "16950P0028".
    sheet = workbook["Data quality"]
    top = next(cell.row for cell in sheet["A"] if cell.value == "Corrections and voids")
    header = [c.value for c in sheet[top + 1]][:9]
    assert header == ["Entry", "Patient", "Name", "Kind", "Day", "Change", "Reason", "By", "When"]
    assert sheet.cell(top + 1, 1).alignment.horizontal != "right"
    row = sheet[top + 2]
    entry, day, when = row[0], row[4], row[8]
    assert isinstance(entry.value, int) and entry.value == expected[("quality", "changes")][0][0][0]
    for cell in (entry, day, when):  # a label and two times: at the left edge, as the page shows them
        assert cell.alignment.horizontal == "left", cell.coordinate
    coverage = next(cell.row for cell in sheet["A"] if cell.value == "Daily temperatures of patients charting all week")
    for cell in sheet[coverage + 2][1:5]:  # counts and a share: figures, at the right edge (Excel's "general")
        assert isinstance(cell.value, (int, float)) and cell.alignment.horizontal in (None, "general", "right")


def _long_named(summary, name: str):
    from dataclasses import replace
    first = summary.alerts.open_at_end[0]
    longer = replace(first, patient=replace(first.patient, name=name))
    return replace(summary, alerts=replace(summary.alerts, open_at_end=(longer, *summary.alerts.open_at_end[1:])))


def _printed_width_px(sheet) -> float:
    """How far right the sheet's content reaches, in pixels: its columns and the charts beside them."""
    from openpyxl.utils import column_index_from_string
    widths = {}
    for dim in sheet.column_dimensions.values():
        for col in range(dim.min or column_index_from_string(dim.index), (dim.max or dim.min or 0) + 1):
            widths[col] = dim.width
    px = [int((widths.get(c) or 8.43) * 7 + 0.5) + 5 for c in range(1, sheet.max_column + 1)]
    right = sum(px)
    for chart in sheet._charts:
        to = chart.anchor.to
        right = max(right, sum(px[:to.col]) + sum(64 for _ in range(len(px), to.col)) + to.colOff / 9525)
    return right


def test_a_long_name_wraps_in_a_capped_column_and_the_sheet_prints_at_a_readable_size(clinic, tmp_path):
    # Reported: one long patient name widened its column to 80 characters and the whole printed
    # Alerts sheet, fitted to one page wide, shrank to about 5 pt type.
    from caseload.exports.summary_xlsx import MIN_PRINT_SCALE, PRINT_WIDTH_PX, write_xlsx
    name = "Maria de los Angeles Fernandez-Castellanos y Rodriguez de la Fuente Villanueva-Ortega"
    summary = _long_named(compute_summary(clinic.context(), W43), name)
    path = tmp_path / "long.xlsx"
    write_xlsx(summary, path)
    sheet = openpyxl.load_workbook(path)["Alerts"]
    cell = next(c for row in sheet.iter_rows() for c in row if c.value == name)
    column = sheet.column_dimensions[get_column_letter(cell.column)]
    assert column.width < MAX_WIDTH + 3 < len(name)  # xlsxwriter writes a width of 42 as 42.71
    assert cell.alignment.wrap_text and cell.alignment.vertical == "top"
    for dim in sheet.column_dimensions.values():
        assert dim.width < MAX_WIDTH + 3
    setup = sheet.page_setup
    printed = _printed_width_px(sheet)
    if sheet.sheet_properties.pageSetUpPr.fitToPage:  # fitted only where the type stays readable
        assert (int(setup.fitToWidth or 1), int(setup.fitToHeight)) == (1, 0)
        assert 100 * PRINT_WIDTH_PX / printed >= MIN_PRINT_SCALE
    else:
        assert int(setup.scale) == MIN_PRINT_SCALE
    assert MIN_PRINT_SCALE == 70


def test_a_sheet_too_wide_for_one_readable_page_prints_at_seventy_percent_across_pages(clinic, tmp_path):
    # Every text column of the corrections at its cap: nine columns are wider than one landscape A4
    # page at 70%, so the sheet is not shrunk to fit; it prints at 70%, left part then right part.
    from dataclasses import replace
    from caseload.exports.summary_xlsx import MIN_PRINT_SCALE, PRINT_WIDTH_PX, write_xlsx
    summary = compute_summary(clinic.context(), W43)
    long = "a long stretch of words " * 3
    changed = tuple(replace(c, patient=replace(c.patient, id=long[:30], name=long), kind=long, change=long,
                            reason=long, by_staff=long) for c in summary.quality.changes)
    path = tmp_path / "wide.xlsx"
    write_xlsx(replace(summary, quality=replace(summary.quality, changes=changed)), path)
    book = openpyxl.load_workbook(path)
    sheet = book["Data quality"]
    assert 100 * PRINT_WIDTH_PX / _printed_width_px(sheet) < MIN_PRINT_SCALE
    assert not sheet.sheet_properties.pageSetUpPr.fitToPage
    assert int(sheet.page_setup.scale) == MIN_PRINT_SCALE == 70 and sheet.page_setup.pageOrder == "overThenDown"
    # The other sheets still print one page wide.
    assert all(book[name].sheet_properties.pageSetUpPr.fitToPage for name in ("Census", "Alerts", "Workload"))
