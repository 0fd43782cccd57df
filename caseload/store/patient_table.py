"""Patient records."""

from __future__ import annotations

from collections.abc import Mapping
from datetime import date

from caseload.core.model import Actor, Patient, PatientStatus, Plan
from caseload.store.db import Database

HISTORY_FIELDS = ("status", "plan", "nurse_id", "charting_temps")


def patient_from_row(row: Mapping) -> Patient:
    return Patient(
        id=row["id"],
        name=row["name"],
        born=date.fromisoformat(row["born"]),
        nurse_id=row["nurse_id"],
        status=PatientStatus(row["status"]),
        plan=Plan(row["plan"]),
        created=date.fromisoformat(row["created"]),
        charting_temps=bool(row["charting_temps"]),
        status_since=_status_since(row),
    )


def _status_since(row: Mapping) -> date | None:
    # A schema before version 3 has no such column (a store a failed upgrade left as it was).
    text = row["status_since"] if "status_since" in row.keys() else None
    return date.fromisoformat(text) if text else None


def patient_to_row(p: Patient) -> dict:
    return {
        "id": p.id,
        "name": p.name,
        "born": p.born.isoformat(),
        "nurse_id": p.nurse_id,
        "status": p.status.value,
        "plan": p.plan.value,
        "created": p.created.isoformat(),
        "charting_temps": int(p.charting_temps),
        "status_since": None if p.status_since is None else p.status_since.isoformat(),
    }


def patient_history_row(p: Patient, at: str, by_staff: str) -> dict:
    """The version of a patient's care that takes effect at `at` (see the patient_history table)."""
    return {"patient_id": p.id, "at": at, "status": p.status.value, "plan": p.plan.value, "nurse_id": p.nurse_id,
            "charting_temps": int(p.charting_temps), "by_staff": by_staff}


class PatientTable:
    def __init__(self, db: Database):
        self.db = db

    def add(self, actor: Actor, patient: Patient) -> Patient:
        row = patient_to_row(patient)
        self.db.db["patient"].insert(row)
        self.db.audit(actor, "patient.add", "patient", patient.id, after=row)
        self.db.db["patient_history"].insert(patient_history_row(patient, self.db.now_text(), actor.id))
        return patient

    def get(self, patient_id: str) -> Patient | None:
        rows = self.db.records("SELECT * FROM patient WHERE id = ?", (patient_id,))
        return patient_from_row(rows[0]) if rows else None

    def any_case(self, patient_id: str) -> list[Patient]:
        """The patients whose id is `patient_id` in any letter case: one at most, but a store written
        before ids were unique whatever their case may hold several (see migrations)."""
        rows = self.db.records("SELECT * FROM patient WHERE id = ? COLLATE NOCASE ORDER BY id", (patient_id,))
        return [patient_from_row(r) for r in rows]

    def all(self) -> list[Patient]:
        return [patient_from_row(r) for r in self.db.records("SELECT * FROM patient ORDER BY id")]

    def update(self, actor: Actor, before: Patient, after: Patient) -> None:
        old, new = patient_to_row(before), patient_to_row(after)
        changes = {k: v for k, v in new.items() if old[k] != v}
        if changes:
            self.db.db["patient"].update(before.id, changes)
            self.db.audit(actor, "patient.update", "patient", before.id, before=old, after=new)
            if any(field in changes for field in HISTORY_FIELDS):
                self.db.db["patient_history"].insert(patient_history_row(after, self.db.now_text(), actor.id))
