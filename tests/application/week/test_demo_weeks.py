"""The demo's last eight complete weeks, each summarised as a supervisor would read it: a census
that adds up, patients charting, alerts raised and handled with response times."""

from __future__ import annotations

from datetime import date, timedelta

import pytest

from caseload.application.context import Context
from caseload.application.protocol import load_protocol
from caseload.application.weekly_summary import compute_summary, export_summary, last_complete_week
from caseload.exports.summary_files import write

BUILD_DAY = date(2026, 12, 1)  # a Tuesday: its week is in progress
WEEKS = 8


def context(demo) -> Context:
    return Context(demo.store, demo.admin, BUILD_DAY, load_protocol(demo.store))


def label(day: date) -> str:
    year, week, _ = day.isocalendar()  # ISO 8601 weeks, as Python's calendar counts them
    return f"{year}-W{week:02d}"


@pytest.fixture(scope="module")
def summaries(demo):
    last = date.fromisocalendar(*BUILD_DAY.isocalendar()[:2], 1) - timedelta(days=7)
    return [compute_summary(context(demo), label(last - timedelta(weeks=k))) for k in range(WEEKS)]


def test_the_default_week_is_the_last_complete_one():
    assert last_complete_week(BUILD_DAY) == "2026-W48"  # Mon 23 to Sun 29 Nov 2026 (ISO 8601)


@pytest.mark.parametrize("k", range(WEEKS))
def test_census_at_start_plus_moves_is_census_at_end(summaries, k):
    c = summaries[k].census
    assert summaries[k].complete
    moved_in = {s.status: 0 for s in c.statuses}
    moved_out = dict(moved_in)
    for m in c.moves:
        if m.from_status != m.to_status:
            moved_out[m.from_status] = moved_out.get(m.from_status, 0) + m.patients
            moved_in[m.to_status] += m.patients
    for s in c.statuses:
        assert s.at_start + moved_in[s.status] - moved_out.get(s.status, 0) == s.at_end, s.status
    registered = next(m.patients for m in c.movement if m.measure == "registered")
    assert c.statuses_total.at_start + registered == c.statuses_total.at_end
    assert c.statuses_total.at_start >= 30


@pytest.mark.parametrize("k", range(WEEKS))
def test_each_week_has_charting_and_handled_alerts(summaries, k):
    s = summaries[k]
    assert s.quality.coverage_total.patients > 0 and s.quality.coverage_total.share > 0.8
    assert s.alerts.raised_total.total > 0
    handled = {a.event: a.count for a in s.alerts.actions}
    assert handled["acknowledged"] > 0 and handled["resolved"] + handled["auto-resolved"] > 0
    assert s.alerts.ack_all.acknowledged > 0 and 0 < s.alerts.ack_all.median_hours < 48
    assert sum(w.entries for w in s.workload.staff) > 0


def test_the_weeks_show_the_clinic_changing(summaries):
    moves = {m.measure: sum(x.census.movement[i].patients for x in summaries)
             for i, m in enumerate(summaries[0].census.movement)}
    assert moves["registered"] >= 2 and moves["became pregnant"] >= 1
    assert moves["discharged"] >= 1 and moves["paused"] >= 1
    assert sum(len(s.quality.changes) for s in summaries) >= 2
    assert sum(s.clinical.outcomes_total.referrals for s in summaries) >= 1
    assert sum(s.clinical.outcomes_total.pregnancies for s in summaries) >= 1
    notes = [n for s in summaries for n in s.alerts.urgent_notes]
    assert notes and all(n.note for n in notes)


def test_the_current_week_is_marked_in_progress(demo):
    assert not compute_summary(context(demo), label(BUILD_DAY)).complete


def test_a_demo_week_exports_in_every_format(demo, tmp_path):
    for fmt, out in (("xlsx", "w.xlsx"), ("html", "w.html"), ("json", "w.json"), ("csv", "w-csv")):
        assert export_summary(context(demo), last_complete_week(BUILD_DAY), fmt, tmp_path / out, False, write).exists()
    nurses = (tmp_path / "w-csv" / "census-by_nurse.csv").read_bytes()
    assert nurses.startswith(b"\xef\xbb\xbf")  # RFC 3629: the UTF-8 byte order mark
