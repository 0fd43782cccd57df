"""The alert lifecycle on a real store: raised once, handled by someone recorded, auto-resolved with
a reason, escalated, snoozed and back; every transition in the audit trail, refreshes idempotent."""

from __future__ import annotations

import json
from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.model import AlertState, Role, Severity
from caseload.core.parse import InputError
from caseload.application import alert_handling as service
from caseload.application.caseload_view import list_caseload
from caseload.application.recompute import refresh_all
from caseload.application.entries import amend_entry, log_entry
from caseload.application.errors import NotFound, Refused
from caseload.application.csv_import import import_csv
from caseload.application.protocol import protocol_in_use, use_protocol
from tests.conftest import TODAY


def only(ctx, kind: str | None = None, state: str = "all"):
    (alert,) = service.list_alerts(ctx, state=state, kind=kind)
    return alert


def audit(store, prefix: str = "alert."):
    return [(r.action, r.by_staff, json.loads(r.after)) for r in store.audit.rows(prefix)]


def history_csv(patient_id: str, current_start: date, current_days: int) -> bytes:
    """Six 28-day cycles of bleeds, then the current cycle's bleed with temperatures on its first days."""
    lines = ["patient,day,kind,value,time"]
    start = current_start - timedelta(days=6 * 28)
    while start < current_start:
        lines += [f"{patient_id},{(start + timedelta(days=i)).isoformat()},bleed,moderate," for i in range(4)]
        start += timedelta(days=28)
    for i in range(current_days):
        d = (current_start + timedelta(days=i)).isoformat()
        lines += [f"{patient_id},{d},bleed,moderate,", f"{patient_id},{d},temp,36.45,06:30"]
    return ("\n".join(lines) + "\n").encode()


@pytest.fixture
def fever(as_role, patient):
    """A fever logged by the phone line yesterday: the alert as stored, and the entry."""
    phone = as_role(Role.PHONE)
    done = log_entry(phone, patient.id, "temp", "38.4", on="yesterday", at="06:40")
    (alert,) = done.refreshed.raised  # the phone line's (caller's) view of it
    return phone.store.alerts.get(alert.id), done.entry


def test_a_fever_is_raised_once_with_its_evidence_and_audited(fever, store, staffed):
    alert, _ = fever
    assert (alert.kind, alert.severity, alert.state, alert.raised_on) == ("fever", Severity.TODAY, AlertState.OPEN, TODAY)
    assert alert.evidence["celsius"] == 38.4 and alert.source == "common practice"  # 38.0 C: common practice
    (action, by, after), = audit(store)
    assert (action, by) == ("alert.raise", "phone1")
    assert (after["patient_id"], after["kind"], after["severity"], after["state"]) == ("P0001", "fever", "today", "open")


def test_phone_staff_may_not_handle_a_clinical_alert(fever, as_role):
    alert, _ = fever
    with pytest.raises(Refused, match="fever is a clinical alert: a nurse, supervisor or admin handles it"):
        service.acknowledge(as_role(Role.PHONE), alert.id, "told her to rest")


def test_a_clinical_alert_needs_a_note(fever, as_role, store):
    alert, _ = fever
    before = store.audit.count()
    with pytest.raises(InputError, match="fever is a clinical alert: say what was done with --note"):
        service.acknowledge(as_role(Role.NURSE), alert.id, "   ")
    assert store.audit.count() == before and store.alerts.get(alert.id).state is AlertState.OPEN


def test_acknowledged_then_refresh_does_not_raise_it_again(fever, as_role, store):
    alert, _ = fever
    nurse = as_role(Role.NURSE)
    done = service.acknowledge(nurse, alert.id, "called: flu, reading flagged")
    assert (done.state, done.handled_by, done.note) == (AlertState.ACKNOWLEDGED, "nurse1", "called: flu, reading flagged")
    rows, audits = store.alerts.count(), store.audit.count()
    report = refresh_all(nurse)
    assert (report.raised, report.resolved) == (0, 0)
    assert store.alerts.count() == rows and store.audit.count() == audits
    assert service.list_alerts(nurse) == []  # off the queue while acknowledged
    with pytest.raises(Refused, match="already acknowledged by nurse1"):
        service.acknowledge(nurse, alert.id, "again")


