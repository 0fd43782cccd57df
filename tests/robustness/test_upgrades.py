"""Upgrades: an older file is migrated in place in one transaction keeping every row; a migration that
fails halfway leaves the file as it was; a file from a newer caseload is refused and left untouched."""

from __future__ import annotations

import multiprocessing
import sqlite3
import time

import pytest
from click.testing import CliRunner

from caseload.cli import main
from caseload.store import Store, StoreError, migrations
from tests.robustness.robust_support import snapshot

V1_ROWS = [
    "INSERT INTO meta VALUES ('timezone', 'Europe/London')",
    "INSERT INTO staff VALUES ('ada', 'Ada Admin', 'admin', 1, 'ada-account', '2026-01-05T09:00:00+00:00')",
    "INSERT INTO staff VALUES ('nell', 'Nell Nurse', 'nurse', 1, NULL, '2026-01-05T09:01:00+00:00')",
    "INSERT INTO patient VALUES ('P0001', 'Pia Test', '1991-04-02', 'nell', 'active', 'natural', '2026-01-06', 1)",
    "INSERT INTO patient VALUES ('P0002', 'Pat Test', '1988-01-09', NULL, 'paused', 'timed', '2026-01-07', 0)",
    "INSERT INTO entry (id, patient_id, day, kind, raw, word, by_staff, os_account, at)"
    " VALUES (1, 'P0001', '2026-01-10', 'bleed', 'heavy', 'heavy', 'nell', 'nell-account', '2026-01-10T08:00:00+00:00')",
    "INSERT INTO entry (id, patient_id, day, time, kind, raw, number, note, by_staff, os_account, at)"
    " VALUES (2, 'P0001', '2026-01-11', '06:30', 'temp', '36.42', 36.42, 'caf\u00e9 \u2013 ok', 'nell', 'nell-account',"
    " '2026-01-11T08:00:00+00:00')",
    "INSERT INTO entry (id, patient_id, day, kind, raw, number, by_staff, os_account, at, supersedes, amend_reason)"
    " VALUES (3, 'P0001', '2026-01-11', 'temp', '36.48', 36.48, 'nell', 'nell-account', '2026-01-11T09:00:00+00:00', 2,"
    " 'misread')",
    "INSERT INTO audit (at, by_staff, os_account, action, tbl, row_id, after)"
    " VALUES ('2026-01-05T09:00:00+00:00', 'ada', 'ada-account', 'staff.add', 'staff', 'ada', '{}')",
    "INSERT INTO audit (at, by_staff, os_account, action, tbl, row_id, after)"
    " VALUES ('2026-01-10T08:00:00+00:00', 'nell', 'nell-account', 'entry.log', 'entry', '1', '{}')",
]


@pytest.fixture
def v1_file(tmp_path, monkeypatch):
    """A store written at schema 1, with rows in every table that matters; later migrations are hidden."""
    path = tmp_path / "v1.db"
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("BEGIN")
    migrations.MIGRATIONS[0](conn)
    for sql in V1_ROWS:
        conn.execute(sql)
    conn.execute("PRAGMA user_version = 1")
    conn.execute("COMMIT")
    conn.close()
    monkeypatch.setattr(migrations, "MIGRATIONS", migrations.MIGRATIONS[:1])
    monkeypatch.setattr(migrations, "LATEST", 1)
    return path


def with_v2(monkeypatch, step) -> None:
    monkeypatch.setattr(migrations, "MIGRATIONS", [*migrations.MIGRATIONS, step])
    monkeypatch.setattr(migrations, "LATEST", 2)


def v2_rebuilds_a_table(conn: sqlite3.Connection) -> None:
    """A migration of the usual shapes: a new column, a rebuilt table with its rows copied, a new index."""
    conn.execute("ALTER TABLE patient ADD COLUMN phone TEXT")
    conn.execute("CREATE TABLE staff_new (id TEXT PRIMARY KEY, name TEXT NOT NULL, role TEXT NOT NULL,"
                 " active INTEGER NOT NULL DEFAULT 1, os_account TEXT UNIQUE, created_at TEXT NOT NULL, team TEXT)")
    conn.execute("INSERT INTO staff_new (id, name, role, active, os_account, created_at)"
                 " SELECT id, name, role, active, os_account, created_at FROM staff")
    conn.execute("DROP TABLE staff")
    conn.execute("ALTER TABLE staff_new RENAME TO staff")
    conn.execute("CREATE INDEX entry_by_staff ON entry(by_staff)")


def rows_of(shot: dict, table: str, width: int) -> list[tuple]:
    return [row[:width] for row in shot[table]]


def test_an_older_file_is_migrated_in_place_keeping_every_row(v1_file, monkeypatch):
    before = snapshot(v1_file)
    with_v2(monkeypatch, v2_rebuilds_a_table)
    with Store(v1_file) as store:
        assert store.db.version == 2
        assert store.staff.get("nell").name == "Nell Nurse"
        assert [e.id for e in store.entries.for_patient("P0001")] == [1, 2, 3]
    after = snapshot(v1_file)
    for table, rows in before.items():
        width = len(rows[0]) if rows else 0
        assert rows_of(after, table, width) == rows, table
    assert [row[-1] for row in after["patient"]] == [None, None]  # the new column, empty


def failing_halfway(conn: sqlite3.Connection) -> None:
    conn.execute("ALTER TABLE patient ADD COLUMN phone TEXT")
    conn.execute("UPDATE patient SET phone = '000'")
    conn.execute("DROP TABLE patient_state")
    raise RuntimeError("disk unplugged halfway through the upgrade")


