"""The caller's view of an alert on a real SQLite file: phone staff get a clinical alert from every
use case as the kind, severity, state and dates with the protocol's words for the caller, and none of
its evidence, rule, source or handling notes; clinical staff get it whole. Permissions are checked in
the services, whatever a front end shows (design: safety and access)."""

from __future__ import annotations

from dataclasses import replace

import pytest

from caseload.application import alert_handling as service
from caseload.application.caseload_view import caseload_since, list_caseload, read_caseload, show_patient
from caseload.application.entries import amend_entry, log_entry
from caseload.application.protocol import load_protocol, use_protocol
from caseload.core.alerts import ALERT_KINDS, CLINICAL_KINDS
from caseload.core.model import Alert, Role
from caseload.core.settings import DEFAULT_PROTOCOL

CALLER = DEFAULT_PROTOCOL.caller_message


def callers_view(shown: Alert, stored: Alert, words: str = CALLER) -> bool:
    """`shown` is `stored` with the clinical side taken off and the words for the caller put in."""
    return shown == replace(stored, message=words, evidence={}, rule="", source="", note=None, resolved_reason=None)


@pytest.fixture
def fever(as_role, patient, store):
    """38.4 C logged by the phone line yesterday (38.0 C or more is a fever: common practice); the
    write's result and the alert as stored."""
    done = log_entry(as_role(Role.PHONE), patient.id, "temp", "38.4", on="yesterday")
    (raised,) = done.refreshed.raised
    return done, store.alerts.get(raised.id)


@pytest.fixture
def rising_hcg(as_role, patient):
    """Day 1 on 1 Nov, then serum hCG 120 IU/L on 28 Nov and 150 IU/L on 30 Nov, both at 09:00: a
    pregnancy whose hCG rises 25% in 48 h, under the 53% minimum of Barnhart 2004."""
    nurse = as_role(Role.NURSE)
    for on in ("2026-11-01", "2026-11-02"):
        log_entry(nurse, patient.id, "bleed", "moderate", on=on)
    log_entry(nurse, patient.id, "hcg", "120", on="2026-11-28", at="09:00")
    log_entry(nurse, patient.id, "hcg", "150", on="2026-11-30", at="09:00")
    return patient


@pytest.mark.parametrize("role, whole", [(Role.PHONE, False), (Role.NURSE, True), (Role.SUPERVISOR, True),
                                         (Role.ADMIN, True)])
def test_the_record_gives_clinical_staff_the_hcg_trend_and_the_phone_line_none(as_role, rising_hcg, role, whole):
    nursed = show_patient(as_role(Role.NURSE), rising_hcg.id).analysis
    # Log-linear: 150 / 120 = 1.25 in 48 h, a rise of 25%, doubling in 48 h x ln 2 / ln 1.25 = 6.21 days
    # (Barnhart 2004 reads the rise per 48 h; stdlib math for the figures).
    assert (nursed.pregnancy.hcg_trend.rise_48h, nursed.pregnancy.hcg_trend.doubling_days) == (0.25, 6.21)
    shown = show_patient(as_role(role), rising_hcg.id).analysis
    # The trend is the hcg-rise-low alert's evidence: phone staff get the pregnancy without it.
    unseen = replace(nursed, pregnancy=replace(nursed.pregnancy, hcg_trend=None), hcg_trend=None)
    assert shown == (nursed if whole else unseen)
    assert shown.hcg == nursed.hcg  # the values logged stay


@pytest.mark.parametrize("role, whole", [(Role.PHONE, False), (Role.NURSE, True), (Role.SUPERVISOR, True),
                                         (Role.ADMIN, True)])
def test_the_queue_gives_clinical_staff_the_whole_alert_and_the_phone_line_the_callers_view(as_role, fever, role,
                                                                                            whole):
    _, stored = fever
    (shown,) = service.list_alerts(as_role(role))
    assert shown == stored if whole else callers_view(shown, stored)
    assert stored.evidence["celsius"] == 38.4 and "38.4" in stored.message  # what the clerk must not get


def test_every_way_an_alert_leaves_the_application_gives_the_phone_line_the_callers_view(as_role, patient, fever):
    done, stored = fever
    phone, nurse = as_role(Role.PHONE), as_role(Role.NURSE)
    (raised,) = done.refreshed.raised
    assert callers_view(raised, stored)  # the write's own result, which the interface shows at once
    (record_alert,) = show_patient(phone, patient.id).alerts
    (line,) = list_caseload(phone)
    assert callers_view(record_alert, stored) and callers_view(line.top_alert, stored)
    read = read_caseload(phone)
    # Eleven days of heavy bleeding: prolonged bleeding, more than 8 days (FIGO 2018).
    for day in range(-11, 1):
        log_entry(phone, patient.id, "bleed", "heavy", on=str(day) if day else "today")
    (line,) = caseload_since(phone, read.mark, read.lines).lines
    bleed = next(a for a in line.alerts if a.kind == "prolonged-bleeding")
    assert callers_view(bleed, phone.store.alerts.get(bleed.id))
    (nursed,) = [a for a in show_patient(nurse, patient.id).alerts if a.kind == "prolonged-bleeding"]
    assert nursed.evidence and nursed.message != CALLER


def test_the_history_tells_the_phone_line_who_and_when_but_no_note_or_reason(as_role, patient, fever):
    done, stored = fever
    phone, nurse = as_role(Role.PHONE), as_role(Role.NURSE)
    service.acknowledge(nurse, stored.id, "rang her: 38.9 this evening")
    amend_entry(nurse, done.entry.id, "36.6", "misread the thermometer")  # no fever any more: resolved itself
    nursed, clerked = show_patient(nurse, patient.id), show_patient(phone, patient.id)
    (resolved,) = clerked.resolved
    assert callers_view(resolved, nursed.resolved[0])
    assert nursed.resolved[0].resolved_reason.startswith("auto: ") and resolved.resolved_reason is None
    assert [(s.action, s.by, s.at) for s in clerked.steps] == [(s.action, s.by, s.at) for s in nursed.steps]
    assert [(s.note, s.reason) for s in clerked.steps] == [(None, None)] * 3  # raise, ack, auto-resolve
    assert nursed.steps[1].note == "rang her: 38.9 this evening"


@pytest.mark.parametrize("kind", ALERT_KINDS)
def test_only_clinical_kinds_are_kept_to_the_callers_view(staffed, kind):
    # A logging gap is the phone line's own work (it handles it); every other kind is clinical.
    assert service.caller_view_only(staffed[Role.PHONE], kind) is (kind in CLINICAL_KINDS)
    assert service.caller_view_only(staffed[Role.NURSE], kind) is False


def test_a_routine_alert_reaches_the_phone_line_whole(as_role, fever):
    _, stored = fever
    gap = replace(stored, kind="logging-gap", message="No entry for 4 days.", evidence={"gap_start": "2026-11-27"})
    assert service.as_seen(as_role(Role.PHONE), gap) is gap


def test_the_callers_words_are_those_of_the_protocol_in_force(as_role, store, fever, tmp_path):
    _, stored = fever
    words = "Thanks for calling: your nurse will ring you before 4 pm."
    (tmp_path / "words.toml").write_text(f'caller_message = "{words}"\n', encoding="utf-8")
    use_protocol(as_role(Role.ADMIN), str(tmp_path / "words.toml"))
    phone = replace(as_role(Role.PHONE), protocol=load_protocol(store))
    (shown,) = service.list_alerts(phone)
    assert callers_view(shown, store.alerts.get(stored.id), words)
