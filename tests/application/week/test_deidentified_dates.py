"""A de-identified summary names no day but the days it covers, each as its day of the week
(Monday = 1, README): a date outside them (a due date months ahead, an alert raised weeks before,
the day of an entry corrected late) is left out, not counted from the week's Monday, since a count
of days from a known Monday is the date itself."""

from __future__ import annotations

import csv
import json
from dataclasses import fields, is_dataclass, replace
from datetime import date, datetime, timedelta
from html.parser import HTMLParser
from pathlib import Path

import openpyxl
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from caseload.application.week.figures import OpenAlert, WeeklySummary
from caseload.application.week.pseudonyms import deidentified
from caseload.application.weekly_summary import compute_summary, export_summary, pseudonym
from caseload.exports.summary_files import write
from caseload.exports.summary_tables import WEEK_DAY, sections
from tests.application.week.conftest import W43

SECRET = "a key of the test's own"
BUILD_DAY = date(2026, 12, 1)  # the demo's day (tests/conftest.py), a Tuesday of 2026-W49
SHOWN_AS_WEEK_DAY = f"({WEEK_DAY})"  # how a de-identified table titles a date column


# The week in progress on the build day (Monday 30 November to Tuesday 1 December so far) and two
# whole weeks: between them positive hCG results with due dates in 2027 and urgent alerts raised in
# earlier weeks (the `summaries` fixture checks it, so that the checks below are not empty).
DEMO_WEEKS = ("2026-W49", "2026-W48", "2026-W43")


def _deidentify(summary: WeeklySummary) -> WeeklySummary:
    return deidentified(summary, lambda pid: pseudonym(SECRET, pid))


# --- the hand-built clinic (conftest.py), whose dates are known


def test_the_hand_built_week_keeps_the_days_of_the_week_and_drops_the_rest(clinic):
    shown = {(s.id, t.id): t for s in sections(_deidentify(compute_summary(clinic.context(), W43))) for t in s.tables}
    # P3's positive hCG of Thursday 22 October is day 4; its due date (Naegele: 28 June 2027) and the
    # method that dated it are left out.
    ((_, tested_on, edd, method),) = shown[("clinical", "pregnancies")].rows
    assert (tested_on, edd, method) == (4, None, None)
    # Urgent and today alerts not resolved on Sunday 25 (expected.py): A11 was raised on 1 October,
    # before the week, so neither its day (-17 from Monday) nor its age (24) is shown; the others were
    # raised Saturday 24 (day 6, age 1), Wednesday 21 (day 3, age 4) and Friday 23 (day 5, age 2).
    assert [row[-4:] for row in shown[("alerts", "open_at_end")].rows] == [
        ("today", "acknowledged", None, None), ("urgent", "acknowledged", 6, 1),
        ("today", "acknowledged", 3, 4), ("today", "open", 5, 2)]


def test_an_entry_corrected_in_the_week_but_dated_before_it_has_no_day(fresh_clinic):
    c = fresh_clinic
    late = c.log("2026-10-25 10:00", "phone1", "P2", "symptom", "cramps", "2026-10-12")
    c.amend("2026-10-25 10:30", "nurse1", late, "mild cramps", "wording")
    summary = compute_summary(c.context(), W43)
    assert summary.quality.changes[-1].day == date(2026, 10, 12)  # a Monday, a week before the week's
    changes = next(t for s in sections(_deidentify(summary)) for t in s.tables if t.id == "changes")
    # (patient, kind, day, change, by, at): Sunday 25 October is day 7.
    assert changes.rows[-1][1:] == ("symptom", None, "correction", "nurse1", 7)


# --- the demo caseload, in every format


@pytest.fixture(scope="module")
def context(demo) -> Context:
    return Context(demo.store, demo.admin, BUILD_DAY, load_protocol(demo.store))


@pytest.fixture(scope="module")
def summaries(context) -> list[WeeklySummary]:
    found = [compute_summary(context, week) for week in DEMO_WEEKS]
    assert any(p.edd is not None for s in found for p in s.clinical.pregnancies)
    assert any(o.raised_on < s.week.first_day for s in found for o in s.alerts.open_at_end)
    return found


class _Tables(HTMLParser):
    """Each <table id=...> of the page as its header cells and its other rows, as text."""

    def __init__(self):
        super().__init__()
        self.tables: dict[str, list[list[str]]] = {}
        self.rows: list[list[str]] | None = None
        self.cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        if tag == "table":
            self.rows = self.tables.setdefault(dict(attrs)["id"], [])
        elif tag == "tr" and self.rows is not None:
            self.rows.append([])
        elif tag in ("td", "th") and self.rows is not None:
            self.cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self.cell is not None:
            self.rows[-1].append("".join(self.cell).strip())
            self.cell = None
        elif tag == "table":
            self.rows = None

    def handle_data(self, data):
        if self.cell is not None:
            self.cell.append(data)


