"""A record's alert history on a real SQLite file: its resolved alerts, and every step each alert
went through (who handled it, how, with which note), read back from the audit trail."""

from __future__ import annotations

from datetime import datetime, timezone

from caseload.application import alert_handling as service
from caseload.application.caseload_view import show_patient
from caseload.application.entries import amend_entry, log_entry
from caseload.core.model import AlertState, AlertStep, Role
from caseload.presentation.alert_evidence import step_sentence


def test_a_handled_alert_keeps_each_step_with_its_note(as_role, patient):
    nurse = as_role(Role.NURSE)
    log_entry(as_role(Role.PHONE), patient.id, "temp", "38.4", on="yesterday")  # 38.0 C: common practice
    (fever,) = service.list_alerts(nurse)
    service.acknowledge(nurse, fever.id, "called: flu since Sunday")
    service.snooze(nurse, fever.id, "+2", "recheck on Thursday")
    service.resolve(nurse, fever.id, "recovered, reading flagged")
    record = show_patient(nurse, patient.id)
    assert record.alerts == () and [a.id for a in record.resolved] == [fever.id]
    steps = record.steps_of(fever.id)
    assert [(s.action, s.by, s.note) for s in steps] == [
        ("raise", "phone1", None), ("ack", "nurse1", "called: flu since Sunday"),
        ("snooze", "nurse1", "recheck on Thursday"), ("resolve", "nurse1", "recovered, reading flagged"),
    ]
    assert steps[2].snooze_until.isoformat() == "2026-12-03"  # TODAY (1 Dec) + 2 days


def test_an_alert_resolved_automatically_says_why(as_role, patient):
    nurse = as_role(Role.NURSE)
    logged = log_entry(as_role(Role.PHONE), patient.id, "temp", "38.4", on="yesterday")
    amend_entry(nurse, logged.entry.id, "36.6", "misread the thermometer")  # no fever any more
    record = show_patient(nurse, patient.id)
    (fever,) = record.resolved
    assert fever.state is AlertState.RESOLVED
    last = record.steps_of(fever.id)[-1]
    assert last.action == "auto-resolve" and last.reason.startswith("auto: ")


def test_each_step_reads_as_one_line():
    at = datetime(2026, 12, 1, 9, 30, tzinfo=timezone.utc)
    snoozed = AlertStep(7, "snooze", "nurse1", at, "recheck", datetime(2026, 12, 3).date())
    assert step_sentence(snoozed) == "1 Dec 09:30 snoozed by nurse1 until 3 Dec: recheck"
    auto = AlertStep(7, "auto-resolve", "phone1", at, reason="auto: a period started")
    assert step_sentence(auto) == "1 Dec 09:30 resolved automatically: a period started"
