"""Per-patient derived state (snapshots), rewritten on each write and by the morning refresh."""

from __future__ import annotations

import json

from caseload.core.snapshot import Snapshot
from caseload.store.db import Database


class StateTable:
    def __init__(self, db: Database):
        self.db = db

    def put(self, snap: Snapshot) -> None:
        self.db.conn.execute(
            "INSERT OR REPLACE INTO patient_state (patient_id, computed_on, state) VALUES (?, ?, ?)",
            (snap.patient_id, snap.computed_on.isoformat(), json.dumps(snap.to_dict())),
        )

    def all(self) -> dict[str, Snapshot]:
        """Every patient's snapshot, by patient id."""
        rows = self.db.conn.execute("SELECT patient_id, state FROM patient_state")
        return {pid: Snapshot.from_dict(json.loads(state)) for pid, state in rows}

    def get(self, patient_id: str) -> Snapshot | None:
        row = self.db.conn.execute("SELECT state FROM patient_state WHERE patient_id = ?", (patient_id,)).fetchone()
        return Snapshot.from_dict(json.loads(row[0])) if row else None