def test_a_corrected_reading_auto_resolves_and_is_raised_again_when_corrected_back(fever, as_role, store):
    alert, entry = fever
    nurse = as_role(Role.NURSE)
    fixed = amend_entry(nurse, entry.id, "36.84", "misheard on the phone")
    resolved = store.alerts.get(alert.id)
    assert resolved.state is AlertState.RESOLVED and resolved.handled_by == "nurse1"
    assert resolved.resolved_reason == "auto: the entries behind it were corrected or voided"
    again = amend_entry(nurse, fixed.entry.id, "38.5", "it was a fever after all")
    (back,) = again.refreshed.raised  # same reading day, same key: the condition came back
    assert (back.key, back.state, back.evidence["celsius"]) == (alert.key, AlertState.OPEN, 38.5)
    assert store.alerts.get(alert.id).state is AlertState.RESOLVED  # the first episode's row is history
    actions = [(a, by) for a, by, _ in audit(store)]
    assert actions == [("alert.raise", "phone1"), ("alert.auto-resolve", "nurse1"), ("alert.raise", "nurse1")]


def test_resolve_by_a_nurse_then_nothing_left_to_do(fever, as_role, store):
    alert, _ = fever
    nurse = as_role(Role.NURSE)
    done = service.resolve(nurse, alert.id, "seen in clinic, antibiotics")
    assert done.state is AlertState.RESOLVED and done.resolved_reason is None
    (action, by, after) = audit(store)[-1]
    assert (action, by, after["note"], after["handled_by"]) == ("alert.resolve", "nurse1", "seen in clinic, antibiotics", "nurse1")
    with pytest.raises(Refused, match=f"alert {alert.id} is resolved .by nurse1.: nothing left to do"):
        service.snooze(nurse, alert.id, "+2", "later")


def test_snooze_until_a_day_then_back_on_the_lists(fever, as_role, store):
    alert, _ = fever
    nurse = as_role(Role.NURSE)
    done = service.snooze(nurse, alert.id, "+2", "recheck after the weekend")
    assert done.state is AlertState.SNOOZED and done.snooze_until == TODAY + timedelta(days=2)
    tomorrow = as_role(Role.NURSE, TODAY + timedelta(days=1))
    assert service.list_alerts(tomorrow) == [] and list_caseload(tomorrow)[0].alerts == ()
    due = as_role(Role.NURSE, TODAY + timedelta(days=2))
    assert [a.id for a in service.list_alerts(due)] == [alert.id]  # shown open before any refresh
    assert list_caseload(due)[0].top_alert.state is AlertState.OPEN
    refresh_all(due)
    back = store.alerts.get(alert.id)
    assert back.state is AlertState.OPEN and back.note == "recheck after the weekend"
    assert [a for a, _, _ in audit(store)][-2:] == ["alert.snooze", "alert.reopen"]


def test_snooze_refusals(fever, as_role):
    alert, _ = fever
    nurse = as_role(Role.NURSE)
    with pytest.raises(InputError, match="is not after today"):
        service.snooze(nurse, alert.id, TODAY.isoformat(), "x")
    with pytest.raises(NotFound, match="no alert '99'"):
        service.snooze(nurse, 99, "+1", "x")


def test_logging_gap_routine_escalated_then_auto_resolved(as_role, patient, store):
    start = TODAY - timedelta(days=4)  # today is cycle day 5; fertile days expected from day 6
    import_csv(as_role(Role.NURSE), history_csv(patient.id, start, 1))
    gap = only(as_role(Role.NURSE), "logging-gap")
    assert gap.severity is Severity.INFO and gap.evidence["whole_days"] == 3  # days 2-4 (common practice: 3)
    assert gap.evidence["expected_fertile_days"][0] == (TODAY + timedelta(days=1)).isoformat()
    phone = as_role(Role.PHONE)
    service.acknowledge(phone, gap.id, None)  # routine: the phone line may, no note needed
    later = as_role(Role.PHONE, TODAY + timedelta(days=3))  # the gap now covers the expected fertile days
    report = refresh_all(later)
    worse = store.alerts.get(gap.id)
    assert report.raised == 1 and worse.severity is Severity.SOON and worse.state is AlertState.OPEN
    log_entry(later, patient.id, "temp", "36.50")
    done = store.alerts.get(gap.id)
    assert done.state is AlertState.RESOLVED and done.handled_by == "phone1"
    assert done.resolved_reason == f"auto: an entry was logged for {(TODAY + timedelta(days=3)).isoformat()}"
    trail = [(a, by, after["severity"], after["state"]) for a, by, after in audit(store) if after["kind"] == "logging-gap"]
    assert trail == [
        ("alert.raise", "nurse1", "info", "open"),
        ("alert.ack", "phone1", "info", "acknowledged"),
        ("alert.escalate", "phone1", "soon", "open"),
        ("alert.auto-resolve", "phone1", "soon", "resolved"),
    ]


