"""The derived state kept per patient so the caseload list never recomputes the caseload.

A snapshot is taken on every write for that patient and by the morning refresh for everyone.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from caseload.core.analysis import Analysis
from caseload.core.cycles import cycle_day


@dataclass(frozen=True)
class Snapshot:
    patient_id: str
    computed_on: date
    cycle_start: date | None
    phase: str
    next_event: str | None
    next_event_day: date | None
    fertile_window: tuple[date, date] | None
    shift_confirmed_on: date | None
    last_entry_day: date | None

    def cycle_day(self, today: date) -> int | None:
        return None if self.cycle_start is None else cycle_day(self.cycle_start, today)

    def days_since_entry(self, today: date) -> int | None:
        return None if self.last_entry_day is None else (today - self.last_entry_day).days

    def to_dict(self) -> dict:
        return {
            "patient_id": self.patient_id,
            "computed_on": self.computed_on.isoformat(),
            "cycle_start": _iso(self.cycle_start),
            "phase": self.phase,
            "next_event": self.next_event,
            "next_event_day": _iso(self.next_event_day),
            "fertile_window": [d.isoformat() for d in self.fertile_window] if self.fertile_window else None,
            "shift_confirmed_on": _iso(self.shift_confirmed_on),
            "last_entry_day": _iso(self.last_entry_day),
        }

    @classmethod
    def from_dict(cls, d: dict) -> Snapshot:
        window = d["fertile_window"]
        return cls(
            patient_id=d["patient_id"],
            computed_on=date.fromisoformat(d["computed_on"]),
            cycle_start=_day(d["cycle_start"]),
            phase=d["phase"],
            next_event=d["next_event"],
            next_event_day=_day(d["next_event_day"]),
            fertile_window=(date.fromisoformat(window[0]), date.fromisoformat(window[1])) if window else None,
            shift_confirmed_on=_day(d["shift_confirmed_on"]),
            last_entry_day=_day(d["last_entry_day"]),
        )


def snapshot_of(a: Analysis) -> Snapshot:
    shift = a.current.shift if a.current else None
    return Snapshot(
        patient_id=a.patient_id,
        computed_on=a.today,
        cycle_start=a.cycle_start,
        phase=a.phase,
        next_event=a.next_event.label if a.next_event else None,
        next_event_day=a.next_event.day if a.next_event else None,
        fertile_window=a.prediction.fertile_window if a.prediction else None,
        shift_confirmed_on=shift.confirmed_on if shift and shift.confirmed else None,
        last_entry_day=a.last_entry_day,
    )


def _iso(d: date | None) -> str | None:
    return d.isoformat() if d else None


def _day(s: str | None) -> date | None:
    return date.fromisoformat(s) if s else None
