"""Patient ids are unique whatever their letter case, in the store itself: a store made new refuses a
second id differing only in case, and an older store already holding such ids still upgrades, keeps
them, and takes no new one."""

from __future__ import annotations

import sqlite3
from datetime import date

import pytest

from caseload.core.model import Actor, Patient
from caseload.store import Store, migrations
from tests.conftest import TODAY

ANY_CASE = migrations.MIGRATIONS.index(migrations._patient_ids_any_case) + 1  # its schema version
REFUSAL = "patient id is taken, in this or another letter case: ids are unique whatever their case"


def caller(pid: str) -> Patient:
    return Patient(pid, f"Caller {pid}", date(1990, 1, 1), None, created=TODAY)


def test_a_case_variant_is_refused_by_the_store_and_nothing_is_written(store, admin):
    store.transact(lambda: store.patients.add(admin, caller("P0103")), TODAY)
    audit_rows = store.audit.count()
    for variant in ("p0103", "P0103"):
        with pytest.raises(sqlite3.IntegrityError, match=REFUSAL):
            store.transact(lambda variant=variant: store.patients.add(admin, caller(variant)), TODAY)
    assert [p.id for p in store.patients.all()] == ["P0103"]
    assert store.audit.count() == audit_rows


def test_an_id_is_found_in_any_case_and_only_that_one(store, admin):
    for pid in ("P0103", "P0104", "smith-2"):
        store.transact(lambda pid=pid: store.patients.add(admin, caller(pid)), TODAY)
    assert [p.id for p in store.patients.any_case("p0103")] == ["P0103"]
    assert [p.id for p in store.patients.any_case("P0103")] == ["P0103"]
    assert [p.id for p in store.patients.any_case("SMITH-2")] == ["smith-2"]
    assert store.patients.any_case("P010") == [] and store.patients.any_case("P01033") == []


def store_before_any_case(path) -> None:
    """A file at the version before the rule, holding ids that differ only in case (as a store the
    earlier code wrote could), closed so that opening it upgrades it."""
    conn = sqlite3.connect(path)
    for step in migrations.MIGRATIONS[:ANY_CASE - 1]:
        step(conn)
    conn.execute("INSERT INTO staff VALUES ('ada', 'Ada Admin', 'admin', 1, NULL, '2026-03-01T09:00:00+00:00')")
    for pid, name in (("p0103", "Xena Lower"), ("P0103", "Yara Upper")):
        conn.execute("INSERT INTO patient (id, name, born, nurse_id, status, plan, created, charting_temps)"
                     " VALUES (?, ?, '1991-04-02', NULL, 'active', 'natural', '2026-03-02', 1)", (pid, name))
    conn.execute(f"PRAGMA user_version = {ANY_CASE - 1}")
    conn.commit()
    conn.close()


def test_an_older_store_holding_case_variants_upgrades_keeps_them_and_takes_no_new_one(tmp_path):
    path = tmp_path / "old.db"
    store_before_any_case(path)
    with Store(path) as upgraded:
        assert upgraded.db.version == migrations.LATEST
        report = upgraded.check()  # rows written here by hand have no audit rows: only the schema is compared
        assert (report.triggers, report.schema) == ((), ())  # the same schema and triggers as a store made new
        assert [(p.id, p.name) for p in upgraded.patients.all()] == [("P0103", "Yara Upper"), ("p0103", "Xena Lower")]
        assert [p.id for p in upgraded.patients.any_case("P0103")] == ["P0103", "p0103"]
        actor = Actor(upgraded.staff.get("ada"), "tester")
        with pytest.raises(sqlite3.IntegrityError, match=REFUSAL):
            upgraded.transact(lambda: upgraded.patients.add(actor, caller("p0103")), TODAY)
        assert len(upgraded.patients.all()) == 2
