"""The same hand-worked numbers read back from each format: XLSX with openpyxl, HTML with the
standard library's html.parser, CSV with the csv module, JSON with json."""

from __future__ import annotations

import csv
import json
import re
from datetime import date, datetime, time
from html.parser import HTMLParser

import openpyxl
import pytest
from openpyxl.utils import get_column_letter

from caseload.exports.summary_files import write
from caseload.exports.summary_tables import DATE, DATETIME, FLOAT, INT, SHARE, sections
from caseload.application.weekly_summary import compute_summary, export_summary
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
    if text == "total" or kind not in (INT, FLOAT, SHARE, DATE, DATETIME):
        return text
    if kind == INT:
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
    """A table by its title (row 3), its header on row 4, `height` rows below."""
    first = next(cell.column for cell in sheet[3] if cell.value == title)
    width = 0
    while sheet.cell(4, first + width).value is not None:
        width += 1
    return [tuple(sheet.cell(r, first + i).value for i in range(width)) for r in range(5, 5 + height)]


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
        assert sheet.freeze_panes == "A5"  # title, caption, table titles and the header row stay put
    charts = {name: len(workbook[name]._charts) for name in SHEETS.values()}
    assert charts == {"Census": 1, "Alerts": 2, "Clinical events": 0, "Data quality": 0, "Workload": 0}


def test_xlsx_number_formats_and_column_widths(workbook):
    sheet = workbook["Data quality"]
    share = next(c for c in sheet[5] if c.value == 0.7857)
    assert share.number_format == "0.0%"
    changes = workbook["Data quality"]
    when = next(c for row in changes.iter_rows(min_row=5) for c in row if isinstance(c.value, datetime)
                and c.value.hour == 9)
    assert when.number_format == "yyyy-mm-dd hh:mm"
    counts = workbook["Clinical events"]
    description = next(c for c in counts[4] if c.value == "Description")
    longest = max(len(str(counts.cell(r, description.column).value or "")) for r in range(5, 13))
    assert counts.column_dimensions[get_column_letter(description.column)].width >= longest


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


# --- CSV


def test_csv_folder_holds_one_file_per_table_and_the_week(exported):
    names = sorted(p.name for p in exported["csv"].iterdir())
    assert names == sorted(["week.csv", *(f"{s}-{t}.csv" for s, t in KEYS)])
    with open(exported["csv"] / "week.csv", newline="", encoding="utf-8") as f:
        (week,) = list(csv.DictReader(f))
    assert week == {"week": "2026-W43", "first_day": "2026-10-19", "last_day": "2026-10-25",
                    "timezone": "Europe/London", "hours": "169", "prepared_on": "2026-11-10", "deidentified": "False"}


@pytest.mark.parametrize("key", KEYS, ids=lambda k: "-".join(k))
def test_csv_files_hold_the_numbers(exported, kinds, expected, key):
    with open(exported["csv"] / f"{key[0]}-{key[1]}.csv", newline="", encoding="utf-8") as f:
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
    assert document["deidentified"] is False
    ats = [r["at"] for r in document["quality"]["changes"]["rows"]]
    assert ats == ["2026-10-19T09:00+01:00", "2026-10-22T10:00+01:00", "2026-10-24T11:00+01:00"]
