"""Patient records."""

from __future__ import annotations

from caseload.core.model import Actor, Patient
from caseload.store.db import Database
from caseload.store.row_objects import patient_from_row, patient_to_row


class PatientTable:
    def __init__(self, db: Database):
        self.db = db

    def add(self, actor: Actor, patient: Patient) -> Patient:
        row = patient_to_row(patient)
        self.db.db["patient"].insert(row)
        self.db.audit(actor, "patient.add", "patient", patient.id, after=row)
        return patient

    def get(self, patient_id: str) -> Patient | None:
        rows = self.db.query("SELECT * FROM patient WHERE id = ?", (patient_id,))
        return patient_from_row(rows[0]) if rows else None

    def all(self) -> list[Patient]:
        return [patient_from_row(r) for r in self.db.query("SELECT * FROM patient ORDER BY id")]

    def update(self, actor: Actor, before: Patient, after: Patient) -> None:
        old, new = patient_to_row(before), patient_to_row(after)
        changes = {k: v for k, v in new.items() if old[k] != v}
        if changes:
            self.db.db["patient"].update(before.id, changes)
            self.db.audit(actor, "patient.update", "patient", before.id, before=old, after=new)
