"""The list marks: which patients' list rows may have changed since an interface last looked."""

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
