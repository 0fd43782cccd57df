"""A summary made before its week is over (a week in progress, or a view of an earlier day with
`--today`) counts the days up to that day and nothing after, though the store holds what came later.

The hand-built clinic of conftest.py holds all of 2026-W43 and after; its summary as of Thursday
22 October is worked out by hand below from the same history, and must match it exactly.
"""

from __future__ import annotations

from datetime import UTC, date, datetime, timedelta

import pytest

from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from caseload.application.week.iso_weeks import iso_week
from caseload.application.week.period import covered
from caseload.application.weekly_summary import compute_summary
from caseload.exports.summary_tables import sections
from tests.application.week.conftest import W43
from tests.application.week.expected import d, name, w43

THURSDAY = date(2026, 10, 22)  # day 4 of 2026-W43 (Monday 19 October, ISO 8601)


@pytest.fixture(scope="module")
def thursday(clinic):
    return compute_summary(clinic.context(today=THURSDAY), W43)


@pytest.fixture(scope="module")
def tables(thursday):
    return {(s.id, t.id): (list(t.rows), t.total) for s in sections(thursday) for t in s.tables}


@pytest.fixture(scope="module")
def whole_week(clinic):
    return w43(clinic.entry_ids)


def test_the_last_day_covered_is_the_day_prepared_as_of_or_sunday():
    week = iso_week(W43, "Europe/London")
    assert covered(week, THURSDAY).last_day == THURSDAY
    assert covered(week, date(2026, 11, 10)).last_day == date(2026, 10, 25)
    thursday = covered(week, THURSDAY)
    assert thursday.days == tuple(date(2026, 10, 19) + timedelta(days=i) for i in range(4))
    # Friday 23 October 00:00 BST (UTC+1) is 22 October 23:00 UTC: the first instant not covered.
    assert thursday.end == datetime(2026, 10, 22, 23, tzinfo=UTC)
    assert not thursday.contains(thursday.end) and thursday.contains(thursday.end - timedelta(seconds=1))


def test_the_summary_says_it_covers_up_to_thursday(thursday):
    assert (thursday.last_day, thursday.prepared_on, thursday.complete) == (THURSDAY, THURSDAY, False)


def test_workload_has_monday_to_thursday_only(tables, whole_week):
    # The hand-worked week's first four days (expected.py); Friday to Sunday's 14 entries are not there.
    rows, _ = whole_week[("workload", "days")]
    assert tables[("workload", "days")] == (rows[:4], ("total", 12, 1, 0, 0, 13))


def test_the_census_stands_at_thursdays_end(tables):
    # P4 discharged Tue, P5 registered Wed, P6 active again Thu 12:00; P3 became pregnant on Friday.
    assert tables[("census", "statuses")] == (
        [("active", 6, 7), ("paused", 1, 0), ("discharged", 0, 1), ("pregnant", 0, 0)], ("total", 7, 8))


def test_alert_figures_stop_at_thursday(tables):
    # Raised Mon-Thu: A1 A5 A15, A2, A6, A8 A14 (A4 and A16 Fri, A3 and A7 Sat are not);
    # acknowledged A1 A15 A5 A14; snoozed A2; resolved A9 A12; auto-resolved A1; escalated A6; reopened A12.
    assert tables[("alerts", "actions")] == ([
        ("raised", 7), ("acknowledged", 4), ("snoozed", 1), ("resolved", 2), ("auto-resolved", 1),
        ("escalated", 1), ("reopened", 1)], None)
    # Hours to first ack: today A1 2.5; soon A15 0.5, A14 4.0, A5 26.0 (as in expected.py). All four
    # by linear interpolation: median at rank 1.5, 2.5 + 0.5 * 1.5 = 3.25; 90th at rank 2.7,
    # 4.0 + 0.7 * 22.0 = 19.4.
    assert tables[("alerts", "ack_time")] == ([
        ("urgent", 0, None, None), ("today", 1, 2.5, 2.5), ("soon", 3, 4.0, 21.6), ("info", 0, None, None)],
        ("all", 4, 3.25, 19.4))
    # At Thursday's end: today A6 open (escalated Thu, due 22 Oct: past due on the 22nd), A11
    # acknowledged; soon A10 open (due 7 Oct, past) and A8 open (due 29 Oct), A5 A15 A14 acknowledged,
    # A2 snoozed until 28 Oct.
    assert tables[("alerts", "week_end")] == ([
        ("urgent", 0, 0, 0, 0), ("today", 1, 1, 1, 0), ("soon", 2, 1, 3, 1), ("info", 0, 0, 0, 0)],
        ("total", 3, 2, 4, 1))


