"""Entries: append-only observations. Corrections are new rows that supersede; voids keep the row."""

from __future__ import annotations

import json
from collections.abc import Iterator
from datetime import date, datetime
from functools import lru_cache
from itertools import groupby
from operator import itemgetter

from caseload.core.model import Actor, Entry, Kind, Observation, Scan, Value
from caseload.core.parse import ParsedEntry
from caseload.store.db import Database

_SELECT = (
    "SELECT e.*, s.id AS superseded_by FROM entry e LEFT JOIN entry s ON s.supersedes = e.id"
)
# The columns the cycle engine reads, of the entries that count (neither voided nor superseded): a
# join on the unique index of `supersedes`, not a subquery per row.
CURRENT_ROWS = (
    "SELECT e.patient_id, e.day, e.kind, e.number, e.word, e.scan, e.text, e.flags, e.time FROM entry e"
    " LEFT JOIN entry s ON s.supersedes = e.id WHERE e.voided_reason IS NULL AND s.supersedes IS NULL"
)
# The order of core.model.observations: day, then reading time (untimed first), then id; the
# index entry_patient_order holds the entries in it, so no read sorts.
IN_ORDER = " ORDER BY e.patient_id, e.day, coalesce(e.time, ''), e.id"
_KINDS = {k.value: k for k in Kind}


def value_columns(v: Value) -> dict:
    scan = None
    if v.scan is not None:
        scan = json.dumps({"follicles_mm": list(v.scan.follicles_mm), "endometrium_mm": v.scan.endometrium_mm})
    return {"number": v.number, "word": v.word, "scan": scan, "text": v.text}


def value_from_row(row: dict) -> Value:
    scan = None
    if row["scan"]:
        s = json.loads(row["scan"])
        scan = Scan(tuple(s["follicles_mm"]), s["endometrium_mm"])
    return Value(number=row["number"], word=row["word"], scan=scan, text=row["text"])


def entry_from_row(row: dict) -> Entry:
    return Entry(
        id=row["id"],
        patient_id=row["patient_id"],
        day=date.fromisoformat(row["day"]),
        kind=Kind(row["kind"]),
        value=value_from_row(row),
        raw=row["raw"],
        time=row["time"],
        flags=tuple(f for f in row["flags"].split(",") if f),
        note=row["note"],
        by=row["by_staff"],
        at=datetime.fromisoformat(row["at"]),
        supersedes=row["supersedes"],
        voided_reason=row["voided_reason"],
        superseded_by=row.get("superseded_by"),
        amend_reason=row["amend_reason"],
    )


@lru_cache(maxsize=8192)
def _plain_value(number: float | None, word: str | None, text: str | None) -> Value:
    # Values repeat across a caseload (temperatures to 2 dp, flow and mucus words): frozen, so shared.
    return Value(number=number, word=word, text=text)


@lru_cache(maxsize=256)
def _flags(text: str) -> tuple[str, ...]:
    return tuple(f for f in text.split(",") if f)


def observation_from_row(row: tuple) -> Observation:
    """(patient_id, day, kind, number, word, scan, text, flags, time) as the cycle engine reads it."""
    _, day, kind, number, word, scan, text, flags, time = row
    if scan:
        value = value_from_row({"number": number, "word": word, "scan": scan, "text": text})
    else:
        value = _plain_value(number, word, text)
    return Observation(date.fromisoformat(day), _KINDS[kind], value, _flags(flags) if flags else (), time)


def entry_row(
    actor: Actor,
    patient_id: str,
    parsed: ParsedEntry,
    at: str,
    supersedes: int | None = None,
    amend_reason: str | None = None,
) -> dict:
    """The columns of a new entry row (without its id); the same dict is the audit row's `after`."""
    return {
        "patient_id": patient_id,
        "day": parsed.day.isoformat(),
        "time": parsed.time,
        "kind": parsed.kind.value,
        "raw": parsed.raw,
        **value_columns(parsed.value),
        "flags": ",".join(parsed.flags),
        "note": parsed.note,
        "by_staff": actor.id,
        "os_account": actor.os_account,
        "at": at,
        "supersedes": supersedes,
        "amend_reason": amend_reason,
    }


