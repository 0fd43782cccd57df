"""The store: one SQLite file, reached only through these tables. Only this package speaks SQL."""

from __future__ import annotations

from collections.abc import Callable
from datetime import datetime
from pathlib import Path

from caseload.store import backup_restore as maintenance
from caseload.store.alert_table import AlertTable
from caseload.store.audit_table import AuditTable
from caseload.store.bulk_load import BulkTable
from caseload.store.db import Database, StoreError, utc_now
from caseload.store.entry_table import EntryTable
from caseload.store.patient_table import PatientTable
from caseload.store.staff_table import StaffTable
from caseload.store.snapshot_table import StateTable


class Store:
    """The tables of one store file. Writes go inside `with store.write():`."""

    def __init__(self, path: str | Path, clock: Callable[[], datetime] = utc_now):
        self.db = Database(path, clock)
        self.staff = StaffTable(self.db)
        self.patients = PatientTable(self.db)
        self.entries = EntryTable(self.db)
        self.audit = AuditTable(self.db)
        self.alerts = AlertTable(self.db)
        self.state = StateTable(self.db)
        self.bulk = BulkTable(self.db)

    @property
    def path(self) -> Path:
        return self.db.path

    def write(self):
        return self.db.write()

    def transact(self, work):
        """Run `work()` in one write transaction with a bounded retry on a locked file."""
        return self.db.transact(work)

    def backup(self, target: Path) -> None:
        maintenance.backup_to(self.db, Path(target))

    def restore(self, source: Path) -> int:
        return maintenance.restore_from(self.db, Path(source))

    def health(self) -> maintenance.Health:
        return maintenance.health(self.db, self.audit.id_gaps())

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()


__all__ = ["Store", "StoreError"]
