"""Kept completed cycles (`core.closed_cycles`): one row per patient and cycle, with the counts of
the entries it came from.

A kept cycle is trusted only while the entries dated in its span (from `entries_from`, or the
chart's first entry, to the day before `next_start`) are as they were when it was kept. Entries
are append-only: a row is never deleted, its day never moves, and the one change it allows is a
single void; a correction is a new row that supersedes the old one. So each of (entries dated in
the span, those voided, those superseded) can only grow, and any change to what the span's
entries say (a late entry, a void, a correction, a correction moved into or out of the span)
makes at least one of them grow. The spans of a patient's kept cycles tile the chart up to the
open cycle's day 1, so comparing the sums of the kept counts with the same counts over all her
entries before that day proves every kept cycle current, in three index lookups.
"""

from __future__ import annotations

import json

from caseload.core.closed_cycles import ClosedCycle
from caseload.store.db import Database
from caseload.store.record_json import plain, restored

# (entries, voided, superseded) among a patient's entries dated from :since to the day before :before.
_COUNTS = """
SELECT
    (SELECT count(*) FROM entry WHERE patient_id = :patient AND day >= :since AND day < :before),
    (SELECT count(*) FROM entry
      WHERE patient_id = :patient AND day >= :since AND day < :before AND voided_reason IS NOT NULL),
    (SELECT count(*) FROM entry a JOIN entry e ON e.id = a.supersedes
      WHERE a.patient_id = :patient AND a.supersedes IS NOT NULL AND e.day >= :since AND e.day < :before)
"""
_FROM_THE_START = ""  # sorts before every ISO day


class ClosedCycleTable:
    def __init__(self, db: Database):
        self.db = db

    def current(self, patient_id: str, key: str) -> tuple[ClosedCycle, ...] | None:
        """The patient's kept cycles, oldest first, when every one is current under `key`; () when
        none is kept, None when some are kept but not current (to be dropped and recomputed)."""
        rows = self.db.conn.execute(
            "SELECT kept_key, entries, voided, superseded, result FROM closed_cycle WHERE patient_id = ?"
            " ORDER BY cycle_start",
            (patient_id,),
        ).fetchall()
        if not rows:
            return ()
        if any(row[0] != key for row in rows):
            return None
        kept = tuple(restored(ClosedCycle, json.loads(row[4])) for row in rows)
        counts = self._counts(patient_id, None, kept[-1].next_start.isoformat())
        if counts != tuple(sum(row[i] for row in rows) for i in (1, 2, 3)):
            return None
        return kept

    def keep(self, patient_id: str, cycles: tuple[ClosedCycle, ...], key: str) -> None:
        """Inside the caller's write: add cycles after those kept, counting their entries as they
        are now (the caller computed them from exactly these entries)."""
        for cycle in cycles:
            since = None if cycle.entries_from is None else cycle.entries_from.isoformat()
            before = cycle.next_start.isoformat()
            self.db.conn.execute(
                "INSERT OR REPLACE INTO closed_cycle (patient_id, cycle_start, next_start, entries_from, entries,"
                " voided, superseded, kept_key, result) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                (patient_id, cycle.record.start.isoformat(), before, since,
                 *self._counts(patient_id, since, before), key, json.dumps(plain(cycle))),
            )  # fmt: skip

    def drop(self, patient_id: str | None = None) -> int:
        """Forget the kept cycles of one patient (or of everyone); they are recomputed when next needed."""
        if patient_id is None:
            return self.db.conn.execute("DELETE FROM closed_cycle").rowcount
        return self.db.conn.execute("DELETE FROM closed_cycle WHERE patient_id = ?", (patient_id,)).rowcount

    def _counts(self, patient_id: str, since: str | None, before: str) -> tuple[int, int, int]:
        params = {"patient": patient_id, "since": _FROM_THE_START if since is None else since, "before": before}
        return tuple(self.db.conn.execute(_COUNTS, params).fetchone())
