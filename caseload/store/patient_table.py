"""Patient records."""

from __future__ import annotations

from caseload.core.model import Actor, Patient
from caseload.store.db import Database
from caseload.store.row_objects import patient_from_row, patient_history_row, patient_to_row

HISTORY_FIELDS = ("status", "plan", "nurse_id", "charting_temps")


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
            if any(field in changes for field in HISTORY_FIELDS):
                self.db.db["patient_history"].insert(patient_history_row(after, self.db.now_text(), actor.id))

    def change_marks(self, patient_id: str | None = None) -> dict[str, str]:
        """A mark per patient (or for one) that changes whenever her record, her entries (logged,
        amended, voided) or her alerts change: a refresh computed outside a write checks it inside
        the write, so it never stores what a concurrent change has made stale."""
        where, params = ("WHERE p.id = ?", (patient_id,)) if patient_id is not None else ("", ())
        rows = self.db.conn.execute(MARK_SQL + where, params)
        return dict(rows.fetchall())


MARK_SQL = """
SELECT p.id, json_array(
    p.name, p.born, p.nurse_id, p.status, p.status_since, p.plan, p.created, p.charting_temps,
    (SELECT json_array(count(*), max(id), count(voided_at)) FROM entry WHERE patient_id = p.id),
    (SELECT json_group_array(json_array(id, state, severity, snooze_until, due)) FROM alert WHERE patient_id = p.id)
) FROM patient p
"""
