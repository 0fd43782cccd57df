"""Several writers at once: WAL, the busy timeout, and the retry that re-runs a whole transaction."""

from __future__ import annotations

import json
import sqlite3
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from caseload.application.clinic import Clinic, Identity
from caseload.application.identity import os_account
from caseload.core.model import Actor, Role
from caseload.core.parse import parse_entry
from caseload.application import csv_import as importer
from caseload.application.context import Context
from caseload.application.entries import log_entry
from caseload.application.errors import Refused
from caseload.application.csv_import import import_csv
from caseload.store import Store, StoreError
from caseload.store import db as db_module
from tests.robustness.robust_support import assert_clean_exit, audit_mismatches, snapshot

STRESS = Path(__file__).resolve().parents[1] / "stress" / "stress.py"
SERVICES = Path(db_module.__file__).resolve().parents[1] / "application"


def test_reduced_stress_run_loses_nothing():
    """4 writer processes for 3 s through log_entry: every acknowledged write there once, audited once."""
    out = subprocess.run([sys.executable, str(STRESS), "--writers", "4", "--seconds", "3", "--json"],
                         capture_output=True, text=True, timeout=120)
    report = json.loads(out.stdout)
    assert out.returncode == 0, report
    assert report["acknowledged"] > 100
    assert (report["lost"], report["duplicated"], report["wrong_id"], report["errors"],
            report["audit_mismatch"], report["integrity"]) == (0, 0, 0, 0, 0, "ok")
    assert report["entries_in_store"] == report["acknowledged"]


def test_a_lock_error_mid_transaction_reruns_the_whole_unit(store, staffed, patient):
    """The first attempt wrote an entry and its audit row, then hit a lock: both are rolled back, the
    unit runs again from the start, and the store holds the entry once."""
    actor, calls = staffed[Role.PHONE], []
    parsed = parse_entry("symptom", "nausea", patient.created)
    entries, audits = store.entries.count(), store.audit.count()

    def work():
        calls.append(store.entries.add(actor, patient.id, parsed).id)
        if len(calls) == 1:
            raise sqlite3.OperationalError("database is locked")
        return calls[-1]

    entry_id = store.transact(work)
    assert len(calls) == 2
    assert (store.entries.count(), store.audit.count()) == (entries + 1, audits + 1)
    assert [e.id for e in store.entries.for_patient(patient.id)] == [entry_id]


def test_other_errors_are_not_retried(store, staffed, patient):
    calls = []

    def work():
        calls.append(1)
        raise sqlite3.OperationalError("no such table: nowhere")

    with pytest.raises(sqlite3.OperationalError, match="no such table"):
        store.transact(work)
    assert calls == [1]


class CommitFailsOnce:
    """A connection whose first COMMIT reports a lock, as a COMMIT can while a checkpoint runs."""

    def __init__(self, conn):
        self._conn, self.failed = conn, False

    def execute(self, sql, *args):
        if sql == "COMMIT" and not self.failed:
            self.failed = True
            raise sqlite3.OperationalError("database is locked")
        return self._conn.execute(sql, *args)

    def __getattr__(self, name):
        return getattr(self._conn, name)


def test_a_failed_commit_is_rolled_back_and_retried_once(store, staffed, patient):
    entries = store.entries.count()
    real = store.db.conn
    store.db.conn = CommitFailsOnce(real)
    try:
        clinic = Clinic(store, Identity(os_account(), staffed[Role.PHONE].id), date_of_record=patient.created)
        clinic.log(patient.id, "symptom", "dizzy")
    finally:
        store.db.conn = real
    assert not real.in_transaction
    assert store.entries.count() == entries + 1
    assert audit_mismatches(store.path) == 0


@pytest.fixture
def short_waits(monkeypatch):
    """A 100 ms busy timeout and no back-off sleeps, so lock tests take a second, not thirty."""
    monkeypatch.setattr(db_module, "BUSY_TIMEOUT_MS", 100)
    monkeypatch.setattr(db_module.time, "sleep", lambda s: None)


def hold_write_lock(path: Path, release: threading.Event) -> threading.Thread:
    """Another connection takes the write lock and keeps it until `release` is set."""
    taken = threading.Event()

    def hold():
        conn = sqlite3.connect(path, isolation_level=None)
        conn.execute("BEGIN IMMEDIATE")
        taken.set()
        release.wait(30)
        conn.execute("ROLLBACK")
        conn.close()

    t = threading.Thread(target=hold)
    t.start()
    taken.wait()
    return t


def test_a_writer_waits_out_a_lock_held_for_a_while(store, staffed, patient, monkeypatch):
    monkeypatch.setattr(db_module, "BUSY_TIMEOUT_MS", 100)
    release = threading.Event()
    threading.Timer(0.4, release.set).start()
    with Store(store.path) as other:
        holder = hold_write_lock(store.path, release)
        done = log_entry(Context(other, staffed[Role.PHONE], patient.created), patient.id, "lh", "positive")
        holder.join()
    assert store.entries.get(done.entry.id).value.word == "positive"


def test_a_lock_held_past_every_retry_is_one_line_and_writes_nothing(clinic, short_waits):
    before, release = snapshot(clinic.db), threading.Event()
    holder = hold_write_lock(clinic.db, release)
    try:
        with Store(clinic.db) as s:
            ctx = Context(s, Actor(s.staff.get("phil"), "tester"), s.patients.get("P0001").created)
            with pytest.raises(StoreError, match="stayed locked by other writers.*nothing was written"):
                log_entry(ctx, "P0001", "lh", "positive")
        result = clinic("log", "P0001", "lh", "positive")
    finally:
        release.set()
        holder.join()
    assert_clean_exit(result)
    assert result.exit_code == 1 and "stayed locked" in result.stderr
    assert snapshot(clinic.db) == before


def test_import_rechecks_the_rules_inside_its_transaction(store, as_role, patient, monkeypatch):
    """A temperature logged from another terminal between reading the file and writing it: refused whole."""
    data = b"patient,day,kind,value\nP0001,-3,lh,negative\nP0001,-2,temp,36.45\n"
    read = importer.parse_rows

    def read_then_race(ctx, raw):
        rows = read(ctx, raw)
        with Store(store.path) as other:
            log_entry(Context(other, as_role(Role.PHONE).actor, ctx.today), "P0001", "temp", "36.50", on="-2")
        return rows

    monkeypatch.setattr(importer, "parse_rows", read_then_race)
    entries = store.entries.count()
    with pytest.raises(Refused, match="already has a temperature.*another terminal.*nothing imported"):
        import_csv(as_role(Role.NURSE), data)
    assert store.entries.count() == entries + 1  # only the other terminal's reading


def test_services_write_only_through_the_retrying_transaction():
    """A bare `write()` in a use case would skip the retry: every use case writes in atomic(), inside
    the Clinic's retrying transact()."""
    offenders = [p.name for p in SERVICES.glob("*.py") if ".write()" in p.read_text() or "BEGIN" in p.read_text()]
    assert offenders == []