def failing_on_bad_sql(conn: sqlite3.Connection) -> None:
    conn.execute("ALTER TABLE patient ADD COLUMN phone TEXT")
    conn.execute("INSERT INTO nowhere VALUES (1)")


def breaking_references(conn: sqlite3.Connection) -> None:
    conn.execute("DELETE FROM staff WHERE id = 'nell'")  # patients and entries still name her


@pytest.mark.parametrize("step", [failing_halfway, failing_on_bad_sql, breaking_references])
def test_a_migration_that_fails_halfway_leaves_the_file_at_v1(v1_file, monkeypatch, step):
    before = snapshot(v1_file)
    with_v2(monkeypatch, step)
    with pytest.raises(StoreError, match="upgrading schema 1 to 2 failed.*left as it was, at schema 1"):
        Store(v1_file)
    assert snapshot(v1_file) == before
    conn = sqlite3.connect(v1_file)
    assert conn.execute("PRAGMA user_version").fetchone()[0] == 1
    assert "phone" not in [c[1] for c in conn.execute("PRAGMA table_info(patient)")]
    conn.close()
    monkeypatch.setattr(migrations, "MIGRATIONS", migrations.MIGRATIONS[:1])
    monkeypatch.setattr(migrations, "LATEST", 1)
    with Store(v1_file) as store:  # still a working schema 1 store
        assert store.patients.get("P0002").plan.value == "timed"


def test_a_failed_upgrade_is_one_line_from_the_command_line(v1_file, monkeypatch):
    with_v2(monkeypatch, failing_halfway)
    result = CliRunner().invoke(main, ["--db", str(v1_file), "--today", "2026-12-01", "list"])
    assert result.exit_code == 1 and len(result.stderr.strip().splitlines()) == 1
    assert "upgrading schema 1 to 2 failed" in result.stderr


def test_a_newer_file_is_refused_and_its_bytes_untouched(v1_file):
    conn = sqlite3.connect(v1_file)
    conn.execute(f"PRAGMA user_version = {migrations.LATEST + 7}")
    conn.close()
    data = v1_file.read_bytes()
    with pytest.raises(StoreError, match="newer caseload.*upgrade caseload"):
        Store(v1_file)
    result = CliRunner().invoke(main, ["--db", str(v1_file), "--today", "2026-12-01", "log", "P0001", "lh", "positive"])
    assert result.exit_code == 1 and "written by a newer caseload" in result.stderr
    assert v1_file.read_bytes() == data


def slow_v2(conn: sqlite3.Connection) -> None:
    time.sleep(0.3)  # long enough for every other process to be waiting on the lock
    conn.execute("ALTER TABLE patient ADD COLUMN phone TEXT")


def open_store(path: str) -> None:
    Store(path).close()


def test_processes_opening_an_older_file_at_once_upgrade_it_once(v1_file, monkeypatch):
    before = snapshot(v1_file)
    with_v2(monkeypatch, slow_v2)
    procs = [multiprocessing.get_context("fork").Process(target=open_store, args=(str(v1_file),)) for _ in range(4)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(30)
    assert [p.exitcode for p in procs] == [0, 0, 0, 0]
    after = snapshot(v1_file)
    assert rows_of(after, "staff", 6) == before["staff"] and rows_of(after, "entry", 20) == before["entry"]
    with Store(v1_file) as store:
        assert store.db.version == 2


@pytest.mark.parametrize("round_", range(3))
def test_processes_creating_a_new_store_at_once_all_open_it(tmp_path, round_):
    path = tmp_path / "fresh.db"
    procs = [multiprocessing.get_context("fork").Process(target=open_store, args=(str(path),)) for _ in range(4)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(30)
    assert [p.exitcode for p in procs] == [0, 0, 0, 0]
    with Store(path) as store:
        assert store.db.version == migrations.LATEST


def test_the_real_migrations_keep_alert_rows_and_allow_an_episode_raised_again(tmp_path):
    path = tmp_path / "alerts.db"
    conn = sqlite3.connect(path, isolation_level=None)
    migrations.MIGRATIONS[0](conn)
    for sql in V1_ROWS[:4]:
        conn.execute(sql)
    conn.execute("INSERT INTO alert (id, patient_id, kind, key, severity, raised_on, due, message, state, resolved_reason)"
                 " VALUES (7, 'P0001', 'fever', 'P0001:fever:2026-01-11', 'today', '2026-01-12', '2026-01-12', 'Fever',"
                 " 'resolved', 'auto: the entries behind it were corrected or voided')")
    conn.execute("PRAGMA user_version = 1")
    conn.close()
    with Store(path) as store:
        (old,) = store.alerts.all()
        assert (old.id, old.key, old.resolved_reason) == (7, "P0001:fever:2026-01-11", "auto: the entries behind it were corrected or voided")
        live = ("INSERT INTO alert (patient_id, kind, key, severity, raised_on, due, message, state)"
                " VALUES ('P0001', 'fever', 'P0001:fever:2026-01-11', 'today', '2026-01-13', '2026-01-13', 'Fever', 'open')")
        store.db.conn.execute(live)  # the same episode again, beside its resolved row
        with pytest.raises(sqlite3.IntegrityError):
            store.db.conn.execute(live)  # but never two unresolved alerts for one key
        assert store.protocol.current().version == 1
