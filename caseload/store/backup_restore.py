"""Online backup, verified restore and checks of a store file."""

from __future__ import annotations

import os
import shutil
import sqlite3
import tempfile
from collections.abc import Iterator
from contextlib import closing, contextmanager
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from caseload.core.model import Staff
from caseload.store import migrations
from caseload.store.alert_table import HANDLING
from caseload.store.db import Database, StoreError, create_private, store_files
from caseload.store.staff_table import staff_from_row
from caseload.store.verify import Report, verify

# Audit actions that record a store's upkeep rather than clinical work: losing them loses no data.
UPKEEP_ACTIONS = ("store.backup", "store.restore")
ALERT_HANDLING = tuple(HANDLING.values())


@dataclass(frozen=True)
class Loss:
    """What the current store holds that a backup does not: its audit rows past their common history."""

    audit_rows: int
    entries: int
    alerts_handled: int
    other_changes: int  # patients, staff, protocol, exports...
    first: str | None  # when the earliest and latest of those rows were written
    last: str | None

    @property
    def data(self) -> bool:
        """Whether anything but upkeep rows (backups, restores) would go."""
        return bool(self.entries or self.alerts_handled or self.other_changes)

    def describe(self) -> str:
        return (f"entries: {self.entries}, alerts handled: {self.alerts_handled}, other changes: {self.other_changes}"
                f" (audit rows: {self.audit_rows}, written {self.first} to {self.last})")


@dataclass(frozen=True)
class Restored:
    version: int  # the backup's schema, before it was brought up to date
    kept: Path  # the replaced store, kept beside it
    loss: Loss | None  # None when the replaced store was too damaged to compare


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


def check_file(path: Path) -> Report:
    """Verify a store file read-only (full integrity check), whatever state it is in."""
    try:
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
    except sqlite3.Error as err:
        raise StoreError(f"{path} cannot be opened ({err})") from None
    with closing(conn):
        return verify(conn)


def restore_from(db: Database, source: Path, force: bool = False) -> Restored:
    """Replace the store's content with a verified backup (see `verified_copy`). The store is kept as
    `<name>.replaced-<UTC time>`, then the staged copy is written over it in one transaction. A backup
    missing data the store holds is refused unless `force`."""
    with verified_copy(db.path, source) as (stage, version):
        with closing(sqlite3.connect(f"file:{stage}?mode=ro", uri=True)) as staged:
            loss = _loss(db.conn, staged)
            if loss.data and not force:
                raise StoreError(f"{source} lacks {loss.describe()} that the store holds: "
                                 "nothing restored; add --force to restore it anyway")
            kept = _kept_name(db.path, db.clock())
            backup_to(db, kept)
            try:
                # One write transaction on the live file: other connections see the old store or the
                # new one, never a mix, and a stale write-ahead log can never be replayed onto it.
                staged.backup(db.conn)
            except sqlite3.Error as err:
                raise StoreError(f"restore from {source} failed ({err}): the store is unchanged") from None
    return Restored(version, kept, loss)


@contextmanager
def verified_copy(store: Path, source: Path) -> Iterator[tuple[Path, int]]:
    """The backup copied (backup API) into a private staging file beside the store, verified there
    (integrity, audit chain, triggers, schema fingerprint, records against their audit rows) and
    brought up to the current schema; yields it with the backup's schema version, removes it after."""
    if source.resolve() == store.resolve():
        raise StoreError(f"{source} is the store itself: restore from a backup file")
    if not source.is_file():
        raise StoreError(f"{source} is not a file")
    with _staged(store) as stage:
        version = _copy_in(source, stage)
        _refuse_unverified(stage, source)
        if version < migrations.LATEST:
            Database(stage).close()  # the same upgrade any older store gets when opened
            _refuse_unverified(stage, source)
        yield stage, version


def staff_of_unopenable(store: Path) -> list[Staff] | None:
    """The staff records of a store that cannot be opened, read-only, or None when SQLite cannot
    read them (not a database, the table or its pages damaged or missing)."""
    try:
        with closing(sqlite3.connect(f"{store.resolve().as_uri()}?mode=ro", uri=True)) as conn:
            conn.row_factory = sqlite3.Row
            return [staff_from_row(row) for row in conn.execute("SELECT * FROM staff")]
    except (sqlite3.Error, ValueError, IndexError):  # a role caseload never writes, a column it makes missing
        return None


