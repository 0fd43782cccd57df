"""The SQLite file: opening it safely, migrating it, and running each write in one transaction."""

from __future__ import annotations

import json
import os
import sqlite3
import time
from collections.abc import Callable, Iterator
from contextlib import closing, contextmanager, suppress
from functools import cached_property
from datetime import UTC, date, datetime
from pathlib import Path
from typing import TypeVar

from caseload.core.model import Actor
from caseload.store import chain, migrations

BUSY_TIMEOUT_MS = 5000
# Bytes free under which an I/O error is taken for a full disk: less than WAL mode's index and a few pages.
FULL_BELOW = 64 * 1024
T = TypeVar("T")


class StoreError(Exception):
    """The file cannot be used as a caseload store (newer schema, not a store, damaged)."""


class NotAStore(StoreError):
    """The file is empty, or an SQLite file without caseload's tables: only `init` makes a store of
    an empty file, and `restore` may replace either (keeping it beside the store)."""


class WriteFailed(StoreError):
    """SQLite could not make a write (a full disk, a read-only file, an I/O error): rolled back whole."""


class StoreDamaged(StoreError):
    """The file fails SQLite's quick check, or a read met a damaged page: nothing may write it but
    `restore`, and `check` says what is wrong."""

    def __init__(self, path: Path, found: str):
        found = " ".join(found.split())  # SQLite's finding can run over lines: the refusal is one
        super().__init__(f"{path} is damaged ({found}): run 'caseload check', then restore a backup "
                         "with 'caseload restore FILE'")


# SQLite's primary result codes for a file whose pages or header do not make a database.
DAMAGE_CODES = (sqlite3.SQLITE_CORRUPT, sqlite3.SQLITE_NOTADB)
# Its codes for a write the file, its folder or its disk would not take (a full disk, a read-only file,
# an I/O error), as against a statement that is wrong in itself.
WRITE_FAILURE_CODES = (sqlite3.SQLITE_PERM, sqlite3.SQLITE_READONLY, sqlite3.SQLITE_IOERR, sqlite3.SQLITE_FULL,
                       sqlite3.SQLITE_CANTOPEN, sqlite3.SQLITE_NOLFS)


def damage_code(err: sqlite3.Error) -> int:
    """SQLite's primary result code of an error (0 when it carries none)."""
    return (getattr(err, "sqlite_errorcode", None) or 0) & 0xFF


@contextmanager
def refusing_damage(path: Path) -> Iterator[None]:
    """Turn SQLite's report of a damaged page, met while reading or writing, into the one-line
    StoreDamaged refusal; any other error goes on as it was."""
    try:
        yield
    except sqlite3.DatabaseError as err:
        if damage_code(err) not in DAMAGE_CODES:  # a lock, a constraint, a full disk: not damage
            raise
        raise StoreDamaged(path, str(err)) from None


def utc_now() -> datetime:
    return datetime.now(UTC)


def create_private(path: Path) -> None:
    """Create an empty file readable and writable by its owner only."""
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd = os.open(path, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o600)
    except FileExistsError:
        raise
    except OSError as err:
        raise StoreError(f"cannot create {path}: {err.strerror}") from None
    os.close(fd)


def store_files(path: Path) -> tuple[Path, Path, Path]:
    """The store file and the write-ahead log and shared-memory index SQLite keeps beside it."""
    return path, Path(f"{path}-wal"), Path(f"{path}-shm")


@contextmanager
def creating(path: Path) -> Iterator[None]:
    """Setting up a new store at `path` (`init`, `host setup`): when the block fails (a full disk, a
    refused admin), the path is left as it was rather than holding a half-made store that "exists
    already": the files the block made are removed, and an empty file that was there is emptied again
    (the schema may have been written into it). Any other file that was there is left alone."""
    made = [p for p in store_files(path) if not p.exists()]
    was_empty = path.exists() and not path.stat().st_size
    try:
        yield
    except BaseException:
        for p in made:
            p.unlink(missing_ok=True)
        if was_empty:
            os.truncate(path, 0)
        raise


