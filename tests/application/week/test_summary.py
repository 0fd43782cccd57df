"""The weekly summary of the hand-built clinic: every number against the hand-worked tables."""

from __future__ import annotations

import statistics
from datetime import date, timedelta

import pytest
from dateutil.relativedelta import relativedelta

from caseload.application.week.alert_counts import percentile
from caseload.exports.summary_tables import INT, sections
from caseload.application.weekly_summary import compute_summary
from tests.application.week.conftest import W43, W44
from tests.application.week.expected import KEYS, w43

TABLES = KEYS


@pytest.fixture(scope="module")
def summary(clinic):
    return compute_summary(clinic.context(), W43)


@pytest.fixture(scope="module")
def tables(summary):
    return {(s.id, t.id): t for s in sections(summary) for t in s.tables}


@pytest.mark.parametrize("key", TABLES, ids=lambda k: "-".join(k))
def test_every_table_matches_the_hand_worked_week(clinic, tables, key):
    rows, total = w43(clinic.entry_ids)[key]
    assert list(tables[key].rows) == rows
    assert tables[key].total == total


def test_the_summary_has_no_other_tables(tables):
    assert sorted(tables) == sorted(TABLES)


def test_week_facts(summary):
    w = summary.week
    assert (w.label, w.first_day, w.last_day, w.hours, w.timezone) == (
        "2026-W43", date(2026, 10, 19), date(2026, 10, 25), 169, "Europe/London")
    assert not summary.deidentified


def test_numbers_add_up_across_sections(summary, tables):
    c, a, q, wl = summary.census, summary.alerts, summary.quality, summary.workload
    # Every patient at the end came from some status at the start (or was new).
    assert sum(m.patients for m in c.moves) == c.statuses_total.at_end
    assert sum(m.patients for m in c.moves if m.from_status != "new") == c.statuses_total.at_start
    for s in c.statuses:
        assert sum(m.patients for m in c.moves if m.from_status == s.status) == s.at_start
        assert sum(m.patients for m in c.moves if m.to_status == s.status) == s.at_end
    active = c.statuses[0]
    assert active.status == "active"
    assert c.active_total.at_start == active.at_start and c.active_total.at_end == active.at_end
    # Alerts: the raised total is the raised event count; staff handling is the ack/snooze/resolve count.
    events = {e.event: e.count for e in a.actions}
    assert a.raised_total.total == events["raised"]
    assert wl.staff_total.acknowledged == events["acknowledged"] == a.ack_all.acknowledged
    assert wl.staff_total.snoozed == events["snoozed"]
    assert wl.staff_total.resolved == events["resolved"]
    # Corrections and voids in the workload are the ones listed under data quality.
    assert wl.staff_total.corrections == q.reasons_total.corrections == 1
    assert wl.staff_total.voids == q.reasons_total.voids == 2
    assert wl.days_total.total == wl.staff_total.entries == wl.roles_total.entries
    for key in (("census", "by_nurse"), ("alerts", "raised"), ("workload", "days"), ("workload", "staff")):
        table = tables[key]
        for i, column in enumerate(table.columns):
            if column.kind == INT:
                assert sum(row[i] for row in table.rows) == table.total[i], (key, column.id)


@pytest.mark.parametrize(
    "values",
    [[2.5, 81.0], [0.5, 4.0, 26.0], [0.5, 1.0, 2.5, 4.0, 14.0, 26.0, 81.0], [3.0, 1.0, 4.0, 1.0, 5.0, 9.0, 2.0, 6.0]],
)
def test_percentiles_agree_with_the_standard_library(values):
    # Reference: statistics.quantiles(method="inclusive") (linear interpolation, the
    # same as numpy's default and a spreadsheet's PERCENTILE.INC).
    deciles = statistics.quantiles(values, n=10, method="inclusive")
    assert percentile(values, 0.9) == pytest.approx(deciles[8])
    assert percentile(values, 0.5) == pytest.approx(statistics.median(values))


def test_a_single_value_is_its_own_median_and_90th_percentile():
    assert percentile([14.0], 0.5) == percentile([14.0], 0.9) == 14.0


def test_naegele_due_date_against_calendar_arithmetic(summary):
    (positive,) = summary.clinical.pregnancies
    lmp = date(2026, 9, 21)
    # Naegele's rule as taught: LMP + 1 year - 3 months + 7 days (python-dateutil as the reference).
    assert positive.edd == lmp + relativedelta(years=1, months=-3, days=7) == lmp + timedelta(days=280)
    assert positive.edd_method == "naegele"


@pytest.fixture(scope="module")
def next_week(clinic):
    return compute_summary(clinic.context(), W44)


def test_the_week_after_crosses_the_month_end(next_week):
    w = next_week.week
    assert w.days == tuple(date.fromisocalendar(2026, 44, i) for i in range(1, 8))  # stdlib reference
    assert (w.first_day, w.last_day, w.hours) == (date(2026, 10, 26), date(2026, 11, 1), 168)
    days = {d.day: d.by_role for d in next_week.workload.days}
    # P2's temperature at 00:30 GMT on Monday 26 (phone) and P1's hCG on Sunday 1 November (nurse).
    assert days[date(2026, 10, 26)] == (1, 0, 0, 0)
    assert days[date(2026, 11, 1)] == (0, 1, 0, 0)
    assert next_week.workload.days_total.total == 2


def test_the_week_after_starts_where_the_week_ended(summary, next_week):
    before, after = summary.census, next_week.census
    assert [(s.status, s.at_start) for s in after.statuses] == [(s.status, s.at_end) for s in before.statuses]
    assert {m.measure: m.patients for m in after.movement}["paused"] == 1  # P2, Monday 00:30 GMT
    assert [(s.status, s.at_end) for s in after.statuses] == [
        ("active", 5), ("paused", 1), ("discharged", 1), ("pregnant", 1)]
    assert {k.kind: k.total for k in next_week.alerts.raised}["period-overdue"] == 1
    assert next_week.alerts.raised_total.total == 1


def test_a_pregnancy_dated_by_ovulation(next_week):
    (positive,) = next_week.clinical.pregnancies
    # P1: shift confirmed with first high on 20 Oct, so ovulation is dated to 19 Oct; due date is
    # ovulation + 266 days (ACOG Committee Opinion 700, conception + 266), checked with stdlib dates.
    assert (positive.patient.id, positive.tested_on) == ("P1", date(2026, 11, 1))
    assert positive.edd == date(2026, 10, 19) + timedelta(days=266) == date(2027, 7, 12)
    assert positive.edd_method == "ovulation"


def test_no_shift_is_confirmed_in_the_week_after(next_week):
    assert {c.event: c.patients for c in next_week.clinical.counts}["shift-confirmed"] == 0
