"""The morning list as of an earlier day (`--today`, README "The date of record"): what was known on
that day, not what the snapshots kept since say. The demo is built on 1 December 2026; its
snapshots are of that day, and it holds patients registered and alerts raised after the days viewed."""

from __future__ import annotations

from datetime import date

import pytest

from caseload.core.model import PatientStatus
from caseload.application import caseload_view
from caseload.application.caseload_view import caseload_since, list_caseload, read_caseload, show_patient
from caseload.application.context import Context
from caseload.application.entries import log_entry
from caseload.application.protocol import load_protocol

BUILD_DAY = date(2026, 12, 1)
# A Sunday a month back (a patient of the demo was registered on 1 November, after it) and the
# Sunday before the build day.
VIEWED = (date(2026, 10, 25), date(2026, 11, 29))


def _context(demo, day: date) -> Context:
    return Context(demo.store, demo.admin, day, load_protocol(demo.store))


@pytest.mark.parametrize("day", VIEWED, ids=str)
def test_only_patients_registered_by_the_day_are_listed(demo, day):
    listed = {line.patient.id for line in list_caseload(_context(demo, day))}
    registered = {p.id for p in demo.store.patients.all()
                  if p.created <= day and p.status is not PatientStatus.DISCHARGED}
    assert listed == registered


def test_a_patient_registered_after_the_day_is_not_there(demo):
    later = [p.id for p in demo.store.patients.all() if p.created > VIEWED[0]]
    assert later  # registered on 1 November
    listed = {line.patient.id for line in list_caseload(_context(demo, VIEWED[0]))}
    assert listed.isdisjoint(later)


@pytest.mark.parametrize("day", VIEWED, ids=str)
def test_days_since_entry_count_to_the_last_entry_by_the_day(demo, day):
    ctx = _context(demo, day)
    lines = list_caseload(ctx)
    for line in lines:
        # The definition, read straight from her current entries: the viewed day minus the latest
        # entry dated on or before it (the snapshots of 1 December gave -2 and less).
        seen = [o.day for o in demo.store.entries.observations_for(line.patient.id) if o.day <= day]
        assert line.days_since_entry == ((day - max(seen)).days if seen else None), line.patient.id
    assert all(line.days_since_entry is None or line.days_since_entry >= 0 for line in lines)


@pytest.mark.parametrize("day", VIEWED, ids=str)
def test_the_row_agrees_with_the_record_of_the_same_day(demo, day):
    ctx = _context(demo, day)
    for line in list_caseload(ctx):
        analysis = show_patient(ctx, line.patient.id).analysis
        assert (line.cycle_day, line.snapshot.cycle_start) == (analysis.cycle_day, analysis.cycle_start)
        assert line.cycle_day is None or line.cycle_day >= 1  # day 1 is the cycle's first day


@pytest.mark.parametrize("day", VIEWED, ids=str)
def test_no_alert_raised_after_the_day_is_shown(demo, day):
    assert any(a.raised_on > day for a in demo.store.alerts.unresolved())
    shown = [a for line in list_caseload(_context(demo, day)) for a in line.alerts]
    assert all(a.raised_on <= day for a in shown)


def test_the_list_of_the_date_of_record_reads_the_kept_snapshots_and_computes_nothing(demo, monkeypatch):
    # The morning list's speed rests on the kept snapshots (DEVELOPERS.md): only a view of an earlier
    # day than theirs computes rows.
    def computed(*_):
        raise AssertionError("a row was computed")

    monkeypatch.setattr(caseload_view, "analyse_patient", computed)
    lines, kept = list_caseload(_context(demo, BUILD_DAY)), demo.store.state.all()
    assert lines and all(line.snapshot == kept[line.patient.id] for line in lines)


def test_a_past_view_brought_up_to_date_is_the_list_a_full_read_gives(demo):
    viewed = _context(demo, VIEWED[1])
    read = read_caseload(viewed)
    patient = read.lines[0].patient.id
    log_entry(_context(demo, BUILD_DAY), patient, "note", "called back", on="today")  # at the date of record
    after = caseload_since(viewed, read.mark, read.lines)
    assert after.mark != read.mark and after.lines == tuple(list_caseload(viewed))
