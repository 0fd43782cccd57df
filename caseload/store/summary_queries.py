"""The queries behind the weekly summary: SQL does the counting over indexed date ranges.

Stored `at` texts are ISO instants that carry their own UTC offset. A range is read from the
`at` index widened by a day on each side (no offset exceeds 14 hours, so every row of the exact
range is inside it), then checked exactly with julianday(), which honours the offset.
The audit trail is appended in time order, so the highest id before an instant is the latest row.
"""

from __future__ import annotations

import json
from collections import defaultdict
from collections.abc import Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import UTC, date, datetime, timedelta

from caseload.core.model import Kind, Observation, Value
from caseload.store.db import Database

ALERT_ACTIONS = (
    "alert.raise",
    "alert.ack",
    "alert.snooze",
    "alert.resolve",
    "alert.auto-resolve",
    "alert.escalate",
    "alert.reopen",
)
RESOLVING = ("alert.resolve", "alert.auto-resolve")
MARGIN = timedelta(days=1)
# An entry that a later correction replaced, or a void, no longer counts.
CURRENT = "e.voided_reason IS NULL AND NOT EXISTS (SELECT 1 FROM entry s WHERE s.supersedes = e.id)"


@dataclass(frozen=True)
class Span:
    """A half-open range of instants [start, end)."""

    start: datetime
    end: datetime


@dataclass(frozen=True)
class PatientVersion:
    """A patient's record as it stood at some instant, from the latest patient audit row before it."""

    patient_id: str
    status: str
    plan: str
    nurse_id: str | None
    charting_temps: bool


@dataclass(frozen=True)
class AlertEvent:
    """One alert transition from the audit trail, with what the alert row adds."""

    audit_id: int
    alert_id: str
    action: str
    at: datetime
    by_staff: str
    kind: str
    patient_id: str
    severity: str
    state: str | None  # the alert's state after the transition, when the trail records it
    due: date | None
    snooze_until: date | None
    raised_on: date | None
    note: str | None  # what the staff member wrote, on a handling transition


@dataclass(frozen=True)
class EntryCount:
    """Entries one staff member logged on one day of the week (0 = Monday)."""

    staff_id: str
    day_index: int
    entries: int
    corrections: int


@dataclass(frozen=True)
class EntryChange:
    """A correction (a new entry superseding an old one) or a void, when it was made."""

    entry_id: int
    patient_id: str
    kind: str
    day: date
    change: str  # "correction" or "void"
    reason: str
    by_staff: str
    at: datetime


@dataclass(frozen=True)
class HcgPositive:
    patient_id: str
    day: date  # the first positive result of the range


def iso(instant: datetime) -> str:
    return instant.astimezone(UTC).isoformat(timespec="seconds")


def instant(text: str) -> datetime:
    """A stored `at` text as an aware instant; a text without an offset is UTC."""
    moment = datetime.fromisoformat(text)
    return moment if moment.tzinfo else moment.replace(tzinfo=UTC)


def _day(text: str | None) -> date | None:
    return date.fromisoformat(text) if text else None


def _within(column: str, span: Span) -> tuple[str, list[str]]:
    """Rows well inside the range pass on text alone; only those near a bound are parsed."""
    sql = (
        f"({column} >= ? AND {column} < ? AND (({column} >= ? AND {column} < ?)"
        f" OR (julianday({column}) >= julianday(?) AND julianday({column}) < julianday(?))))"
    )
    return sql, [iso(span.start - MARGIN), iso(span.end + MARGIN), iso(span.start + MARGIN), iso(span.end - MARGIN),
                 iso(span.start), iso(span.end)]


def _before(column: str, moment: datetime) -> tuple[str, list[str]]:
    sql = f"({column} < ? OR ({column} < ? AND julianday({column}) < julianday(?)))"
    return sql, [iso(moment - MARGIN), iso(moment + MARGIN), iso(moment)]


def _marks(values: Sequence) -> str:
    return ", ".join("?" for _ in values)


# The transition's own record of the alert (its audit `after`) wins; the alert row fills gaps.
_ALERT_COLUMNS = """
    a.id AS audit_id, a.row_id AS alert_id, a.action, a.at, a.by_staff,
    COALESCE(json_extract(a.after, '$.kind'), al.kind) AS kind,
    COALESCE(json_extract(a.after, '$.patient_id'), al.patient_id) AS patient_id,
    COALESCE(json_extract(a.after, '$.severity'), al.severity) AS severity,
    json_extract(a.after, '$.state') AS state,
    COALESCE(json_extract(a.after, '$.due'), al.due) AS due,
    json_extract(a.after, '$.snooze_until') AS snooze_until,
    COALESCE(json_extract(a.after, '$.raised_on'), al.raised_on) AS raised_on,
    json_extract(a.after, '$.note') AS note
"""


