"""Alert rows: raised by the engine, handled by staff. At most one unresolved row per key (the
kind's episode); a key whose condition comes back after an automatic resolution gets a new row.

Every change writes its audit row (the whole alert before and after) in the caller's transaction.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import asdict
from datetime import date, datetime

from caseload.core.alerts import Candidate
from caseload.core.model import Actor, Alert, AlertState, AlertStep, Severity
from caseload.store.db import Database


HANDLING = {AlertState.ACKNOWLEDGED: "alert.ack", AlertState.SNOOZED: "alert.snooze", AlertState.RESOLVED: "alert.resolve"}


def alert_from_row(row: Mapping) -> Alert:
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


def step_from_row(row: dict) -> AlertStep:
    after = json.loads(row["after"] or "{}")
    until = after.get("snooze_until") if row["action"] == "alert.snooze" else None
    return AlertStep(
        alert_id=int(row["row_id"]),
        action=row["action"].removeprefix("alert."),
        by=row["by_staff"],
        at=datetime.fromisoformat(row["at"]),
        note=after.get("note") if row["action"] in HANDLING.values() else None,
        snooze_until=date.fromisoformat(until) if until else None,
        reason=after.get("resolved_reason") if row["action"] == "alert.auto-resolve" else None,
    )


def audit_view(a: Alert) -> dict:
    """The alert as its audit rows record it (patient, kind and severity among the keys)."""
    return {k: v.value if isinstance(v, Severity | AlertState) else v for k, v in asdict(a).items()}


class AlertTable:
    def __init__(self, db: Database):
        self.db = db

    def get(self, alert_id: int) -> Alert | None:
        rows = self.db.records("SELECT * FROM alert WHERE id = ?", (alert_id,))
        return alert_from_row(rows[0]) if rows else None

    def for_patient(self, patient_id: str) -> list[Alert]:
        rows = self.db.records("SELECT * FROM alert WHERE patient_id = ? ORDER BY id", (patient_id,))
        return [alert_from_row(r) for r in rows]

    def steps_for_patient(self, patient_id: str) -> list[AlertStep]:
        """Everything that happened to the patient's alerts, oldest first, from the audit trail."""
        rows = self.db.query(
            "SELECT id, at, by_staff, action, row_id, after FROM audit WHERE tbl = 'alert' AND row_id IN"
            " (SELECT CAST(id AS TEXT) FROM alert WHERE patient_id = ?) ORDER BY id",
            (patient_id,),
        )
        return [step_from_row(r) for r in rows]

    def unresolved(self) -> list[Alert]:
        """Open, acknowledged and snoozed alerts of the whole caseload."""
        rows = self.db.records("SELECT * FROM alert WHERE state != 'resolved' ORDER BY id")
        return [alert_from_row(r) for r in rows]

    def all(self) -> list[Alert]:
        return [alert_from_row(r) for r in self.db.records("SELECT * FROM alert ORDER BY id")]

    def count_unresolved(self) -> int:
        return self.db.conn.execute("SELECT count(*) FROM alert WHERE state != 'resolved'").fetchone()[0]

    def count(self) -> int:
        return self.db.conn.execute("SELECT count(*) FROM alert").fetchone()[0]

    def raise_alert(self, actor: Actor, c: Candidate, raised_on: date) -> Alert:
        row = {
            "patient_id": c.patient_id,
            "kind": c.kind,
            "key": c.key,
            "severity": c.severity.value,
            "raised_on": raised_on.isoformat(),
            "due": c.due.isoformat(),
            "message": c.message,
            "evidence": json.dumps(c.evidence, sort_keys=True),
            "rule": c.rule,
            "source": c.source,
            "state": AlertState.OPEN.value,
            "protocol_version": c.protocol_version,
        }
        alert_id = self.db.db["alert"].insert(row).last_pk
        alert = self.get(alert_id)
        self.db.audit(actor, "alert.raise", "alert", alert_id, after=audit_view(alert))
        return alert

    def escalate(self, actor: Actor, a: Alert, c: Candidate) -> Alert:
        """Worse evidence on the same key: the new severity and evidence, back on the list."""
        return self._change(actor, a, "alert.escalate", {
            "severity": c.severity.value, "due": c.due.isoformat(), "message": c.message,
            "evidence": json.dumps(c.evidence, sort_keys=True), "rule": c.rule, "source": c.source,
            "state": AlertState.OPEN.value, "snooze_until": None, "protocol_version": c.protocol_version,
        })  # fmt: skip

    def reopen(self, actor: Actor, a: Alert) -> Alert:
        """A snooze whose day has come; who snoozed it and why stay on the row."""
        return self._change(actor, a, "alert.reopen", {"state": AlertState.OPEN.value})

    def auto_resolve(self, actor: Actor, a: Alert, reason: str) -> Alert:
        """The condition ended; the staff member whose write or refresh saw it is recorded."""
        changes = self._handled(actor, AlertState.RESOLVED, None, None, reason)
        return self._change(actor, a, "alert.auto-resolve", changes)

    def handle(
        self, actor: Actor, a: Alert, state: AlertState, note: str | None, snooze_until: date | None = None
    ) -> Alert:
        """A staff member acknowledges, snoozes or resolves the alert."""
        return self._change(actor, a, HANDLING[state], self._handled(actor, state, note, snooze_until, None))

    def _handled(self, actor: Actor, state: AlertState, note, snooze_until: date | None, reason: str | None) -> dict:
        return {
            "state": state.value,
            "handled_by": actor.id,
            "handled_at": self.db.now_text(),
            "note": note,
            "snooze_until": None if snooze_until is None else snooze_until.isoformat(),
            "resolved_reason": reason,
        }

    def _change(self, actor: Actor, before: Alert, action: str, changes: dict) -> Alert:
        self.db.db["alert"].update(before.id, changes)
        after = self.get(before.id)
        self.db.audit(actor, action, "alert", before.id, before=audit_view(before), after=audit_view(after))
        return after