class Database:
    """One connection to the store file, with the write transaction and the audit row builder."""

    def __init__(self, path: str | Path, clock: Callable[[], datetime] = utc_now, *, must_exist: bool = False):
        """`must_exist`: the file must already be a caseload store, as for every command but `init`:
        no file, an empty one or someone else's database is refused and left as it was. Without it a
        missing file is created (owner-only) and an empty one is set up as a new store."""
        self.path = Path(path)
        self.clock = clock
        if not self.path.exists():
            if must_exist:
                raise NotAStore(f"no store at {self.path}: create one with 'caseload init --admin ID --name NAME'")
            self._create()
        try:
            conn = sqlite3.connect(self.path, timeout=BUSY_TIMEOUT_MS / 1000, check_same_thread=False)
        except sqlite3.Error as err:
            raise StoreError(f"{self.path} cannot be opened: {err}") from None
        conn.isolation_level = None  # transactions are begun explicitly, see write()
        self.conn = conn
        self.day_of_record: date | None = None  # set by the outermost atomic() for its audit rows
        self._savepoints = 0
        self._checked = False  # whether this connection has run the quick check its first write pays
        try:
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            self._prepare(set_up=not must_exist)
        except StoreError:
            conn.close()
            raise
        except sqlite3.DatabaseError as err:
            conn.close()
            if damage_code(err) in DAMAGE_CODES:  # damaged pages, or a header that makes no database
                raise StoreDamaged(self.path, str(err)) from None
            if self._disk_full(err):  # even to read, WAL mode makes a 32 KiB index beside the store
                raise self._failed_write(err) from None
            read_only = self._read_only_files()
            if self.path in read_only or self.path.parent in read_only:
                # WAL mode writes its -wal and -shm files beside the store, even to read it.
                raise StoreError(f"{self.path} or its folder is read-only for this account: "
                                 "caseload needs to write there, ask an admin") from None
            if read_only:
                raise StoreError(f"{_named(read_only)} read-only for this account: caseload needs to write "
                                 "there to open the store, ask an admin") from None
            raise StoreError(f"{self.path} is not a usable caseload store: {err}") from None

    def _create(self) -> None:
        """A new store file, owner-only. A write-ahead log or index left at its name by an earlier
        file would be read as this one's (and keep its own owner and mode): refused instead."""
        leftovers = [p for p in store_files(self.path)[1:] if p.exists()]
        if leftovers:
            raise StoreError(f"{_named(leftovers)} left beside a store that is gone: remove "
                             f"{'it' if len(leftovers) == 1 else 'them'} before making a store at {self.path}")
        with suppress(FileExistsError):  # another process created it a moment ago
            create_private(self.path)

    @cached_property
    def db(self):
        """sqlite-utils on this connection, for its table helpers. Imported on first use: it loads
        plugins and optional libraries, which a command that only reads never needs."""
        import sqlite_utils

        return sqlite_utils.Database(self.conn)

    def _prepare(self, set_up: bool, attempts: int = 6) -> None:
        """Check, set up (`set_up`: an empty file becomes a new store) and upgrade the file (the quick
        check waits for the first write, see `refuse_damaged`). While another process is creating the
        file or switching it to WAL, SQLite can report a lock without waiting on the busy timeout: retry."""
        for attempt in range(1, attempts + 1):
            try:
                self._refuse_foreign(set_up)
                self.conn.execute("PRAGMA journal_mode = WAL")
                self.conn.execute("PRAGMA foreign_keys = ON")
                self.conn.execute("PRAGMA synchronous = FULL")
                self.migrate()
                return
            except sqlite3.OperationalError as err:
                if attempt == attempts or not _is_lock_error(err):
                    raise
                time.sleep(0.05 * 2**attempt)

    def close(self) -> None:
        self.conn.close()

    @property
    def version(self) -> int:
        return self.conn.execute("PRAGMA user_version").fetchone()[0]

    def _refuse_foreign(self, set_up: bool) -> None:
        """Before anything touches the file: refuse a newer schema, someone else's database, and
        (unless `set_up`) an empty file: a command that only opens a store never makes one."""
        # One statement, one snapshot: another process may be creating the store right now.
        current, objects, meta = self.conn.execute(
            "SELECT (SELECT user_version FROM pragma_user_version), (SELECT count(*) FROM sqlite_master),"
            " (SELECT count(*) FROM sqlite_master WHERE type = 'table' AND name = 'meta')"
        ).fetchone()
        if current > migrations.LATEST:
            raise StoreError(
                f"{self.path} was written by a newer caseload (schema {current}, this one knows up to "
                f"{migrations.LATEST}): upgrade caseload before opening it"
            )
        if (current == 0 and objects) or (current and not meta):
            raise NotAStore(f"{self.path} is an SQLite file but not a caseload store")
        if current == 0 and not set_up:
            raise NotAStore(f"{self.path} is empty, not a caseload store: make one with 'caseload init "
                            "--admin ID --name NAME', or give the store's path")
        if current == 0:
            try:  # the store made here is owner-only, whoever made the empty file and however
                os.chmod(self.path, 0o600)
            except OSError as err:
                raise StoreError(f"cannot make {self.path} owner-only ({err.strerror}): "
                                 "give a new path for the store") from None

    def refuse_damaged(self, aside: bool = False) -> None:
        """SQLite's quick check (every page's structure, not index contents), once per connection,
        before its first write: no command carries on writing into a damaged file. It reads the whole
        file (seconds on a large store), so opening does not run it; a read that meets a damaged page
        is refused by `refusing_damage` instead. `aside`: run it on a read connection of its own, so
        this one stays free for other threads' reads meanwhile."""
        if self._checked:
            return
        if aside:
            read_only = f"{self.path.resolve().as_uri()}?mode=ro"  # as_uri: a '?' or '#' in the path stays a name
            with closing(sqlite3.connect(read_only, uri=True, timeout=BUSY_TIMEOUT_MS / 1000)) as conn:
                found = _quick_check(conn)
        else:
            found = _quick_check(self.conn)
        if found != "ok":
            raise StoreDamaged(self.path, found)
        self._checked = True

    def migrate(self) -> None:
        current = self.version
        if not migrations.pending(current):
            return
        self.refuse_damaged()  # said as damage, not as a failed upgrade
        # A step may rebuild a table (create, copy, drop, rename), which live foreign keys refuse
        # half way; the references are checked once, at the end, inside the same transaction.
        self.conn.execute("PRAGMA foreign_keys = OFF")
        try:
            with self.write():
                current = self.version  # again under the lock: another process may have just upgraded
                steps = migrations.pending(current)
                for version, step in steps:
                    step(self.conn)
                    self.conn.execute(f"PRAGMA user_version = {version}")
                broken = self.conn.execute("PRAGMA foreign_key_check").fetchall()
                if broken:
                    raise StoreError(f"{len(broken)} rows lose the row they refer to (first in table {broken[0][0]})")
        except WriteFailed:  # a full disk or a read-only file: said as such, not as a failed step
            raise
        except Exception as err:  # whatever a step raised, its transaction was rolled back whole
            raise StoreError(
                f"{self.path}: upgrading schema {current} to {migrations.LATEST} failed ({err}): "
                f"the file is left as it was, at schema {current}"
            ) from None
        finally:
            self.conn.execute("PRAGMA foreign_keys = ON")

    @contextmanager
    def write(self) -> Iterator[sqlite3.Connection]:
        """One write transaction. IMMEDIATE takes the write lock up front, so two writers queue
        on the busy timeout instead of failing mid-transaction."""
        if self.conn.in_transaction:
            raise StoreError("a write transaction is already open on this connection")
        self.refuse_damaged()
        self.conn.execute("BEGIN IMMEDIATE")
        with self._open_transaction():
            yield self.conn

    @contextmanager
    def _open_transaction(self) -> Iterator[None]:
        """COMMIT the transaction just begun when the block ends, ROLLBACK if it raised. A write SQLite
        could not make (a full disk, most often at COMMIT) is one line; a lock is raised as it is, for
        the caller's retry."""
        try:
            try:
                yield
            except BaseException:
                if self.conn.in_transaction:
                    self.conn.execute("ROLLBACK")
                raise
            else:
                try:
                    self.conn.execute("COMMIT")
                except BaseException:
                    # A failed COMMIT leaves the transaction open: close it so a retry starts clean.
                    if self.conn.in_transaction:
                        self.conn.execute("ROLLBACK")
                    raise
        except sqlite3.OperationalError as err:
            if damage_code(err) not in WRITE_FAILURE_CODES:  # a lock, for the caller's retry; a wrong statement
                raise
            raise self._failed_write(err) from None

    @contextmanager
    def atomic(self, day_of_record: date | None = None, attempts: int = 6) -> Iterator[sqlite3.Connection]:
        """One transaction that nests. The outermost takes the write lock (BEGIN IMMEDIATE), waiting
        with a bounded retry while other writers hold it; once taken the lock is held to COMMIT. An
        inner one is a savepoint, rolled back alone when it fails. `day_of_record` is the clinic day
        the outermost one's audit rows record."""
        if not self.conn.in_transaction:
            self.refuse_damaged()
            self._retry_on_lock(lambda: self.conn.execute("BEGIN IMMEDIATE"), attempts)
            with self._begun(day_of_record):
                yield self.conn
            return
        self._savepoints += 1
        name = f"nested_{self._savepoints}"
        self.conn.execute(f"SAVEPOINT {name}")
        try:
            yield self.conn
        except BaseException:
            self.conn.execute(f"ROLLBACK TO {name}")
            self.conn.execute(f"RELEASE {name}")
            raise
        else:
            self.conn.execute(f"RELEASE {name}")
        finally:
            self._savepoints -= 1

    @contextmanager
    def _begun(self, day_of_record: date | None) -> Iterator[None]:
        """The transaction just begun: its day of record, then COMMIT, or ROLLBACK if the block raised."""
        self.day_of_record = day_of_record
        try:
            with self._open_transaction():
                yield
        finally:
            self.day_of_record = None

    def transact(self, work: Callable[[], T], day_of_record: date | None = None, attempts: int = 6) -> T:
        """Run `work` as one transaction, rerunning the whole of it while another writer holds the
        lock past the busy timeout (a lock can also bite at COMMIT outside WAL mode). Inside a
        transaction already open it is one savepoint, and the outermost unit retries."""
        if self.conn.in_transaction:
            with self.atomic():
                return work()

        self.refuse_damaged()

        def unit() -> T:
            self.conn.execute("BEGIN IMMEDIATE")
            with self._begun(day_of_record):
                return work()

        return self._retry_on_lock(unit, attempts)

    def _retry_on_lock(self, step: Callable[[], T], attempts: int) -> T:
        """`step()`, tried again with a growing pause while the file is locked by another writer; a
        lock past every attempt is one line saying nothing was written. Anything else is raised at once."""
        for attempt in range(1, attempts + 1):
            try:
                return step()
            except sqlite3.OperationalError as err:
                if damage_code(err) in WRITE_FAILURE_CODES:
                    raise self._failed_write(err) from None
                if not _is_lock_error(err):
                    raise
                if attempt == attempts:
                    raise StoreError(
                        f"the store stayed locked by other writers ({err}): nothing was written, try again"
                    ) from None
                time.sleep(0.05 * 2**attempt)
        raise AssertionError("unreachable")

    def _failed_write(self, err: sqlite3.OperationalError) -> WriteFailed:
        """The one line for a write SQLite could not make (one of WRITE_FAILURE_CODES); the transaction
        was rolled back."""
        if self._disk_full(err):
            return WriteFailed(f"the disk holding {self.path} is full: nothing was saved; free space and try again")
        if damage_code(err) == sqlite3.SQLITE_READONLY:
            return WriteFailed(f"{_named(self._read_only_files() or [self.path])} read-only for this account: "
                               "nothing was written")
        return WriteFailed(f"writing {self.path} failed ({err}): nothing was saved; try again, and run "
                           "'caseload check' if it goes on failing")

    def _disk_full(self, err: sqlite3.DatabaseError) -> bool:
        """Whether SQLite failed for want of space: it says so for the store's pages, but growing its
        shared-memory index on a full disk is reported as an I/O error, so the disk is asked too."""
        if damage_code(err) == sqlite3.SQLITE_FULL:
            return True
        if damage_code(err) != sqlite3.SQLITE_IOERR:
            return False
        try:
            space = os.statvfs(self.path.parent)
        except OSError:
            return False
        return space.f_bavail * space.f_frsize < FULL_BELOW

    def _read_only_files(self) -> list[Path]:
        """Which of the store, its -wal and -shm (and its folder, where they are made) this account may
        not write: a -wal or -shm left by a use of the store while it was read-only keeps that mode
        after the store itself is writable again, and then refuses every write."""
        files = [p for p in store_files(self.path) if p.exists() and not _writable(p)]
        return files or ([self.path.parent] if not _writable(self.path.parent) else [])

    def now_text(self) -> str:
        return self.clock().isoformat(timespec="seconds")

    def audit(self, actor: Actor, action: str, table: str, row_id, before=None, after=None) -> None:
        """Append the audit row for a change; call it inside the change's transaction."""
        if not self.conn.in_transaction:
            raise StoreError("audit rows are written only inside the transaction of their change")
        append_audit(
            self.conn, [audit_values(self.now_text(), actor, action, table, row_id, before, after, self.day_of_record)]
        )

    def query(self, sql: str, params=()) -> list[dict]:
        """The rows of a SELECT as dicts keyed by column name."""
        cursor = self.conn.execute(sql, params)
        names = [column[0] for column in cursor.description]
        return [dict(zip(names, row)) for row in cursor]

    def records(self, sql: str, params=()) -> list[sqlite3.Row]:
        """The rows of a SELECT, read by column name as `query`'s are but built in C: for the reads
        that take every patient's or alert's row."""
        cursor = self.conn.cursor()
        cursor.row_factory = sqlite3.Row
        return cursor.execute(sql, params).fetchall()

    def meta(self, key: str) -> str | None:
        row = self.conn.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return row[0] if row else None

    def set_meta(self, key: str, value: str) -> None:
        self.conn.execute("INSERT OR REPLACE INTO meta (key, value) VALUES (?, ?)", (key, value))


