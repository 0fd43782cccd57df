"""The demo store is built from seed_data/ exactly: every row, its logger, its correction or void."""

from __future__ import annotations

import csv
from datetime import date, timedelta

from caseload.application.demo import SEED_DIR, build_demo

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
