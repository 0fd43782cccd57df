"""The patient_history table: each version of a patient's status, plan, nurse and charting from the
moment it took effect, written with the change, filled from the audit trail when a store is upgraded."""

from __future__ import annotations

import json
import sqlite3
from dataclasses import replace
from datetime import UTC, date, datetime

import pytest

from caseload.core.model import Actor, Patient, PatientStatus, Plan, Role, Staff
from caseload.store import Store, migrations
from caseload.store.summary_queries import ReportQueries

HISTORY = migrations.MIGRATIONS.index(migrations._patient_history) + 1  # its schema version, whatever comes after


class Clock:
    def __init__(self) -> None:
        self.now = datetime(2026, 3, 2, 9, 0, tzinfo=UTC)

    def __call__(self) -> datetime:
        return self.now


def at(text: str) -> datetime:
    return datetime.fromisoformat(text).replace(tzinfo=UTC)


@pytest.fixture
def store(tmp_path):
    clock = Clock()
    with Store(tmp_path / "s.db", clock=clock) as s:
        s.clock = clock
        yield s


def test_each_change_of_status_plan_nurse_or_charting_is_a_version(store):
    nurse = Actor(Staff("nell", "Nell Nurse", Role.NURSE), "nell-account")
    store.transact(lambda: store.staff.add(nurse, nurse.staff))
    pia = Patient("P1", "Pia Test", date(1991, 4, 2), "nell", PatientStatus.ACTIVE, Plan.NATURAL, date(2026, 3, 2), True)
    store.transact(lambda: store.patients.add(nurse, pia))
    store.clock.now = at("2026-03-20T14:00:00")
    pregnant = replace(pia, status=PatientStatus.PREGNANT)
    store.transact(lambda: store.patients.update(nurse, pia, pregnant))
    renamed = replace(pregnant, name="Pia Tested")
    store.transact(lambda: store.patients.update(nurse, pregnant, renamed))  # a name is not care: no version
    q = ReportQueries(store.db)
    assert q.patient_versions(at("2026-03-02T08:59:59")) == {}
    assert q.patient_versions(at("2026-03-10T00:00:00"))["P1"].status == "active"
    assert q.patient_versions(at("2026-03-21T00:00:00"))["P1"].status == "pregnant"
    assert store.db.conn.execute("SELECT count(*) FROM patient_history").fetchone()[0] == 2


PATIENT_AUDIT = ("INSERT INTO audit (at, by_staff, os_account, action, tbl, row_id, before, after)"
                 " VALUES (?, 'ada', 'a', ?, 'patient', 'P1', ?, ?)")


def store_before_history(path, monkeypatch, patient: tuple, audits: list[tuple]) -> Store:
    """A store at the schema before patient_history holding patient P1 and her audit rows
    (at, action, before, after), opened so that it upgrades to that version."""
    conn = sqlite3.connect(path)
    for step in migrations.MIGRATIONS[:HISTORY - 1]:
        step(conn)
    conn.execute("INSERT INTO staff VALUES ('ada', 'Ada Admin', 'admin', 1, NULL, '2026-03-01T09:00:00+00:00')")
    conn.execute("INSERT INTO patient (id, name, born, nurse_id, status, plan, created, charting_temps)"
                 " VALUES ('P1', 'Pia Test', '1991-04-02', ?, ?, ?, '2026-03-02', ?)", patient)
    conn.executemany(PATIENT_AUDIT, audits)
    conn.execute(f"PRAGMA user_version = {HISTORY - 1}")
    conn.commit()
    conn.close()
    monkeypatch.setattr(migrations, "MIGRATIONS", migrations.MIGRATIONS[:HISTORY])
    monkeypatch.setattr(migrations, "LATEST", HISTORY)
    return Store(path)


def test_an_upgraded_store_gets_its_history_from_the_audit_trail(tmp_path, monkeypatch):
    row = {"id": "P1", "name": "Pia Test", "born": "1991-04-02", "nurse_id": None, "status": "active",
           "plan": "natural", "created": "2026-03-02", "charting_temps": 1}
    audits = [("2026-03-02T09:00:00+00:00", "patient.add", None, json.dumps(row)),
              ("2026-03-09T09:00:00+00:00", "patient.update", json.dumps(row), json.dumps({**row, "status": "paused"}))]
    with store_before_history(tmp_path / "old.db", monkeypatch, (None, "paused", "natural", 1), audits) as s:
        q = ReportQueries(s.db)
        assert q.patient_versions(at("2026-03-05T00:00:00"))["P1"].status == "active"
        assert q.patient_versions(at("2026-03-10T00:00:00"))["P1"].status == "paused"


def test_an_audit_row_naming_only_some_fields_takes_the_rest_from_the_patient(tmp_path, monkeypatch):
    # Audit rows written by hand or by older code may name only what changed; a version still needs
    # every field, and the patient as she stands is the one source left for those it does not name.
    audits = [("2026-03-09T09:00:00+00:00", "patient.update", json.dumps({"status": "active"}),
               json.dumps({"status": "pregnant", "nurse_id": None}))]
    with store_before_history(tmp_path / "old.db", monkeypatch, ("ada", "pregnant", "timed", 0), audits) as s:
        version = ReportQueries(s.db).patient_versions(at("2026-03-10T00:00:00"))["P1"]
    # The plan and charting from the patient; the nurse as the row names it, a JSON null kept as none.
    assert (version.status, version.plan, version.charting_temps, version.nurse_id) == ("pregnant", "timed", False, None)
