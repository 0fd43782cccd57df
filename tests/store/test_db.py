"""The store file: owner-only, WAL, migrations, refusals of foreign files, and transactions that nest."""

from __future__ import annotations

import json
import os
import sqlite3
from datetime import date

import pytest

from caseload.core.model import Role
from caseload.core.parse import parse_entry
from caseload.store import Store, StoreDamaged, StoreError, refusing_damage
from caseload.store import migrations
from tests.robustness.robust_support import damage_index_page

TODAY = date(2026, 12, 1)


def test_new_store_is_owner_only_wal_with_foreign_keys(store, admin):
    assert os.stat(store.path).st_mode & 0o777 == 0o600
    conn = store.db.conn
    assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert conn.execute("PRAGMA busy_timeout").fetchone()[0] >= 1000
    assert store.db.version == migrations.LATEST


def test_a_failed_transaction_writes_nothing(store, staffed, patient):
    actor = staffed[Role.PHONE]
    entries, audits = store.entries.count(), store.audit.count()
    parsed = parse_entry("temp", "36.6", TODAY)
    with pytest.raises(RuntimeError):
        with store.write():
            store.entries.add(actor, patient.id, parsed)
            raise RuntimeError("power cut halfway")
    assert (store.entries.count(), store.audit.count()) == (entries, audits)


def test_older_schema_is_migrated_in_place_keeping_rows(tmp_path, monkeypatch):
    path = tmp_path / "old.db"
    conn = sqlite3.connect(path)
    migrations.MIGRATIONS[0](conn)
    conn.execute("PRAGMA user_version = 1")
    conn.execute("INSERT INTO meta VALUES ('clinic', 'kept')")
    conn.commit()
    conn.close()

    def v2(c):
        c.execute("ALTER TABLE patient ADD COLUMN phone TEXT")

    steps = [*migrations.MIGRATIONS, v2]
    monkeypatch.setattr(migrations, "MIGRATIONS", steps)
    monkeypatch.setattr(migrations, "LATEST", len(steps))
    with Store(path) as s:
        assert s.db.version == len(steps)
        assert s.db.meta("clinic") == "kept"
        assert "phone" in s.db.db["patient"].columns_dict


def test_newer_schema_is_refused_untouched(tmp_path):
    path = tmp_path / "future.db"
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA user_version = {migrations.LATEST + 1}")
    conn.close()
    data = path.read_bytes()
    with pytest.raises(StoreError, match="newer caseload"):
        Store(path)
    assert path.read_bytes() == data


def test_foreign_sqlite_file_is_refused(tmp_path):
    path = tmp_path / "other.db"
    conn = sqlite3.connect(path)
    conn.execute("CREATE TABLE t (x)")
    conn.close()
    with pytest.raises(StoreError, match="not a caseload store"):
        Store(path)


def test_a_failed_inner_transaction_rolls_back_alone(store, staffed, patient):
    """atomic() nests as savepoints (SQLite SAVEPOINT/ROLLBACK TO, as sqlite-utils' db.atomic() does)."""
    actor = staffed[Role.PHONE]
    entries = store.entries.count()
    with store.atomic(TODAY):
        store.entries.add(actor, patient.id, parse_entry("lh", "positive", TODAY))
        with pytest.raises(RuntimeError):
            with store.atomic():
                store.entries.add(actor, patient.id, parse_entry("temp", "36.6", TODAY))
                raise RuntimeError("the inner step fails")
        with store.atomic():
            store.entries.add(actor, patient.id, parse_entry("mucus", "creamy", TODAY))
    kinds = [e.kind.value for e in store.entries.for_patient(patient.id)][-2:]
    assert store.entries.count() == entries + 2 and kinds == ["lh", "mucus"]


