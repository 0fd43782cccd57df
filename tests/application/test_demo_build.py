"""The demo store is built from seed_data/ exactly: every row, its logger, its correction or void."""

from __future__ import annotations

import csv
from hashlib import sha256
from datetime import date, timedelta

import pytest

from caseload.application.demo import SEED_DIR, build_demo
from caseload.application.errors import Refused
from caseload.application.identity import os_account
from caseload.application.staff import init_store
from caseload.store import Store

BUILD_DAY = date(2026, 12, 1)


def seed_rows() -> list[dict]:
    with open(SEED_DIR / "entries.csv", newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def test_demo_holds_every_seed_row_with_its_correction_and_void(tmp_path):
    rows = seed_rows()
    demo = build_demo(tmp_path / "demo.db", BUILD_DAY, "tester")
    store = demo.store
    try:
        entries = [e for _, group in store.entries.by_patient() for e in group]
        assert len(entries) == len(rows) == demo.entries
        assert sum(1 for e in entries if e.voided_reason) == sum(1 for r in rows if r["void_reason"])
        assert sum(1 for e in entries if e.supersedes) == sum(1 for r in rows if r["amend_reason"])
        assert all(store.entries.get(e.supersedes).superseded_by == e.id for e in entries if e.supersedes)
        assert len(store.audit.rows("entry.log")) + len(store.audit.rows("entry.amend")) == len(rows)
        assert len(store.audit.rows("entry.void")) == sum(1 for r in rows if r["void_reason"])
        assert store.health().ok
        # Logged on the day of the entry, by the staff member the seed names.
        first = min(entries, key=lambda e: e.id)
        assert (first.at.date(), first.by) == (BUILD_DAY + timedelta(days=int(rows[0]["day_offset"])), rows[0]["by"])
        assert demo.admin.os_account == "tester" and store.staff.by_os_account("tester").id == demo.admin.id
    finally:
        store.close()


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