def replace_damaged(store: Path, stage: Path, now: datetime) -> Path:
    """Put a verified staged copy in place of a store too damaged to open. The damaged file and its
    write-ahead log are kept beside it byte for byte; nothing can be read from them to compare. The
    new file keeps the replaced one's owner: root restoring a service's store leaves it the service's."""
    kept = _kept_name(store, now)
    for suffix in ("", "-wal"):
        damaged = Path(f"{store}{suffix}")
        if damaged.exists() and (not suffix or damaged.stat().st_size):  # an empty log holds nothing
            try:
                create_private(Path(f"{kept}{suffix}"))
            except FileExistsError:
                raise StoreError(f"{kept}{suffix} exists already: nothing restored, try again") from None
            shutil.copyfile(damaged, f"{kept}{suffix}")
    for journal in store_files(store)[1:]:  # they belong to the damaged file: never replay them onto the new one
        journal.unlink(missing_ok=True)
    if os.geteuid() == 0 and store.exists():
        owner = store.stat()
        os.chown(stage, owner.st_uid, owner.st_gid)
    os.replace(stage, store)
    return kept


def _kept_name(store: Path, now: datetime) -> Path:
    return store.with_name(f"{store.name}.replaced-{now.astimezone(UTC):%Y%m%dT%H%M%SZ}")


@contextmanager
def _staged(store: Path) -> Iterator[Path]:
    """A private file in the store's folder for the candidate, removed with its journals afterwards."""
    try:
        fd, name = tempfile.mkstemp(prefix=f".{store.name}.restore-", dir=store.parent)  # 0600, O_EXCL
    except OSError as err:
        raise StoreError(f"cannot stage the restore beside {store}: {err.strerror}") from None
    os.close(fd)
    stage = Path(name)
    try:
        yield stage
    finally:
        for leftover in (stage, Path(f"{stage}-wal"), Path(f"{stage}-shm")):
            leftover.unlink(missing_ok=True)


def _copy_in(source: Path, stage: Path) -> int:
    """Copy `source` into `stage` with the backup API; the staged copy's schema version."""
    try:
        with closing(sqlite3.connect(f"file:{source}?mode=ro", uri=True)) as src, closing(sqlite3.connect(stage)) as dst:
            src.backup(dst)
            version = dst.execute("PRAGMA user_version").fetchone()[0]
            tables = {r[0] for r in dst.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
    except sqlite3.DatabaseError as err:
        raise StoreError(f"{source} is damaged or not an SQLite file ({err}): not restored") from None
    if version < 1 or not {"staff", "patient", "entry", "audit"} <= tables:
        raise StoreError(f"{source} is not a caseload store: not restored")
    if version > migrations.LATEST:
        raise StoreError(f"{source} has schema {version}, newer than this caseload ({migrations.LATEST}): not restored")
    return version


def _refuse_unverified(stage: Path, source: Path) -> None:
    report = check_file(stage)
    if not report.ok:
        raise StoreError(f"{source} {report.first_problem()}: not restored")


def _loss(current: sqlite3.Connection, backup: sqlite3.Connection) -> Loss:
    """Compare the two audit chains: the newest row both hold with the same hash ends their common
    history (a hash covers every row before it); the current store's rows past it would be lost."""
    common = 0
    for row_id, digest in current.execute("SELECT id, hash FROM audit ORDER BY id DESC"):
        found = backup.execute("SELECT hash FROM audit WHERE id = ?", (row_id,)).fetchone()
        if found and found[0] == digest:
            common = row_id
            break
    counts = current.execute(
        "SELECT count(*), sum(action IN ('entry.log', 'entry.amend')), sum(action IN (?, ?, ?)),"
        " sum(action NOT IN ('entry.log', 'entry.amend', ?, ?) AND action NOT LIKE 'alert.%'), min(at), max(at)"
        " FROM audit WHERE id > ?",
        (*ALERT_HANDLING, *UPKEEP_ACTIONS, common),
    ).fetchone()
    rows, entries, alerts, other, first, last = counts
    return Loss(rows, entries or 0, alerts or 0, other or 0, first, last)
