"""The list marks and the commit counter the interface polls, on a real SQLite file."""

from __future__ import annotations

import pytest

from caseload.core.model import Kind, Role
from caseload.core.parse import parse_entry
from caseload.application.entries import log_entry
from caseload.application.patients import add_patient, update_patient
from caseload.store import Store, migrations


def test_every_change_a_list_row_shows_marks_that_patient(store, as_role, patient):
    other = add_patient(as_role(Role.NURSE), "P0002", "Other Patient", "1990-01-01")
    start = store.list_marks.latest()
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")  # a new snapshot
    after_log, changed = store.list_marks.since(start)
    assert changed == [patient.id] and after_log > start
    update_patient(as_role(Role.NURSE), other.id, plan="timed")  # her record
    after_plan, changed = store.list_marks.since(after_log)
    assert changed == [other.id] and after_plan > after_log
    assert store.list_marks.since(after_plan) == (after_plan, [])  # nothing since: nothing to read again
    assert store.list_marks.latest() == after_plan


def test_a_registration_is_marked_for_an_interface_already_open(store, as_role, patient):
    start = store.list_marks.latest()
    add_patient(as_role(Role.NURSE), "P0003", "New Caller", "1994-03-03")
    assert store.list_marks.since(start)[1] == ["P0003"]


def test_the_commit_counter_moves_only_for_other_connections(store, as_role, patient):
    # SQLite's documented rule (sqlite.org/pragma.html#pragma_data_version): the value changes when
    # another connection commits, not for this connection's own commits.
    before = store.data_version()
    log_entry(as_role(Role.PHONE), patient.id, "bleed", "heavy")
    assert store.data_version() == before
    with Store(store.path) as elsewhere:
        seen = elsewhere.data_version()
        assert store.data_version() == before  # reading elsewhere commits nothing
        log_entry(as_role(Role.PHONE), patient.id, "temp", "36.5")
        assert elsewhere.data_version() != seen
    assert store.data_version() == before


def test_an_older_store_gets_a_mark_for_every_patient_when_upgraded(store, as_role, patient):
    add_patient(as_role(Role.NURSE), "P0002", "Other Patient", "1990-01-01")
    conn = store.db.conn
    marks = "SELECT name FROM sqlite_master WHERE type = 'trigger' AND name LIKE 'list_mark%'"
    for (trigger,) in conn.execute(marks).fetchall():
        conn.execute(f"DROP TRIGGER {trigger}")
    conn.execute("DROP TABLE list_mark")
    # The one migration after the marks is undone too: its trigger and index on patient ids.
    for trigger in ("patient_id_any_case_insert", "patient_id_any_case_update"):
        conn.execute(f"DROP TRIGGER {trigger}")
    conn.execute("DROP INDEX patient_id_any_case")
    before_marks = migrations.MIGRATIONS.index(migrations._list_marks)  # the version just before them
    if migrations.MIGRATIONS[before_marks:] != [migrations._list_marks, migrations._entry_marks,
                                                migrations._patient_ids_any_case]:
        pytest.skip("a migration after the marks cannot be undone here")
    conn.execute(f"PRAGMA user_version = {before_marks}")
    store.close()
    with Store(store.path) as upgraded:
        assert upgraded.list_marks.since(0)[1] == ["P0001", "P0002"]
        report = upgraded.check()
        assert report.ok, report.first_problem()  # the same schema and triggers as a store made new


def test_her_entries_stamp_her_mark_without_a_snapshot(store, as_role, patient):
    """The trigger stamps the entry's own write (logged, then voided), whatever path wrote it:
    no snapshot is written here, so only the entry triggers can have moved her mark."""
    other = add_patient(as_role(Role.NURSE), "P0002", "Other Patient", "1990-01-01")
    ctx = as_role(Role.PHONE)
    before = store.list_marks.of()
    assert set(before) == {patient.id, other.id} and store.list_marks.of(other.id) == {other.id: before[other.id]}
    parsed = parse_entry(Kind.TEMP, "36.55", ctx.today, on="today")
    entry = store.transact(lambda: store.entries.add(ctx.actor, patient.id, parsed), ctx.today)
    logged = store.list_marks.of()
    assert logged[patient.id] > before[patient.id] and logged[other.id] == before[other.id]
    store.transact(lambda: store.entries.void(ctx.actor, entry, "typed for the wrong day"), ctx.today)
    assert store.list_marks.of(patient.id)[patient.id] > logged[patient.id]
    assert store.list_marks.of(other.id) == {other.id: before[other.id]}
