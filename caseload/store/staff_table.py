"""Staff records and the OS accounts mapped to them."""

from __future__ import annotations

from dataclasses import asdict

from caseload.core.model import Actor, Role, Staff
from caseload.store.db import Database


def staff_from_row(row: dict) -> Staff:
    return Staff(row["id"], row["name"], Role(row["role"]), bool(row["active"]), row["os_account"])


def staff_row(staff: Staff, created_at: str) -> dict:
    """The columns of a new staff row; the same dict is the audit row's `after`."""
    return {**asdict(staff), "role": staff.role.value, "active": int(staff.active), "created_at": created_at}


class StaffTable:
    def __init__(self, db: Database):
        self.db = db

    def add(self, actor: Actor, staff: Staff) -> Staff:
        row = staff_row(staff, self.db.now_text())
        self.db.db["staff"].insert(row)
        self.db.audit(actor, "staff.add", "staff", staff.id, after=row)
        return staff

    def get(self, staff_id: str) -> Staff | None:
        rows = self.db.query("SELECT * FROM staff WHERE id = ?", (staff_id,))
        return staff_from_row(rows[0]) if rows else None

    def by_os_account(self, account: str) -> Staff | None:
        rows = self.db.query("SELECT * FROM staff WHERE os_account = ?", (account,))
        return staff_from_row(rows[0]) if rows else None

    def all(self) -> list[Staff]:
        return [staff_from_row(r) for r in self.db.query("SELECT * FROM staff ORDER BY role, id")]

    def update(self, actor: Actor, before: Staff, after: Staff) -> None:
        changes = {k: v for k, v in asdict(after).items() if asdict(before)[k] != v}
        if not changes:
            return
        if "active" in changes:
            changes["active"] = int(changes["active"])
        self.db.db["staff"].update(before.id, changes)
        self.db.audit(actor, "staff.update", "staff", before.id, before=_plain(before), after=_plain(after))


def _plain(s: Staff) -> dict:
    return {**asdict(s), "role": s.role.value}
