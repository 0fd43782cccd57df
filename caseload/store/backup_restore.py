"""Online backup, restore and integrity checks of a store file."""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from pathlib import Path

from caseload.store import migrations
from caseload.store.db import Database, StoreError, create_private


@dataclass(frozen=True)
class Health:
    integrity: list[str]
    foreign_keys: int
    audit_gaps: list[tuple[int, int]]
    schema_version: int

    @property
    def ok(self) -> bool:
        return self.integrity == ["ok"] and not self.foreign_keys and not self.audit_gaps


def backup_to(db: Database, target: Path) -> None:
    """Copy the store with SQLite's online backup: consistent even while others write."""
    try:
        create_private(target)
    except FileExistsError:
        raise StoreError(f"{target} exists already: choose a new backup file") from None
    dest = sqlite3.connect(target)
    try:
        db.conn.backup(dest)
    except sqlite3.Error as err:
        dest.close()
        target.unlink(missing_ok=True)  # a half-written copy must not pass for a backup
        raise StoreError(f"backup to {target} failed ({err}): nothing kept") from None
    dest.close()


def inspect_file(source: Path) -> int:
    """The schema version of a candidate store file, after checking it is whole and ours."""
    if not source.is_file():
        raise StoreError(f"{source} is not a file")
    conn = sqlite3.connect(f"file:{source}?mode=ro", uri=True)
    try:
        result = [r[0] for r in conn.execute("PRAGMA integrity_check")]
        if result != ["ok"]:
            raise StoreError(f"{source} fails the integrity check ({result[0]}): not restored")
        version = conn.execute("PRAGMA user_version").fetchone()[0]
        tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    except sqlite3.DatabaseError as err:
        raise StoreError(f"{source} is damaged or not an SQLite file ({err}): not restored") from None
    finally:
        conn.close()
    if version < 1 or not {"staff", "patient", "entry", "audit"} <= tables:
        raise StoreError(f"{source} is not a caseload store: not restored")
    if version > migrations.LATEST:
        raise StoreError(f"{source} has schema {version}, newer than this caseload ({migrations.LATEST}): not restored")
    return version


def restore_from(db: Database, source: Path) -> int:
    """Replace the store's content with a checked backup, in place, then migrate it if it is older."""
    if source.resolve() == db.path.resolve():
        raise StoreError(f"{source} is the store itself: restore from a backup file")
    version = inspect_file(source)
    src = sqlite3.connect(f"file:{source}?mode=ro", uri=True)
    try:
        src.backup(db.conn)
    finally:
        src.close()
    db.migrate()
    return version


def _tail_gap(db: Database) -> list[tuple[int, int]]:
    """Audit rows removed from the end: the id counter remembers ids no longer in the table."""
    issued = db.conn.execute("SELECT seq FROM sqlite_sequence WHERE name = 'audit'").fetchone()
    top = db.conn.execute("SELECT max(id) FROM audit").fetchone()[0] or 0
    return [(top + 1, issued[0])] if issued and issued[0] > top else []


def health(db: Database, audit_gaps: list[tuple[int, int]]) -> Health:
    integrity = [r[0] for r in db.conn.execute("PRAGMA integrity_check")]
    fk = len(db.conn.execute("PRAGMA foreign_key_check").fetchall())
    return Health(integrity, fk, audit_gaps + _tail_gap(db), db.version)
