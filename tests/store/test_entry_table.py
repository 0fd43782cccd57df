"""Entries on a real SQLite file: append-only, corrections supersede, voids keep the row."""

from __future__ import annotations

import sqlite3
from datetime import date

import pytest

from caseload.core.model import Role
from caseload.application.entries import amend_entry, log_entry, void_entry

TODAY = date(2026, 12, 1)


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