def _columns(header: list, rows: list[list]) -> dict[str, list]:
    return {str(title): [row[i] for row in rows if i < len(row)] for i, title in enumerate(header)}


def _date_cells(fmt: str, out: Path, summary: WeeklySummary) -> list:
    """Every cell under a date column of every table, read back from the file as a reader would."""
    found = []
    for section in sections(summary):
        for table in section.tables:
            dated = [c for c in table.columns if c.title.endswith(SHOWN_AS_WEEK_DAY)]
            if not dated:
                continue
            if fmt == "csv":
                with open(out / f"{section.id}-{table.id}.csv", newline="", encoding="utf-8-sig") as f:
                    header, *rows = list(csv.reader(f))
                cells = _columns(header, rows)
                found += [v for c in dated for v in cells[c.id]]
            elif fmt == "json":
                doc = json.loads(out.read_text(encoding="utf-8"))[section.id][table.id]
                found += [r[c.id] for c in dated for r in [*doc["rows"], *([doc["total"]] if doc["total"] else [])]]
            elif fmt == "html":
                parser = _Tables()
                parser.feed(out.read_text(encoding="utf-8"))
                header, *rows = parser.tables[f"{section.id}-{table.id}"]
                cells = _columns(header, rows)
                found += [v for c in dated for v in cells[c.title]]
            else:
                sheet = openpyxl.load_workbook(out)[section.title]  # a sheet per section, named by its title
                top = next(cell.row for cell in sheet["A"] if cell.value == table.title)
                header = [cell.value for cell in sheet[top + 1]]
                first = top + 2 + (not table.rows)  # an empty table says "none this week" first
                count = len(table.rows) + (table.total is not None)
                cells = _columns(header, [[cell.value for cell in sheet[r]] for r in range(first, first + count)])
                found += [v for c in dated for v in cells[c.title]]
    return found


@pytest.mark.parametrize("fmt", ["csv", "json", "html", "xlsx"])
def test_every_date_of_every_de_identified_format_is_a_day_covered_or_blank(context, summaries, tmp_path, fmt):
    for summary in summaries:
        covered = (summary.last_day - summary.week.first_day).days + 1
        out = export_summary(context, summary.week.label, fmt, tmp_path / f"{summary.week.label}.{fmt}", True, write)
        cells = _date_cells(fmt, out, _deidentify(summary))
        assert cells, (fmt, summary.week.label)
        for cell in cells:
            # Blank is "" in a CSV file, "–" on a page, None in JSON and in an empty workbook cell;
            # "total" labels a total row (under the workload's Day column).
            if cell in ("", "–", None, "total"):
                continue
            assert 1 <= int(cell) <= covered, (fmt, summary.week.label, cell)


# --- no date outside the days covered can be read back


def _outside_moved(value, first: date, last: date, shift):
    """`value` with every date (or time) outside first..last moved further away from them by a drawn
    number of days, and every alert's age made to agree with its moved raising day."""
    if isinstance(value, datetime) or isinstance(value, date):
        day = value.date() if isinstance(value, datetime) else value
        if day < first:
            return value - timedelta(days=shift())
        if day > last:
            return value + timedelta(days=shift())
        return value
    if isinstance(value, tuple):
        return tuple(_outside_moved(v, first, last, shift) for v in value)
    if is_dataclass(value):
        moved = replace(value, **{f.name: _outside_moved(getattr(value, f.name), first, last, shift)
                                  for f in fields(value)})
        if isinstance(moved, OpenAlert) and moved.raised_on is not None:
            moved = replace(moved, age_days=(last - moved.raised_on).days)  # as alert_counts counts it
        return moved
    return value


@settings(max_examples=40, deadline=None)
@given(st.data())
def test_the_de_identified_summary_is_the_same_whatever_the_dates_outside_it(summaries, data):
    """If every date outside the days covered could be any other such date and the de-identified
    summary would read the same, nothing in it tells what those dates were."""
    drawn: list[int] = []

    def shift() -> int:
        drawn.append(data.draw(st.integers(min_value=1, max_value=3000)))
        return drawn[-1]

    for summary in summaries:
        # The week's own bounds and the preparation day name the report, not a patient: only the
        # sections are moved.
        parts = {f: _outside_moved(getattr(summary, f), summary.week.first_day, summary.last_day, shift)
                 for f in ("census", "alerts", "clinical", "quality", "workload")}
        moved = replace(summary, **parts)
        assert sections(_deidentify(moved)) == sections(_deidentify(summary)), summary.week.label
    assert drawn  # some date was moved
