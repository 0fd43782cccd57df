"""The store on a real SQLite file: schema, append-only rules, audit in the same transaction."""

from __future__ import annotations

import os
import sqlite3
from datetime import date

import pytest

from caseload.core.model import Kind, Role
from caseload.core.parse import parse_entry
from caseload.application.entries import amend_entry, log_entry, void_entry
from caseload.application.patients import add_patient
from caseload.store import Store, StoreError
from caseload.store import migrations

TODAY = date(2026, 12, 1)


def test_new_store_is_owner_only_wal_with_foreign_keys(store, admin):
    assert os.stat(store.path).st_mode & 0o777 == 0o600
    conn = store.db.conn
    assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    assert conn.execute("PRAGMA foreign_keys").fetchone()[0] == 1
    assert conn.execute("PRAGMA busy_timeout").fetchone()[0] >= 1000
    assert store.db.version == migrations.LATEST


@pytest.mark.parametrize("sql", ["UPDATE audit SET action = 'x'", "DELETE FROM audit"])
def test_audit_rows_cannot_be_changed_or_deleted(store, admin, sql):
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        store.db.conn.execute(sql)
    assert store.audit.count() == 2  # staff.add and store.init


def test_entries_cannot_be_deleted_or_rewritten(store, as_role, patient):
    entry = log_entry(as_role(Role.PHONE), patient.id, "temp", "36.5").entry
    conn = store.db.conn
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute("DELETE FROM entry WHERE id = ?", (entry.id,))
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute("UPDATE entry SET number = 37.0 WHERE id = ?", (entry.id,))
    assert store.entries.get(entry.id).value.number == 36.5


def test_correction_supersedes_and_keeps_the_original(store, as_role, patient):
    first = log_entry(as_role(Role.PHONE), patient.id, "temp", "36.50").entry
    fixed = amend_entry(as_role(Role.NURSE), first.id, "36.55", "misread the thermometer").entry
    entries = store.entries.for_patient(patient.id)
    assert [e.id for e in entries] == [first.id, fixed.id]
    old, new = entries
    assert (old.current, old.superseded_by, old.value.number) == (False, fixed.id, 36.50)
    assert (new.current, new.supersedes, new.amend_reason, new.value.number) == (True, first.id, "misread the thermometer", 36.55)


def test_void_keeps_the_row_with_its_reason_and_only_once(store, as_role, patient):
    e = log_entry(as_role(Role.PHONE), patient.id, "lh", "positive").entry
    voided = void_entry(as_role(Role.NURSE), e.id, "logged for the wrong patient").entry
    assert (voided.current, voided.voided_reason) == (False, "logged for the wrong patient")
    with pytest.raises(sqlite3.IntegrityError, match="single void"):
        store.db.conn.execute("UPDATE entry SET voided_reason = 'again' WHERE id = ?", (e.id,))


def test_every_write_has_its_audit_row_with_actor_and_os_account(store, as_role, patient):
    before = store.audit.count()
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")
    rows = store.audit.rows("entry.")
    assert store.audit.count() == before + 1
    assert (rows[-1].by_staff, rows[-1].os_account, rows[-1].action) == ("phone1", "tester", "entry.log")


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

    monkeypatch.setattr(migrations, "MIGRATIONS", [*migrations.MIGRATIONS, v2])
    monkeypatch.setattr(migrations, "LATEST", 2)
    with Store(path) as s:
        assert s.db.version == 2
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


def test_backup_is_owner_only_and_complete(store, as_role, patient, tmp_path):
    log_entry(as_role(Role.PHONE), patient.id, Kind.TEMP.value, "36.4")
    target = tmp_path / "backup.db"
    store.backup(target)
    assert os.stat(target).st_mode & 0o777 == 0o600
    with Store(target) as copy:
        assert copy.entries.count() == store.entries.count()
        assert copy.audit.count() == store.audit.count()


def test_snapshots_can_be_read_for_some_patients_only(store, as_role, patient):
    other = add_patient(as_role(Role.NURSE), "P0002", "Other Patient", "1990-01-01")
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")
    log_entry(as_role(Role.PHONE), other.id, "bleed", "light")
    assert set(store.state.all()) == {patient.id, other.id}
    assert set(store.state.all([other.id])) == {other.id}
    assert store.state.all([]) == {}
