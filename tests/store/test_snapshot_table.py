"""Per-patient snapshots on a real SQLite file."""

from __future__ import annotations

from datetime import date


from caseload.core.model import Role
from caseload.application.entries import log_entry
from caseload.application.patients import add_patient

TODAY = date(2026, 12, 1)


def test_snapshots_can_be_read_for_some_patients_only(store, as_role, patient):
    other = add_patient(as_role(Role.NURSE), "P0002", "Other Patient", "1990-01-01")
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")
    log_entry(as_role(Role.PHONE), other.id, "bleed", "light")
    assert set(store.state.all()) == {patient.id, other.id}