def test_an_outer_failure_undoes_the_inner_work_too(store, staffed, patient):
    entries, audits = store.entries.count(), store.audit.count()
    with pytest.raises(RuntimeError):
        with store.atomic(TODAY):
            with store.atomic():
                store.entries.add(staffed[Role.PHONE], patient.id, parse_entry("lh", "positive", TODAY))
            raise RuntimeError("after the inner step")
    assert (store.entries.count(), store.audit.count()) == (entries, audits)
    assert not store.db.conn.in_transaction


def test_audit_rows_record_the_day_of_record_of_the_outermost_transaction(store, staffed, patient):
    day = date(2026, 11, 30)
    with store.atomic(day):
        with store.atomic(date(1999, 1, 1)):  # an inner transaction takes the outer one's day
            store.entries.add(staffed[Role.PHONE], patient.id, parse_entry("lh", "positive", day))
    assert store.audit.rows("entry.log")[-1].day_of_record == day.isoformat()
    assert store.db.day_of_record is None  # nothing left over for the next transaction

def schema_1_file(path, *rows: str):
    """A store file at schema 1 holding `rows` (SQL inserts)."""
    conn = sqlite3.connect(path)
    migrations.MIGRATIONS[0](conn)
    conn.execute("PRAGMA user_version = 1")
    for sql in rows:
        conn.execute(sql)
    conn.commit()
    conn.close()
    return path


def test_a_schema_1_patient_upgrades_with_the_date_of_its_last_status_change(tmp_path):
    # The latest schema adds the day of a patient's last status change (when a pregnancy began or
    # ended), taken from the audit; a patient whose status never changed has none.
    def change(at: str, patient: str, old: str, new: str) -> str:
        before, after = json.dumps({"status": old}), json.dumps({"status": new})
        return ("INSERT INTO audit (at, by_staff, os_account, action, tbl, row_id, before, after) VALUES "
                f"('{at}', 'nell', 'nell-os', 'patient.update', 'patient', '{patient}', '{before}', '{after}')")

    path = schema_1_file(
        tmp_path / "v1.db",
        "INSERT INTO staff VALUES ('nell', 'Nell Nurse', 'nurse', 1, 'nell-os', '2026-01-01T09:00:00')",
        "INSERT INTO patient VALUES ('P0001', 'Pia Test', '1991-04-02', NULL, 'pregnant', 'natural', '2026-01-06', 1)",
        "INSERT INTO patient VALUES ('P0002', 'Pat Test', '1988-01-09', NULL, 'active', 'timed', '2026-01-07', 1)",
        change("2026-03-02T10:00:00+00:00", "P0001", "active", "pregnant"),
        change("2026-03-05T10:00:00+00:00", "P0001", "pregnant", "pregnant"),  # another field changed
    )
    with Store(path) as s:
        assert s.db.version == migrations.LATEST
        assert s.patients.get("P0001").status_since == date(2026, 3, 2)
        assert s.patients.get("P0002").status_since is None and s.patients.get("P0002").born == date(1988, 1, 9)


@pytest.fixture
def traced(monkeypatch) -> list[str]:
    """Every statement run on each SQLite connection opened from now on, in the order run."""
    ran: list[str] = []
    connect = sqlite3.connect

    def traced_connect(*args, **kwargs):
        conn = connect(*args, **kwargs)
        conn.set_trace_callback(ran.append)
        return conn

    monkeypatch.setattr(sqlite3, "connect", traced_connect)
    return ran


def quick_checks(ran: list[str]) -> int:
    return sum("quick_check" in statement for statement in ran)


def test_opening_reads_no_whole_file_and_only_the_first_write_pays_the_check(store, staffed, traced):
    with Store(store.path) as opened:
        opened.meta("clinic")
        assert quick_checks(traced) == 0  # opening and reading leave the whole-file check to the first write
        opened.transact(lambda: opened.set_meta("clinic", "one"))
        assert quick_checks(traced) == 1
        opened.transact(lambda: opened.set_meta("clinic", "two"))
        with opened.atomic(TODAY):
            opened.set_meta("clinic", "three")
        with opened.write():
            opened.set_meta("clinic", "four")
        assert quick_checks(traced) == 1  # later writes on the same connection: no check
    with Store(store.path) as again:
        again.transact(lambda: again.set_meta("clinic", "five"))
    assert quick_checks(traced) == 2  # each connection pays its own, once


