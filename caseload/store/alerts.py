"""Alert rows: raised by the engine, handled by staff. One row per dedup key."""

from __future__ import annotations

import json
from datetime import date, datetime

from caseload.core.model import Alert, AlertState, Severity
from caseload.store.db import Database


def alert_from_row(row: dict) -> Alert:
    return Alert(
        id=row["id"],
        patient_id=row["patient_id"],
        kind=row["kind"],
        key=row["key"],
        severity=Severity(row["severity"]),
        raised_on=date.fromisoformat(row["raised_on"]),
        due=date.fromisoformat(row["due"]),
        message=row["message"],
        evidence=json.loads(row["evidence"]),
        rule=row["rule"],
        source=row["source"],
        state=AlertState(row["state"]),
        handled_by=row["handled_by"],
        handled_at=datetime.fromisoformat(row["handled_at"]) if row["handled_at"] else None,
        note=row["note"],
        snooze_until=date.fromisoformat(row["snooze_until"]) if row["snooze_until"] else None,
        resolved_reason=row["resolved_reason"],
    )


class AlertTable:
    def __init__(self, db: Database):
        self.db = db

    def get(self, alert_id: int) -> Alert | None:
        rows = self.db.query("SELECT * FROM alert WHERE id = ?", (alert_id,))
        return alert_from_row(rows[0]) if rows else None

    def for_patient(self, patient_id: str) -> list[Alert]:
        rows = self.db.query("SELECT * FROM alert WHERE patient_id = ? ORDER BY id", (patient_id,))
        return [alert_from_row(r) for r in rows]

    def unresolved(self) -> list[Alert]:
        """Open, acknowledged and snoozed alerts of the whole caseload."""
        rows = self.db.query("SELECT * FROM alert WHERE state != 'resolved' ORDER BY id")
        return [alert_from_row(r) for r in rows]
