"""The audit trail: rows appended inside each change's transaction, and read back."""

from __future__ import annotations

from dataclasses import dataclass

from caseload.core.model import Actor
from caseload.store.db import Database


@dataclass(frozen=True)
class AuditRow:
    id: int
    at: str
    by_staff: str
    os_account: str
    action: str
    table: str
    row_id: str | None
    before: str | None
    after: str | None
    day_of_record: str | None


class AuditTable:
    def __init__(self, db: Database):
        self.db = db

    def record(self, actor: Actor, action: str, table: str, row_id=None, before=None, after=None) -> None:
        """Append the audit row of a change that has no table of its own (settings, backups, exports);
        inside the change's transaction."""
        self.db.audit(actor, action, table, row_id, before, after)

    def rows(self, action_prefix: str = "") -> list[AuditRow]:
        rows = self.db.query(
            "SELECT id, at, by_staff, os_account, action, tbl AS 'table', row_id, before, after, day_of_record"
            " FROM audit WHERE action LIKE ? ORDER BY id",
            (action_prefix + "%",),
        )
        return [AuditRow(**r) for r in rows]

    def last_id(self) -> int:
        return self.db.conn.execute("SELECT coalesce(max(id), 0) FROM audit").fetchone()[0]

    def count(self) -> int:
        return self.db.conn.execute("SELECT count(*) FROM audit").fetchone()[0]

    def id_gaps(self) -> list[tuple[int, int]]:
        """Missing id ranges (first, last): a gap means rows were removed behind the tool's back."""
        ids = [r[0] for r in self.db.conn.execute("SELECT id FROM audit ORDER BY id")]
        gaps, expected = [], 1
        for i in ids:
            if i > expected:
                gaps.append((expected, i - 1))
            expected = i + 1
        return gaps
