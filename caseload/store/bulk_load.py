"""Loading many rows at once: staff, patients and entries with their audit rows, in large transactions.

For building big stores (benchmarks, a caseload brought over from elsewhere) where one transaction
per entry would take hours. The rows and audit rows are exactly those the single-row tables write
(`staff_row`, `patient_to_row`, `entry_row`, `audit_values`); only the batching differs. Entry ids
are given by the caller, so each audit row can name its entry without reading it back.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import date, datetime
from itertools import islice

from caseload.core.model import Actor, Patient, Staff
from caseload.core.parse import ParsedEntry
from caseload.store.db import Database, StoreError, append_audit, audit_json, audit_values
from caseload.store.entry_table import CURRENT_ROWS, IN_ORDER, entry_row
from caseload.store.patient_table import patient_history_row, patient_to_row
from caseload.store.staff_table import staff_row

ENTRY_BATCH = 20_000  # rows per transaction: large enough to be fast, small enough to keep the WAL short
LOADED_TABLES = ("entry", "audit")  # their indexes and triggers are set aside while `loading`
LOAD_CACHE_KIB = 256 * 1024  # page cache while loading: the rebuilt indexes sort in memory
__all__ = ["BulkTable", "NewEntry", "PreparedEntries", "audit_json", "prepare_entries"]


@dataclass(frozen=True)
class NewEntry:
    """One entry to load: its id (from `BulkTable.next_entry_id` on), who logged it and when."""

    id: int
    actor: Actor
    patient_id: str
    parsed: ParsedEntry
    at: datetime
    supersedes: int | None = None
    amend_reason: str | None = None


def _at_text(at: datetime) -> str:
    return at.isoformat(timespec="seconds")  # as Database.now_text writes it


def _day_of(at_text: str) -> date:
    """History loaded after the fact is recorded as of the day it says it was written (its local date)."""
    return date.fromisoformat(at_text[:10])


class BulkTable:
    """Batched inserts. Each call opens its own write transactions: call it outside any other."""

    def __init__(self, db: Database):
        self.db = db

    def next_entry_id(self) -> int:
        return (self.db.conn.execute("SELECT max(id) FROM entry").fetchone()[0] or 0) + 1

    def staff(self, actor: Actor, members: Iterable[Staff]) -> int:
        """Staff records, audited as `staff.add` by `actor` at the store clock's time; one transaction."""
        at = self.db.now_text()
        rows = [(s.id, staff_row(s, at)) for s in members]
        with self.db.write():
            self.db.db["staff"].insert_all([row for _, row in rows])
            self._audit((at, actor, "staff.add", "staff", sid, None, row) for sid, row in rows)
        return len(rows)

    def patients(self, actor: Actor, patients: Iterable[Patient]) -> int:
        """Patient records, audited as `patient.add`; one transaction."""
        at = self.db.now_text()
        patients = list(patients)
        rows = [(p.id, patient_to_row(p)) for p in patients]
        with self.db.write():
            self.db.db["patient"].insert_all([row for _, row in rows])
            self.db.db["patient_history"].insert_all([patient_history_row(p, at, actor.id) for p in patients])
            self._audit((at, actor, "patient.add", "patient", pid, None, row) for pid, row in rows)
        return len(rows)

    def entries(self, items: Iterable[NewEntry], batch: int = ENTRY_BATCH) -> int:
        """Entries in id order with their `entry.log` / `entry.amend` audit rows; a transaction per batch."""
        if batch < 1:
            raise ValueError(f"batch is {batch}: give 1 or more rows per transaction")
        return sum(self.insert_prepared(prepare_entries(chunk)) for chunk in _chunks(items, batch))

    def insert_prepared(self, prepared: PreparedEntries) -> int:
        """Rows made by `prepare_entries` (perhaps in another process), in one transaction."""
        if not prepared.rows:
            return 0
        first = prepared.rows[0][0]
        if first < self.next_entry_id():
            raise StoreError(f"entry id {first} is taken: new ids start at {self.next_entry_id()} (next_entry_id)")
        with self.db.write():
            return self.write_prepared(prepared)

    def write_prepared(self, prepared: PreparedEntries) -> int:
        """Rows made by `prepare_entries`, inside the caller's write transaction."""
        if not prepared.rows:
            return 0
        marks = ", ".join("?" * len(prepared.columns))
        self.db.conn.executemany(f"INSERT INTO entry ({', '.join(prepared.columns)}) VALUES ({marks})", prepared.rows)
        append_audit(self.db.conn, prepared.audits)
        return len(prepared.rows)

    @contextmanager
    def loading(self) -> Iterator[None]:
        """A bulk load of entries: the indexes and triggers of the entry and audit tables are set
        aside and then made again from the very same SQL (so the schema `check` expects is unchanged),
        and the load is not synced to disk batch by batch. For building a new file only: a crash part
        way leaves a file to throw away, not a store."""
        names = ", ".join("?" * len(LOADED_TABLES))
        aside = self.db.conn.execute(
            f"SELECT type, name, sql FROM sqlite_master WHERE type IN ('index', 'trigger') AND sql IS NOT NULL"
            f" AND tbl_name IN ({names}) ORDER BY rowid", LOADED_TABLES).fetchall()  # fmt: skip
        self.db.conn.execute("PRAGMA synchronous = OFF")
        self.db.conn.execute(f"PRAGMA cache_size = -{LOAD_CACHE_KIB}")
        with self.db.write():
            for kind, name, _ in aside:
                self.db.conn.execute(f"DROP {kind.upper()} {name}")
        try:
            yield
        finally:
            with self.db.write():
                for _, _, sql in aside:
                    self.db.conn.execute(sql)
            self.db.conn.execute("PRAGMA cache_size = -2000")  # SQLite's default
            self.db.conn.execute("PRAGMA synchronous = FULL")  # as Database opens every connection
            self.db.conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")

    def scan_current_entries(self) -> int:
        """Read the rows a whole-caseload refresh reads, in its order, building nothing; returns the count.
        The floor that refresh is measured against."""
        return sum(1 for _ in self.db.conn.execute(CURRENT_ROWS + IN_ORDER))

    def _audit(self, changes: Iterable[tuple]) -> None:
        append_audit(self.db.conn, [audit_values(*c, _day_of(c[0])) for c in changes])


@dataclass(frozen=True)
class PreparedEntries:
    """Entry rows and their audit rows as plain values, ready to insert."""

    columns: tuple[str, ...]
    rows: list[tuple]
    audits: list[tuple]


def prepare_entries(items: Iterable[NewEntry]) -> PreparedEntries:
    """The rows `EntryTable.add` would write for each entry, with its id, and their audit rows."""
    columns: tuple[str, ...] = ()
    rows, audits = [], []
    for item in items:
        at = _at_text(item.at)
        row = entry_row(item.actor, item.patient_id, item.parsed, at, item.supersedes, item.amend_reason)
        columns = columns or ("id", *row)
        rows.append((item.id, *row.values()))
        action = "entry.amend" if item.supersedes else "entry.log"
        audits.append(audit_values(at, item.actor, action, "entry", item.id, after=row, day_of_record=_day_of(at)))
    return PreparedEntries(columns, rows, audits)


def _chunks(items: Iterable[NewEntry], size: int) -> Iterator[list[NewEntry]]:
    it = iter(items)
    while chunk := list(islice(it, size)):
        yield chunk
