"""The change marks: a store-wide counter stamped on a patient by triggers whenever her record, her
entries, her alerts or her snapshot change (migrations `_list_marks`, `_entry_marks`). An interface
re-reads only the list rows marked since it last looked; a refresh computed outside a write checks
her mark inside the write, so it never stores what a concurrent change has made stale."""

from __future__ import annotations

from caseload.store.db import Database


class ListMarkTable:
    def __init__(self, db: Database):
        self.db = db

    def latest(self) -> int:
        """The newest mark in the store (0 in a store with no patients)."""
        return self.db.conn.execute("SELECT coalesce(max(seq), 0) FROM list_mark").fetchone()[0]

    def since(self, seq: int) -> tuple[int, list[str]]:
        """(the newest mark, the patients marked after `seq`), read in one statement."""
        rows = self.db.conn.execute(
            "SELECT patient_id, seq FROM list_mark WHERE seq > ? ORDER BY seq", (seq,)
        ).fetchall()
        return (rows[-1][1] if rows else seq), [pid for pid, _ in rows]

    def of(self, patient_id: str | None = None) -> dict[str, int]:
        """Each patient's mark (or one patient's); one indexed read, whatever her history."""
        where, params = ("WHERE patient_id = ?", (patient_id,)) if patient_id is not None else ("", ())
        return dict(self.db.conn.execute(f"SELECT patient_id, seq FROM list_mark {where}", params).fetchall())