def _alert_event(row: dict) -> AlertEvent:
    return AlertEvent(
        audit_id=row["audit_id"],
        alert_id=row["alert_id"],
        action=row["action"],
        at=instant(row["at"]),
        by_staff=row["by_staff"],
        kind=row["kind"],
        patient_id=row["patient_id"],
        severity=row["severity"],
        state=row["state"],
        due=_day(row["due"]),
        snooze_until=_day(row["snooze_until"]),
        raised_on=_day(row["raised_on"]),
        note=row["note"],
    )


class ReportQueries:
    """Read-only queries for one week's summary."""

    def __init__(self, db: Database):
        self.db = db

    @contextmanager
    def snapshot(self) -> Iterator[ReportQueries]:
        """One read transaction: every query inside sees the store as it was when it began."""
        self.db.conn.execute("BEGIN DEFERRED")
        try:
            yield self
        finally:
            self.db.conn.execute("COMMIT")

    def patient_versions(self, moment: datetime) -> dict[str, PatientVersion]:
        """Every patient registered before `moment`, as their record stood then (patient_history)."""
        when, params = _before("at", moment)
        rows = self.db.query(
            "SELECT patient_id, status, plan, nurse_id, charting_temps FROM ("
            "  SELECT *, row_number() OVER (PARTITION BY patient_id ORDER BY julianday(at) DESC, id DESC) AS latest"
            f"  FROM patient_history WHERE {when}) WHERE latest = 1",
            params,
        )
        return {
            r["patient_id"]: PatientVersion(r["patient_id"], r["status"], r["plan"], r["nurse_id"],
                                            bool(r["charting_temps"]))
            for r in rows
        }

    def alert_history(self, span: Span) -> list[AlertEvent]:
        """Every transition up to the span's end of the alerts that had a transition in the span."""
        when, params = _within("at", span)
        until, until_params = _before("a.at", span.end)
        rows = self.db.query(
            f"WITH touched AS (SELECT DISTINCT row_id FROM audit"
            f"  WHERE action IN ({_marks(ALERT_ACTIONS)}) AND {when})"
            f" SELECT {_ALERT_COLUMNS} FROM touched t JOIN audit a ON a.row_id = t.row_id"
            " LEFT JOIN alert al ON al.id = CAST(a.row_id AS INTEGER)"
            f" WHERE a.action IN ({_marks(ALERT_ACTIONS)}) AND {until} ORDER BY a.id",
            [*ALERT_ACTIONS, *params, *ALERT_ACTIONS, *until_params],
        )
        return [_alert_event(r) for r in rows]

    def unresolved_alerts(self, moment: datetime) -> list[AlertEvent]:
        """The last transition before `moment` of each alert that was not resolved then.

        A resolved alert row stays resolved (a returning finding is a new row), so the only candidates
        are alerts unresolved now and those resolved since `moment`: not the whole history.
        """
        when, params = _before("x.at", moment)
        rows = self.db.query(
            "WITH candidate(row_id) AS ("
            "  SELECT CAST(id AS TEXT) FROM alert WHERE state != 'resolved'"
            f"  UNION SELECT row_id FROM audit WHERE action IN ({_marks(RESOLVING)}) AND at >= ?)"
            f" SELECT {_ALERT_COLUMNS} FROM candidate c"
            " JOIN audit a ON a.id = (SELECT max(x.id) FROM audit x"
            f"  WHERE x.row_id = c.row_id AND x.action IN ({_marks(ALERT_ACTIONS)}) AND {when})"
            " LEFT JOIN alert al ON al.id = CAST(a.row_id AS INTEGER)"
            f" WHERE a.action NOT IN ({_marks(RESOLVING)}) ORDER BY a.id",
            [*RESOLVING, iso(moment - MARGIN), *ALERT_ACTIONS, *params, *RESOLVING],
        )
        return [_alert_event(r) for r in rows]

    def entries_logged(self, span: Span, day_starts: Sequence[datetime]) -> list[EntryCount]:
        """Entries logged in the span, by staff member and local day (bounded by `day_starts`)."""
        when, params = _within("e.at", span)
        inner = day_starts[1:-1]
        bucket = " ".join(f"WHEN julianday(e.at) < julianday(?) THEN {i}" for i in range(len(inner)))
        rows = self.db.query(
            f"SELECT e.by_staff, CASE {bucket} ELSE {len(inner)} END AS day_index,"
            " count(*) AS entries, sum(e.supersedes IS NOT NULL) AS corrections"
            f" FROM entry e WHERE {when} GROUP BY e.by_staff, day_index ORDER BY e.by_staff, day_index",
            [*(iso(d) for d in inner), *params],
        )
        return [EntryCount(r["by_staff"], r["day_index"], r["entries"], r["corrections"]) for r in rows]

    def changes(self, span: Span) -> list[EntryChange]:
        """Corrections logged and voids recorded in the span, oldest first."""
        corrected, c_params = _within("e.at", span)
        voided, v_params = _within("a.at", span)
        rows = self.db.query(
            "SELECT e.id, e.patient_id, e.kind, e.day, 'correction' AS change, e.amend_reason AS reason,"
            f" e.by_staff, e.at FROM entry e WHERE e.supersedes IS NOT NULL AND {corrected}"
            " UNION ALL"
            " SELECT e.id, e.patient_id, e.kind, e.day, 'void', e.voided_reason, a.by_staff, a.at"
            " FROM audit a JOIN entry e ON e.id = CAST(a.row_id AS INTEGER)"
            f" WHERE a.action = 'entry.void' AND {voided}",
            [*c_params, *v_params],
        )
        changes = [
            EntryChange(r["id"], r["patient_id"], r["kind"], date.fromisoformat(r["day"]), r["change"],
                        r["reason"] or "", r["by_staff"], instant(r["at"]))
            for r in rows
        ]
        return sorted(changes, key=lambda c: (c.at, c.entry_id))

    def temperature_days(self, first: date, last: date) -> dict[str, tuple[date, ...]]:
        """The days from `first` to `last` on which each patient has a counting temperature."""
        rows = self.db.query(
            "SELECT e.patient_id, e.day FROM entry e"
            f" WHERE e.kind = ? AND e.day BETWEEN ? AND ? AND {CURRENT}"
            " GROUP BY e.patient_id, e.day ORDER BY e.patient_id, e.day",
            [Kind.TEMP.value, first.isoformat(), last.isoformat()],
        )
        days: dict[str, list[date]] = defaultdict(list)
        for r in rows:
            days[r["patient_id"]].append(date.fromisoformat(r["day"]))
        return {pid: tuple(d) for pid, d in days.items()}

    def hcg_positives(self, first: date, last: date, word: str, min_iu_l: float) -> list[HcgPositive]:
        """Patients with a counting positive hCG result dated in the range, with the first one's day."""
        rows = self.db.query(
            "SELECT e.patient_id, min(e.day) AS day FROM entry e"
            f" WHERE e.kind = ? AND e.day BETWEEN ? AND ? AND {CURRENT} AND (e.word = ? OR e.number >= ?)"
            " GROUP BY e.patient_id ORDER BY e.patient_id",
            [Kind.HCG.value, first.isoformat(), last.isoformat(), word, min_iu_l],
        )
        return [HcgPositive(r["patient_id"], date.fromisoformat(r["day"])) for r in rows]

    def charting_bleeds(self, first: date, last: date) -> dict[str, list[Observation]]:
        """Counting bleeds from `first` to `last` of the patients who chart temperatures."""
        rows = self.db.db.execute(
            "SELECT e.patient_id, e.day, e.kind, e.number, e.word, e.flags FROM entry e"
            " JOIN patient p ON p.id = e.patient_id AND p.charting_temps = 1"
            f" WHERE e.kind = ? AND e.day BETWEEN ? AND ? AND {CURRENT} ORDER BY e.patient_id, e.day, e.id",
            [Kind.BLEED.value, first.isoformat(), last.isoformat()],
        )
        return _observations(rows)

    def temperatures_from(self, starts: Mapping[str, date], last: date) -> dict[str, list[Observation]]:
        """Each named patient's counting temperatures from their own start day to `last`."""
        # The patient list drives the join and each patient is one range of the (patient, day)
        # index; left to itself the planner would scan every patient's days through (kind, day).
        rows = self.db.db.execute(
            "SELECT e.patient_id, e.day, e.kind, e.number, e.word, e.flags FROM json_each(?) AS j"
            " CROSS JOIN entry e INDEXED BY entry_patient_day"
            "  ON e.patient_id = j.key AND e.day >= j.value AND e.day <= ?"
            f" WHERE e.kind = ? AND {CURRENT} ORDER BY e.patient_id, e.day, e.id",
            [json.dumps({pid: day.isoformat() for pid, day in starts.items()}), last.isoformat(), Kind.TEMP.value],
        )
        return _observations(rows)


_KINDS = {k.value: k for k in Kind}


def _observations(rows: Iterable[tuple]) -> dict[str, list[Observation]]:
    found: dict[str, list[Observation]] = defaultdict(list)
    # Days and values repeat across patients: one frozen object each is shared.
    days: dict[str, date] = {}
    values: dict[tuple, Value] = {}
    for pid, day, kind, number, word, flags in rows:
        when = days.get(day) or days.setdefault(day, date.fromisoformat(day))
        value = values.get((number, word)) or values.setdefault((number, word), Value(number=number, word=word))
        flagged = tuple(f for f in flags.split(",") if f) if flags else ()
        found[pid].append(Observation(when, _KINDS[kind], value, flagged))
    return dict(found)
