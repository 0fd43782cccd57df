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
T = TypeVar("T")


class StoreError(Exception):
    """The file cannot be used as a caseload store (newer schema, not a store, damaged)."""


class StoreDamaged(StoreError):
    """The file fails SQLite's quick check, or a read met a damaged page: nothing may write it but
    `restore`, and `check` says what is wrong."""

    def __init__(self, path: Path, found: str):
        found = " ".join(found.split())  # SQLite's finding can run over lines: the refusal is one
        super().__init__(f"{path} is damaged ({found}): run 'caseload check', then restore a backup "
                         "with 'caseload restore FILE'")


# SQLite's primary result codes for a file whose pages or header do not make a database.
DAMAGE_CODES = (sqlite3.SQLITE_CORRUPT, sqlite3.SQLITE_NOTADB)


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


class Database:
    """One connection to the store file, with the write transaction and the audit row builder."""

    def __init__(self, path: str | Path, clock: Callable[[], datetime] = utc_now):
        self.path = Path(path)
        self.clock = clock
        if not self.path.exists():
            with suppress(FileExistsError):  # another process created it a moment ago
                create_private(self.path)
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
            self._prepare()
        except StoreError:
            conn.close()
            raise
        except sqlite3.DatabaseError as err:
            conn.close()
            if damage_code(err) == sqlite3.SQLITE_CORRUPT:  # a store's pages; not a database at all is below
                raise StoreDamaged(self.path, str(err)) from None
            if not (os.access(self.path, os.W_OK) and os.access(self.path.parent, os.W_OK)):
                # WAL mode writes its -wal and -shm files beside the store, even to read it.
                raise StoreError(f"{self.path} or its folder is read-only for this account: "
                                 "caseload needs to write there, ask an admin") from None
            raise StoreError(f"{self.path} is not a usable caseload store: {err}") from None

    @cached_property
    def db(self):
        """sqlite-utils on this connection, for its table helpers. Imported on first use: it loads
        plugins and optional libraries, which a command that only reads never needs."""
        import sqlite_utils

        return sqlite_utils.Database(self.conn)

    def _prepare(self, attempts: int = 6) -> None:
        """Check, set up and upgrade the file (the quick check waits for the first write, see
        `refuse_damaged`). While another process is creating the file or switching it to WAL, SQLite
        can report a lock without waiting on the busy timeout: retry."""
        for attempt in range(1, attempts + 1):
            try:
                self._refuse_foreign()
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

    def _refuse_foreign(self) -> None:
        """Before anything touches the file: refuse a newer schema or someone else's database."""
        # One statement, one snapshot: another process may be creating the store right now.
        current, objects = self.conn.execute(
            "SELECT (SELECT user_version FROM pragma_user_version), (SELECT count(*) FROM sqlite_master)"
        ).fetchone()
        if current > migrations.LATEST:
            raise StoreError(
                f"{self.path} was written by a newer caseload (schema {current}, this one knows up to "
                f"{migrations.LATEST}): upgrade caseload before opening it"
            )
        if current == 0 and objects:
            raise StoreError(f"{self.path} is an SQLite file but not a caseload store")

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
        """COMMIT the transaction just begun when the block ends, ROLLBACK if it raised."""
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
                if "readonly" in str(err).lower():
                    raise StoreError(f"{self.path} is read-only for this account: nothing was written") from None
                if not _is_lock_error(err):
                    raise
                if attempt == attempts:
                    raise StoreError(
                        f"the store stayed locked by other writers ({err}): nothing was written, try again"
                    ) from None
                time.sleep(0.05 * 2**attempt)
        raise AssertionError("unreachable")

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


def _is_lock_error(err: sqlite3.OperationalError) -> bool:
    text = str(err).lower()
    return "locked" in text or "busy" in text


def audit_json(value) -> str | None:
    """A value as an audit row's `before` or `after` states it."""
    return None if value is None else json.dumps(value, sort_keys=True, default=str)
