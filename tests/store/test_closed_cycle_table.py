"""Kept completed cycles on a real SQLite file: trusted while their entries are as they were, never
after a late entry, a void or a correction among them; and the hot reads answered from indexes."""

from __future__ import annotations

from dataclasses import replace
from datetime import date, timedelta

import pytest

from caseload.core.analysis import analyse
from caseload.core.closed_cycles import closed_cycles, kept_key
from caseload.core.model import Kind
from caseload.core.parse import ParsedEntry, parse_entry
from caseload.core.settings import DEFAULT_PROTOCOL

START = date(2026, 6, 1)
TODAY = date(2026, 12, 1)
KEY = kept_key(DEFAULT_PROTOCOL)


def parsed(kind: str, raw: str, day: date) -> ParsedEntry:
    return parse_entry(kind, raw, TODAY, on=day.isoformat(), at="06:30" if kind == "temp" else None)


@pytest.fixture
def charted(store, staffed, patient):
    """Six 28-day cycles of bleeds and daily temperatures, then an open cycle; her cycles kept."""
    actor = next(iter(staffed.values()))
    with store.atomic(TODAY):
        for k in range(7):
            for i in range(28 if k < 6 else 10):
                day = START + timedelta(days=28 * k + i)
                if i < 4:
                    store.entries.add(actor, patient.id, parsed("bleed", "moderate", day))
                store.entries.add(actor, patient.id, parsed("temp", "36.45" if i < 14 else "36.85", day))
    seen = store.entries.observations_for(patient.id)
    kept = closed_cycles(analyse(patient, seen, TODAY, DEFAULT_PROTOCOL), seen, (), DEFAULT_PROTOCOL)
    with store.atomic(TODAY):
        store.closed_cycles.keep(patient.id, kept, KEY)
    return actor, patient, kept


def entry_on(store, patient_id: str, day: date, kind: Kind):
    return next(e for e in store.entries.for_patient(patient_id) if e.day == day and e.kind == kind)


def test_kept_cycles_come_back_as_kept(store, charted):
    _, patient, kept = charted
    assert len(kept) == 6 and kept[-1].next_start == START + timedelta(days=168)  # 6 x 28 days, day 1 = first flow
    assert store.closed_cycles.current(patient.id, KEY) == kept
    assert store.closed_cycles.current(patient.id, kept_key(replace(DEFAULT_PROTOCOL, fever_c=38.5))) is None
    assert store.closed_cycles.current("nobody", KEY) == ()


def test_an_entry_in_the_open_cycle_leaves_them_current(store, charted):
    actor, patient, kept = charted
    with store.atomic(TODAY):
        store.entries.add(actor, patient.id, parsed("lh", "positive", kept[-1].next_start))
        store.entries.void(actor, entry_on(store, patient.id, kept[-1].next_start + timedelta(days=2), Kind.TEMP), "typo")
    assert store.closed_cycles.current(patient.id, KEY) == kept


@pytest.mark.parametrize("change", ["late entry", "void", "correction", "correction moved out", "first day"])
def test_any_change_among_their_entries_makes_them_stale(store, charted, change):
    actor, patient, kept = charted
    inside = kept[2].record.start + timedelta(days=9)
    with store.atomic(TODAY):
        if change == "late entry":
            store.entries.add(actor, patient.id, parsed("note", "called back", inside))
        elif change == "void":
            store.entries.void(actor, entry_on(store, patient.id, inside, Kind.TEMP), "wrong patient")
        elif change == "correction":
            old = entry_on(store, patient.id, inside, Kind.TEMP)
            store.entries.add(actor, patient.id, parsed("temp", "36.95", inside), supersedes=old.id, amend_reason="misread")
        elif change == "correction moved out":  # the new row dated in the open cycle, the old one in a kept cycle
            old = entry_on(store, patient.id, inside, Kind.TEMP)
            moved = parsed("note", "moved", kept[-1].next_start + timedelta(days=1))
            store.entries.add(actor, patient.id, moved, supersedes=old.id, amend_reason="wrong day")
        else:  # before the first cycle: the first kept cycle's entries run from the chart's start
            store.entries.add(actor, patient.id, parsed("note", "history", START - timedelta(days=40)))
    assert store.closed_cycles.current(patient.id, KEY) is None
    with store.atomic(TODAY):
        assert store.closed_cycles.drop(patient.id) == 6
    assert store.closed_cycles.current(patient.id, KEY) == ()


def plans(store, read) -> list[str]:
    """The query plans of every statement `read()` runs."""
    statements: list[str] = []
    store.db.conn.set_trace_callback(statements.append)
    try:
        read()
    finally:
        store.db.conn.set_trace_callback(None)
    return [" | ".join(row[3] for row in store.db.conn.execute("EXPLAIN QUERY PLAN " + sql)) for sql in statements]


def test_the_hot_reads_are_answered_from_indexes_without_a_sort_or_a_subquery_per_row(store, charted):
    _, patient, kept = charted
    reads = {
        "open cycle": lambda: store.entries.observations_from(patient.id, kept[-1].next_start),
        "one chart": lambda: store.entries.observations_for(patient.id),
        "every chart": lambda: list(store.entries.observations_by_patient()),
        "kept cycles": lambda: store.closed_cycles.current(patient.id, KEY),
    }
    for name, read in reads.items():
        for plan in plans(store, read):
            # SQLite's plan words (sqlite.org/eqp.html): a sort is "USE TEMP B-TREE", a subquery run per
            # row "CORRELATED", a table or index read whole "SCAN" (only the every-chart read walks one whole).
            assert "TEMP B-TREE" not in plan and "CORRELATED" not in plan, (name, plan)
            if name != "every chart":
                assert "SCAN" not in plan.replace("SCAN CONSTANT ROW", ""), (name, plan)
    open_plan = " ".join(plans(store, reads["open cycle"]))
    assert "USING INDEX entry_patient_order (patient_id=? AND day>?)" in open_plan
