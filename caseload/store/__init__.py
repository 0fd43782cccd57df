"""The store: one SQLite file, reached only through these tables. Only this package speaks SQL."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager
from datetime import date, datetime
from pathlib import Path

from caseload.store import backup_restore as maintenance
from caseload.store.alert_table import AlertTable
from caseload.store.audit_table import AuditTable
from caseload.store.bulk_load import BulkTable
from caseload.store.closed_cycle_table import ClosedCycleTable
from caseload.store.db import Database, NotAStore, StoreDamaged, StoreError, creating, refusing_damage, utc_now
from caseload.store.entry_table import EntryTable
from caseload.store.list_mark_table import ListMarkTable
from caseload.store.patient_table import PatientTable
from caseload.store.protocol_table import ProtocolTable
from caseload.store.snapshot_table import StateTable
from caseload.store.staff_table import StaffTable
from caseload.store.summary_queries import ReportQueries
from caseload.store.verify import Report


class Store:
    """The tables of one store file. Writes go inside `with store.atomic(day_of_record):`."""

    def __init__(self, path: str | Path, clock: Callable[[], datetime] = utc_now, *, must_exist: bool = False):
        """`must_exist`: open only a file that is a caseload store already (see `Database`)."""
        self.db = Database(path, clock, must_exist=must_exist)
        self.staff = StaffTable(self.db)
        self.patients = PatientTable(self.db)
        self.entries = EntryTable(self.db)
        self.audit = AuditTable(self.db)
        self.alerts = AlertTable(self.db)
        self.state = StateTable(self.db)
        self.closed_cycles = ClosedCycleTable(self.db)
        self.bulk = BulkTable(self.db)
        self.protocol = ProtocolTable(self.db)
        self.list_marks = ListMarkTable(self.db)

    @property
    def path(self) -> Path:
        return self.db.path

    def write(self):
        return self.db.write()

    def atomic(self, day_of_record: date | None = None):
        """One transaction that nests (savepoints inside); its audit rows record `day_of_record`."""
        return self.db.atomic(day_of_record)

    def transact(self, work, day_of_record: date | None = None):
        """Run `work()` as one transaction, rerun whole while another writer holds the lock."""
        return self.db.transact(work, day_of_record)

    def data_version(self) -> int:
        """SQLite's count of commits made by other connections to the file: unchanged means nothing
        another process wrote can be missing from what this one read."""
        return self.db.conn.execute("PRAGMA data_version").fetchone()[0]

    def meta(self, key: str) -> str | None:
        """A store-wide setting (time zone, clinic name, pseudonym secret, protocol file)."""
        return self.db.meta(key)

    def set_meta(self, key: str, value: str) -> None:
        self.db.set_meta(key, value)

    def summary_queries(self) -> ReportQueries:
        """The weekly summary's reads, each run against one consistent snapshot."""
        return ReportQueries(self.db)

    @contextmanager
    def clock_at(self, at: datetime) -> Iterator[None]:
        """Stamp the changes made in the block at `at` (history loaded after the fact, as the demo's)."""
        self.db.clock = lambda: at
        try:
            yield
        finally:
            self.db.clock = utc_now

    def refuse_damaged(self, aside: bool = False) -> None:
        """The quick check a first write pays, run now (once per connection): StoreDamaged on a damaged
        file. `aside`: on a read connection of its own, leaving this one free meanwhile."""
        self.db.refuse_damaged(aside)

    def backup(self, target: Path) -> None:
        self.db.refuse_damaged()  # a backup is audited, so it is a write: refused before a damaged copy is made
        maintenance.backup_to(self.db, Path(target))

    def restore(self, source: Path, force: bool = False) -> maintenance.Restored:
        """Over a damaged store this is refused: `restore_damaged` (application) replaces the file instead."""
        self.db.refuse_damaged()
        return maintenance.restore_from(self.db, Path(source), force)

    def check(self) -> Report:
        """Verify the whole file: integrity, audit chain, triggers, schema, records against their audit."""
        return maintenance.check_file(self.path)

    def close(self) -> None:
        self.db.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc) -> None:
        self.close()


__all__ = ["NotAStore", "Report", "Store", "StoreDamaged", "StoreError", "creating", "refusing_damage"]