def test_a_full_refresh_twice_changes_nothing(as_role, patient, store):
    nurse = as_role(Role.NURSE)
    import_csv(nurse, history_csv(patient.id, TODAY - timedelta(days=20), 21))
    log_entry(nurse, patient.id, "symptom", "headache")
    later = as_role(Role.NURSE, TODAY + timedelta(days=5))
    first = refresh_all(later)
    rows, audits = store.alerts.count(), store.audit.count()
    assert first.raised + first.resolved > 0
    second = refresh_all(later)
    assert (second.raised, second.resolved) == (0, 0)
    assert store.alerts.count() == rows and store.audit.count() == audits


def test_list_filters(fever, as_role, store):
    nurse = as_role(Role.NURSE)
    assert [a.kind for a in service.list_alerts(nurse, kind="fever", nurse="nurse1")] == ["fever"]
    assert service.list_alerts(nurse, nurse="super1") == []
    with pytest.raises(InputError, match="state 'closed' not accepted: use one of open, all"):
        service.list_alerts(nurse, state="closed")
    with pytest.raises(InputError, match="alert kind 'fevers' not known"):
        service.list_alerts(nurse, kind="fevers")
    with pytest.raises(NotFound):
        service.list_alerts(nurse, nurse="nobody")


def test_discharge_resolves_everything_with_the_reason(fever, as_role, store):
    from caseload.application.patients import update_patient

    alert, _ = fever
    update_patient(as_role(Role.NURSE), "P0001", status="discharged")
    done = store.alerts.get(alert.id)
    assert (done.state, done.resolved_reason, done.handled_by) == (AlertState.RESOLVED, "auto: patient discharged", "nurse1")


def _fevers(as_role, patient, readings: list[str]) -> None:
    phone = as_role(Role.PHONE)
    for back, reading in enumerate(readings, start=1):
        log_entry(phone, patient.id, "temp", reading, on=(TODAY - timedelta(days=back)).isoformat(), at="06:40")


def _under(ctx, **settings):
    return replace(ctx, protocol=replace(ctx.protocol, **settings))


def test_a_refresh_that_would_auto_resolve_every_alert_stops_and_writes_nothing(as_role, patient, store):
    _fevers(as_role, patient, ["38.2"] * 6)  # six fevers by the default 38.0 C (common practice)
    rows, audits = [a.state for a in store.alerts.all()], store.audit.count()
    wrong = _under(as_role(Role.NURSE), fever_c=39.0)  # a wrong protocol: none of them is a fever any more
    with pytest.raises(Refused) as err:
        refresh_all(wrong)
    assert str(err.value).startswith("refresh stopped: it would auto-resolve 6 of the 6 unresolved alerts at once")
    assert "\n" not in str(err.value) and "nothing was written" in str(err.value)
    assert [a.state for a in store.alerts.all()] == rows and store.audit.count() == audits


def test_a_refresh_resolving_under_half_or_fewer_than_five_goes_ahead(as_role, patient, store):
    _fevers(as_role, patient, ["38.2"] * 6 + ["38.8"] * 7)  # 13 alerts
    report = refresh_all(_under(as_role(Role.NURSE), fever_c=38.5))  # 6 of 13: under half
    assert report.resolved == 6
    assert refresh_all(_under(as_role(Role.NURSE), fever_c=39.0, mass_resolve_min=8)).resolved == 7  # 7 of 7, under 8


def test_a_protocol_that_would_auto_resolve_most_alerts_is_refused_before_it_is_stored(as_role, patient, store, tmp_path):
    _fevers(as_role, patient, ["38.2"] * 6)
    path = tmp_path / "protocol.toml"
    path.write_text("fever_c = 39.0\n", encoding="utf-8")
    with pytest.raises(Refused, match="refresh stopped: it would auto-resolve 6 of the 6"):
        use_protocol(as_role(Role.ADMIN), str(path))
    assert protocol_in_use(store).version == 1 and not store.audit.rows("protocol.")
