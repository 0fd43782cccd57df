"""The demo store is built from seed_data/ exactly: every row, its logger, its correction or void,
replayed as the invented clinic's history with the moments it describes."""

from __future__ import annotations

import csv
import json
from hashlib import sha256
from collections import Counter
from datetime import date, datetime, time, timedelta
from zoneinfo import ZoneInfo

import pytest

from caseload.core.alerts import is_clinical
from caseload.application.demo import SEED_DIR, build_demo, clinic_timezone
from caseload.application.errors import Refused
from caseload.application.identity import os_account
from caseload.application.staff import init_store
from caseload.store import Store

BUILD_DAY = date(2026, 12, 1)


def seed_rows() -> list[dict]:
    with open(SEED_DIR / "entries.csv", newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def test_demo_holds_every_seed_row_with_its_correction_and_void(demo):
    rows = seed_rows()
    store = demo.store
    entries = [e for _, group in store.entries.by_patient() for e in group]
    assert len(entries) == len(rows) == demo.entries
    assert sum(1 for e in entries if e.voided_reason) == sum(1 for r in rows if r["void_reason"])
    assert sum(1 for e in entries if e.supersedes) == sum(1 for r in rows if r["amend_reason"])
    assert all(store.entries.get(e.supersedes).superseded_by == e.id for e in entries if e.supersedes)
    assert len(store.audit.rows("entry.log")) + len(store.audit.rows("entry.amend")) == len(rows)
    assert len(store.audit.rows("entry.void")) == sum(1 for r in rows if r["void_reason"])
    assert store.check().ok
    # Logged by the staff member the seed names, on the entry's own day (a correction the day after).
    zone = ZoneInfo(clinic_timezone())
    seeded = Counter((r["patient"], BUILD_DAY + timedelta(days=int(r["day_offset"])), r["kind"], r["by"])
                     for r in rows)
    assert Counter((e.patient_id, e.day, e.kind.value, e.by) for e in entries) == seeded
    lag = Counter((e.at.astimezone(zone).date() - e.day).days for e in entries)
    assert set(lag) == {0, 1} and lag[1] == sum(1 for r in rows if r["amend_reason"])
    assert demo.admin.os_account == "tester" and store.staff.by_os_account("tester").id == demo.admin.id


def test_the_demo_is_a_history_in_time_order(demo):
    store = demo.store
    audit = store.audit.rows()
    moments = [datetime.fromisoformat(a.at) for a in audit]
    assert moments == sorted(moments), "the audit trail is appended in time order"
    assert moments[-1] <= datetime(2026, 12, 1, 7, 30, tzinfo=ZoneInfo(clinic_timezone()))
    registered = {a.row_id: datetime.fromisoformat(a.at) for a in audit if a.action == "patient.add"}
    assert len({m.date() for m in registered.values()}) > 20, "patients join on their own days"
    zone = ZoneInfo(clinic_timezone())
    for patient_id, group in store.entries.by_patient():
        assert min(e.at for e in group) > registered[patient_id]
        for e in group:  # a reading is logged after it was taken, never before
            if e.time:
                assert e.at > datetime.combine(e.day, time.fromisoformat(e.time), zone), (e.id, e.time, e.at)
    actions = Counter(a.action for a in audit)
    for action in ("alert.raise", "alert.ack", "alert.snooze", "alert.resolve", "alert.auto-resolve",
                   "alert.reopen", "patient.update", "entry.amend", "entry.void"):
        assert actions[action] > 0, action
    weeks = {datetime.fromisoformat(a.at).isocalendar()[:2] for a in audit if a.action == "alert.ack"}
    assert len(weeks) >= 8, "alerts are handled over past weeks"
    handled = [json.loads(a.after) for a in audit if a.action in ("alert.ack", "alert.resolve", "alert.snooze")]
    assert all(h["note"] for h in handled if is_clinical(h["kind"])), "clinical alerts are handled with a note"


def test_status_changes_happen_on_their_days(demo):
    with open(SEED_DIR / "status_changes.csv", newline="", encoding="utf-8") as f:
        moves = list(csv.DictReader(f))
    updates = demo.store.audit.rows("patient.update")
    zone = ZoneInfo(clinic_timezone())
    got = [(u.row_id, datetime.fromisoformat(u.at).astimezone(zone).date()) for u in updates]
    assert got == [(m["patient"], BUILD_DAY + timedelta(days=int(m["day_offset"]))) for m in
                   sorted(moves, key=lambda m: (int(m["day_offset"]), m["time"]))]
    assert {m["status"] for m in moves} >= {"pregnant", "discharged", "paused"}
    last = {m["patient"]: BUILD_DAY + timedelta(days=int(m["day_offset"])) for m in
            sorted(moves, key=lambda m: (int(m["day_offset"]), m["time"]))}
    assert {p.id: p.status_since for p in demo.store.patients.all() if p.id in last} == last


def test_each_audit_row_is_recorded_as_of_its_invented_day(demo):
    zone = ZoneInfo(clinic_timezone())
    audit = demo.store.audit.rows()
    days = Counter(a.day_of_record == datetime.fromisoformat(a.at).astimezone(zone).date().isoformat() for a in audit)
    assert days == {True: len(audit)}
    assert len({a.day_of_record for a in audit}) > 60, "the history spans months of clinic days"


def test_the_demo_never_replaces_a_store_that_is_not_a_demo(tmp_path):
    real = tmp_path / "clinic.db"
    with Store(real) as store:
        init_store(store, "ada", "Ada Admin", os_account())
    before = sha256(real.read_bytes()).hexdigest()
    with pytest.raises(Refused, match="exists and is not a demo store: the demo never replaces it"):
        build_demo(real, date(2026, 12, 1), os_account())
    assert sha256(real.read_bytes()).hexdigest() == before
    (tmp_path / "notes.txt").write_text("not a database")
    with pytest.raises(Refused, match="is not a demo store"):
        build_demo(tmp_path / "notes.txt", date(2026, 12, 1), os_account())
    assert (tmp_path / "notes.txt").read_text() == "not a database"