AUDIT_INSERT = f"INSERT INTO audit ({', '.join(chain.COLUMNS)}, hash) VALUES ({', '.join('?' * (len(chain.COLUMNS) + 1))})"


def append_audit(conn: sqlite3.Connection, rows: list[tuple]) -> None:
    """Append audit rows (from `audit_values`) to the chain, inside the caller's write transaction,
    which holds the write lock: no other writer can append between reading the tail and inserting."""
    if not rows:
        return
    previous, top = conn.execute(
        "SELECT coalesce((SELECT hash FROM audit ORDER BY id DESC LIMIT 1), ?),"
        " max(coalesce((SELECT max(id) FROM audit), 0), coalesce((SELECT seq FROM sqlite_sequence WHERE name = 'audit'), 0))",
        (chain.GENESIS,),
    ).fetchone()
    written = conn.executemany(AUDIT_INSERT, chain.chained(previous, top + 1, rows)).rowcount
    if written != len(rows):
        # Only a trigger the migrations never made can swallow an insert (RAISE(IGNORE)): refuse the change.
        raise StoreError("audit rows were not written, so the change was not made: the store's schema has been "
                         "altered; run 'caseload check' and restore a backup")


def audit_values(
    at: str, actor: Actor, action: str, table: str, row_id, before=None, after=None, day_of_record: date | None = None
) -> tuple:
    """The values of one audit row: chain.COLUMNS after the id, which `append_audit` gives."""
    return (at, actor.id, actor.os_account, action, table, None if row_id is None else str(row_id), audit_json(before),
            audit_json(after), None if day_of_record is None else day_of_record.isoformat())


def _quick_check(conn: sqlite3.Connection) -> str:
    """SQLite's quick check of the file behind `conn`: "ok", or its first finding."""
    try:
        return conn.execute("PRAGMA quick_check(1)").fetchone()[0]
    except sqlite3.DatabaseError as err:
        return str(err)


def _writable(path: Path) -> bool:
    """Whether this process may write `path`, judged by the account it runs as (effective ids), which
    is the one SQLite writes as."""
    return os.access(path, os.W_OK, effective_ids=os.access in os.supports_effective_ids)


def _named(paths: list[Path]) -> str:
    """Files as the subject of a sentence: 'X is', 'X and Y are', 'X, Y and Z are'."""
    *others, last = map(str, paths)
    return f"{', '.join(others)} and {last} are" if others else f"{last} is"


def _is_lock_error(err: sqlite3.OperationalError) -> bool:
    text = str(err).lower()
    return "locked" in text or "busy" in text


def audit_json(value) -> str | None:
    """A value as an audit row's `before` or `after` states it."""
    return None if value is None else json.dumps(value, sort_keys=True, default=str)
