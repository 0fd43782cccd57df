"""Backups on a real SQLite file."""

from __future__ import annotations

import os
from datetime import date


from caseload.core.model import Kind, Role
from caseload.application.entries import log_entry
from caseload.store import Store

TODAY = date(2026, 12, 1)


def test_backup_is_owner_only_and_complete(store, as_role, patient, tmp_path):
    log_entry(as_role(Role.PHONE), patient.id, Kind.TEMP.value, "36.4")
    target = tmp_path / "backup.db"
    store.backup(target)
    assert os.stat(target).st_mode & 0o777 == 0o600
    with Store(target) as copy:
        assert copy.entries.count() == store.entries.count()
        assert copy.audit.count() == store.audit.count()
