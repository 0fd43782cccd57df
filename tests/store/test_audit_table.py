"""The audit trail on a real SQLite file: append-only, one row per write with who and as of which day."""

from __future__ import annotations

import sqlite3
from datetime import date

import pytest

from caseload.core.model import Role
from caseload.application.entries import log_entry

TODAY = date(2026, 12, 1)


@pytest.mark.parametrize("sql", ["UPDATE audit SET action = 'x'", "DELETE FROM audit"])
def test_audit_rows_cannot_be_changed_or_deleted(store, admin, sql):
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        store.db.conn.execute(sql)
    assert store.audit.count() == 2  # staff.add and store.init


def test_every_write_has_its_audit_row_with_actor_and_os_account(store, as_role, patient):
    before = store.audit.count()
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")
    rows = store.audit.rows("entry.")
    assert store.audit.count() == before + 1
    assert (rows[-1].by_staff, rows[-1].os_account, rows[-1].action) == ("phone1", "tester", "entry.log")