def test_the_check_run_aside_spares_the_connection_its_first_write_check(store, staffed, traced):
    with Store(store.path) as opened:
        opened.refuse_damaged(aside=True)  # on a read connection of its own, as the interface runs it
        assert quick_checks(traced) == 1
        opened.transact(lambda: opened.set_meta("clinic", "one"))
        assert quick_checks(traced) == 1


def test_a_write_to_a_damaged_file_is_refused_and_writes_nothing(store, staffed):
    path = store.path
    store.close()
    damage_index_page(path)
    wal = path.with_name(path.name + "-wal")
    before = path.read_bytes(), wal.read_bytes() if wal.exists() else b""
    with Store(path) as opened:  # opening reads no entry index page: it does not notice
        for _ in range(2):  # a refused check is not taken as passed: the second attempt is refused too
            with pytest.raises(StoreDamaged) as refused:
                opened.transact(lambda: opened.set_meta("clinic", "written"))
            assert str(refused.value).startswith(f"{path} is damaged (")
            assert str(refused.value).endswith("run 'caseload check', then restore a backup with "
                                               "'caseload restore FILE'")
        with pytest.raises(StoreDamaged):
            opened.refuse_damaged(aside=True)
    assert (path.read_bytes(), wal.read_bytes() if wal.exists() else b"") == before  # nothing written


def sqlite_error(path, *statements: str) -> sqlite3.Error:
    """The error SQLite raises for the statements on a fresh connection to `path`."""
    conn = sqlite3.connect(path, isolation_level=None, timeout=0)
    try:
        for statement in statements:
            conn.execute(statement)
    except sqlite3.Error as err:
        return err
    finally:
        conn.close()
    raise AssertionError("no error")


def test_only_a_damaged_file_is_refused_as_damage(tmp_path):
    """SQLITE_CORRUPT (11) and SQLITE_NOTADB (26) are damage; a constraint or a lock is not (SQLite's
    result codes, sqlite.org/rescode.html)."""
    text = tmp_path / "notes.db"
    text.write_text("not a database, just notes\n" * 200)
    table = tmp_path / "t.db"
    sqlite_error(table, "CREATE TABLE t (id INTEGER PRIMARY KEY)", "INSERT INTO t VALUES (1)", "SELECT 1/0 FROM x")
    holder = sqlite3.connect(table, isolation_level=None)
    holder.execute("BEGIN EXCLUSIVE")
    try:
        errors = {
            "not a database": sqlite_error(text, "SELECT * FROM sqlite_master"),
            "constraint": sqlite_error(table, "INSERT INTO t VALUES (1)"),
            "locked": sqlite_error(table, "SELECT * FROM t"),
        }
    finally:
        holder.close()
    refused = {}
    for name, err in errors.items():
        try:
            with refusing_damage(text):
                raise err
        except StoreDamaged as damage:
            refused[name] = str(damage)
        except sqlite3.Error as other:
            assert other is err  # passed on as it was
    assert list(refused) == ["not a database"]
    assert refused["not a database"] == (f"{text} is damaged (file is not a database): run 'caseload check', "
                                         "then restore a backup with 'caseload restore FILE'")


def test_the_check_aside_opens_the_same_file_whatever_its_name(tmp_path, traced):
    path = tmp_path / "clinic #2 50%?.db"  # characters a URI would read as query, fragment or escape
    with Store(path) as created:
        created.transact(lambda: created.set_meta("clinic", "made"))
    with Store(path) as opened:
        opened.refuse_damaged(aside=True)
    assert sorted(p.name for p in tmp_path.iterdir() if not p.name.endswith(("-wal", "-shm"))) == [path.name]
