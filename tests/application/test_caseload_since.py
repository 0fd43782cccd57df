"""Bringing the morning list up to date by reading only the patients changed since: always the
list a full read gives (the full read, `list_caseload`, is the reference)."""

from __future__ import annotations

from caseload.core.model import Role
from caseload.application.alert_handling import acknowledge
from caseload.application.caseload_view import caseload_since, list_caseload, read_caseload
from caseload.application.entries import log_entry
from caseload.application.patients import add_patient, update_patient


def _caught_up(ctx, before):
    after = caseload_since(ctx, before.mark, before.lines)
    assert after.lines == tuple(list_caseload(ctx))
    return after


def test_each_kind_of_change_gives_the_list_a_full_read_gives(store, as_role, patient):
    nurse, phone = as_role(Role.NURSE), as_role(Role.PHONE)
    for pid in ("P0002", "P0003", "P0004", "P0005"):
        add_patient(nurse, pid, f"Patient {pid}", "1990-01-01", nurse="nurse1")
    read = read_caseload(nurse)
    assert caseload_since(nurse, read.mark, read.lines) == read  # nothing changed: nothing read
    # Eleven days of bleeding raise an alert and move the row up the triage order.
    for day in range(-11, 1):
        log_entry(phone, "P0004", "bleed", "heavy", on=str(day) if day else "today")
    read = _caught_up(nurse, read)
    assert read.lines[0].patient.id == "P0004" and read.lines[0].alerts
    acknowledge(nurse, read.lines[0].alerts[0].id, "called her")  # the alert leaves the open list
    read = _caught_up(nurse, read)
    update_patient(nurse, "P0002", plan="timed")  # her record
    read = _caught_up(nurse, read)
    update_patient(nurse, "P0003", status="discharged")  # she leaves the list
    read = _caught_up(nurse, read)
    assert "P0003" not in [line.patient.id for line in read.lines]
    add_patient(phone, "P0006", "New Caller", "1995-06-06")  # a registration joins it
    read = _caught_up(nurse, read)
    assert "P0006" in [line.patient.id for line in read.lines]


def test_a_change_to_most_of_the_list_reads_it_whole(store, as_role, patient):
    nurse = as_role(Role.NURSE)
    read = read_caseload(nurse)
    for pid in ("P0002", "P0003"):
        add_patient(nurse, pid, f"Patient {pid}", "1990-01-01")
    after = _caught_up(nurse, read)
    assert after.mark == nurse.store.list_marks.latest()