class EntryTable:
    def __init__(self, db: Database):
        self.db = db

    def add(
        self,
        actor: Actor,
        patient_id: str,
        parsed: ParsedEntry,
        supersedes: int | None = None,
        amend_reason: str | None = None,
    ) -> Entry:
        row = entry_row(actor, patient_id, parsed, self.db.now_text(), supersedes, amend_reason)
        entry_id = self.db.db["entry"].insert(row).last_pk
        self.db.audit(actor, "entry.amend" if supersedes else "entry.log", "entry", entry_id, after=row)
        return self.get(entry_id)

    def void(self, actor: Actor, entry: Entry, reason: str) -> Entry:
        at = self.db.now_text()
        self.db.conn.execute(
            "UPDATE entry SET voided_reason = ?, voided_by = ?, voided_at = ? WHERE id = ?",
            (reason, actor.id, at, entry.id),
        )
        self.db.audit(
            actor, "entry.void", "entry", entry.id, before={"voided_reason": None}, after={"voided_reason": reason}
        )
        return self.get(entry.id)

    def get(self, entry_id: int) -> Entry | None:
        rows = self.db.query(f"{_SELECT} WHERE e.id = ?", (entry_id,))
        return entry_from_row(rows[0]) if rows else None

    def for_patient(self, patient_id: str) -> list[Entry]:
        rows = self.db.query(f"{_SELECT} WHERE e.patient_id = ? ORDER BY e.day, e.id", (patient_id,))
        return [entry_from_row(r) for r in rows]

    def by_patient(self) -> Iterator[tuple[str, list[Entry]]]:
        """Every patient's entries in one pass over the table, for whole-caseload work."""
        rows = self.db.db.query(f"{_SELECT} ORDER BY e.patient_id, e.day, e.id")
        for patient_id, group in groupby(rows, key=lambda r: r["patient_id"]):
            yield patient_id, [entry_from_row(r) for r in group]

    def observations_for(self, patient_id: str) -> list[Observation]:
        """The patient's current entries as observations: `model.observations(for_patient(...))`, read lean."""
        rows = self.db.conn.execute(f"{CURRENT_ROWS} AND e.patient_id = ?{IN_ORDER}", (patient_id,))
        return [observation_from_row(r) for r in rows]

    def observations_from(self, patient_id: str, first_day: date) -> list[Observation]:
        """As `observations_for`, of the entries dated `first_day` or later (an open cycle's)."""
        rows = self.db.conn.execute(
            f"{CURRENT_ROWS} AND e.patient_id = ? AND e.day >= ?{IN_ORDER}", (patient_id, first_day.isoformat())
        )
        return [observation_from_row(r) for r in rows]

    def observations_by_patient(self) -> Iterator[tuple[str, list[Observation]]]:
        """Every patient's observations in one pass over the table, for whole-caseload work."""
        rows = self.db.conn.execute(CURRENT_ROWS + IN_ORDER)
        for patient_id, group in groupby(rows, key=itemgetter(0)):
            yield patient_id, [observation_from_row(r) for r in group]

    def current_on(self, patient_id: str, day, kind: Kind) -> list[Entry]:
        """The counting entries of a kind on a day (neither voided nor superseded)."""
        rows = self.db.query(
            f"{_SELECT} WHERE e.patient_id = ? AND e.day = ? AND e.kind = ?"
            " AND e.voided_reason IS NULL AND s.id IS NULL",
            (patient_id, day.isoformat(), kind.value),
        )
        return [entry_from_row(r) for r in rows]

    def count(self) -> int:
        return self.db.conn.execute("SELECT count(*) FROM entry").fetchone()[0]