def test_ages_count_to_thursday_under_the_nurse_of_thursday(tables):
    # A11 raised 1 Oct: 21 days to 22 Oct (not 24, to Sunday); A6 raised Wed 21: 1 day. P7 was still
    # nurse1's on Thursday (moved to nurse2 on Saturday).
    assert tables[("alerts", "open_at_end")] == ([
        ("nurse1", "P2", name("P2"), "prolonged-bleeding", "prolonged bleeding", "today", "acknowledged",
         d("2026-10-01"), 21),
        ("nurse1", "P7", name("P7"), "no-thermal-shift", "no thermal shift", "today", "open", d("2026-10-21"), 1),
    ], None)


def test_clinical_events_up_to_thursday(tables, whole_week):
    rows, _ = whole_week[("clinical", "events")]
    # The hand-worked events are in day order: the nine up to Thursday, not P6's window (Fri) nor
    # P3's hCG rise (Sat).
    assert tables[("clinical", "events")] == ([r for r in rows if r[-1] <= THURSDAY], None)
    assert len(tables[("clinical", "events")][0]) == 9
    assert tables[("clinical", "pregnancies")] == whole_week[("clinical", "pregnancies")]  # P3's hCG, Thursday


def test_coverage_and_gaps_count_four_days(tables):
    # Charting, active on Monday and on Thursday: P1 (4 of 4 days), P2 (Mon, Tue: 2), P7 (Thursday's
    # voided: 3), all nurse1's on Thursday; P8 unassigned, none. 4 patients x 4 days = 16 expected,
    # 9 logged: 9 / 16 = 0.5625.
    assert tables[("quality", "coverage")] == (
        [("nurse1", 3, 12, 9, 0.75), ("unassigned", 1, 4, 0, 0.0)], ("total", 4, 16, 9, 0.5625))
    # P8's gap is the four days so far; P2's Wednesday and Thursday (2) is under the protocol's 3.
    assert tables[("quality", "gaps")] == ([("P8", name("P8"), "unassigned", 0, 4)], None)


def test_a_demo_week_viewed_on_its_thursday_holds_nothing_after_it(demo):
    # The demo is built on Tuesday 1 December 2026, so W48 (23 to 29 November) is whole in the store.
    as_of = date(2026, 11, 26)
    s = compute_summary(Context(demo.store, demo.admin, as_of, load_protocol(demo.store)), "2026-W48")
    days = [date(2026, 11, 23) + timedelta(days=i) for i in range(4)]
    assert [row.day for row in s.workload.days] == days
    assert s.clinical.events and all(e.day <= as_of for e in s.clinical.events)
    assert all(p.tested_on <= as_of for p in s.clinical.pregnancies)
    assert s.alerts.open_at_end
    assert all(o.raised_on <= as_of and o.age_days == (as_of - o.raised_on).days for o in s.alerts.open_at_end)
    assert all(c.expected == 4 * c.patients for c in (*s.quality.coverage, s.quality.coverage_total))
    assert all(g.longest_gap <= 4 for g in s.quality.gaps)
    assert all(c.at.date() <= as_of for c in s.quality.changes)
