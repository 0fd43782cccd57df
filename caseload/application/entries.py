"""Logging, correcting and voiding entries. Each write recomputes that patient in the same transaction."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date, timedelta

from caseload.core.model import Entry, Kind, Patient, PatientStatus
from caseload.core.parse import InputError, ParsedEntry, parse_entry, parse_value
from caseload.core.second_look import once_a_day_twice, unusual_reading
from caseload.application.alert_handling import as_seen
from caseload.application.context import Context
from caseload.application.recompute import Refreshed, refresh_patient
from caseload.application.errors import NotFound, Refused
from caseload.application.patients import get_patient

REASON_MAX = 500
# How far back one logged entry may be dated. A call reports today's or recent readings; a day more
# than a year back is almost always a mistyped year (common practice). Older history, such as a
# chart a patient brings to her first appointment, goes in through `caseload import`, which checks
# every row together and writes all or none.
LOG_DAYS_BACK = 366


@dataclass(frozen=True)
class Logged:
    """What a write did: the stored entry and the patient's state after it."""

    entry: Entry
    refreshed: Refreshed


def _reason(text: str, what: str) -> str:
    reason = " ".join((text or "").split())
    if not reason:
        raise InputError(f"a {what} needs a reason: say why with --reason")
    if len(reason) > REASON_MAX:
        raise InputError(f"reason is {len(reason)} characters: keep it to {REASON_MAX}")
    return reason


def check_loggable(ctx: Context, patient: Patient, parsed: ParsedEntry, supersedes: int | None = None) -> None:
    """Rules that need the store: the patient takes entries, one temperature a day."""
    if patient.status is PatientStatus.DISCHARGED:
        raise Refused(f"patient {patient.id} is discharged: re-open the patient before logging")
    if parsed.day < patient.born:
        raise InputError(
            f"day {parsed.day.isoformat()} is before {patient.id}'s date of birth ({patient.born.isoformat()}): check the year"
        )
    if parsed.kind is Kind.TEMP:
        first = same_day_temperature(ctx, patient.id, parsed.day, supersedes)
        if first is not None:
            raise Refused(
                f"{patient.id} already has a temperature on {parsed.day.isoformat()} (entry {first.id}: "
                f"{first.value.display()} C): to correct it, amend entry {first.id} with a reason"
            )


def check_recent(ctx: Context, parsed: ParsedEntry) -> None:
    """One logged entry is dated within LOG_DAYS_BACK days of today; an import may go further back."""
    earliest = ctx.today - timedelta(days=LOG_DAYS_BACK)
    if parsed.day < earliest:
        raise InputError(
            f"day {parsed.day.isoformat()} is more than {LOG_DAYS_BACK} days before today ({ctx.today.isoformat()}):"
            f" log entries from {earliest.isoformat()} on, and enter older history with 'caseload import FILE.csv'"
        )


def second_look(ctx: Context, patient_id: str, parsed: ParsedEntry) -> str | None:
    """Why an entry that may be logged deserves a confirmation first (unusual reading, second of
    a once-a-day kind), or None. Temperatures already on the day are offered as corrections instead."""
    unusual = unusual_reading(parsed, ctx.protocol)
    if unusual is not None or parsed.kind is Kind.TEMP:
        return unusual
    return once_a_day_twice(parsed.kind, len(ctx.store.entries.current_on(patient_id, parsed.day, parsed.kind)))


def same_day_temperature(ctx: Context, patient_id: str, day: date, supersedes: int | None = None) -> Entry | None:
    """The patient's counting temperature on `day` (one a day), other than the entry being corrected."""
    same_day = [e for e in ctx.store.entries.current_on(patient_id, day, Kind.TEMP) if e.id != supersedes]
    return same_day[0] if same_day else None


def log_entry(
    ctx: Context,
    patient_id: str,
    kind: str,
    value: str,
    on: str = "today",
    at: str | None = None,
    flags=(),
    note: str = "",
) -> Logged:
    ctx.require("entry.log")
    parsed = parse_entry(kind, value, ctx.today, on=on, at=at, flags=flags, note=note)
    with ctx.store.atomic(ctx.today):
        patient = get_patient(ctx, patient_id)
        check_loggable(ctx, patient, parsed)
        check_recent(ctx, parsed)
        entry = ctx.store.entries.add(ctx.actor, patient.id, parsed)
        return Logged(entry, refreshed_as_seen(ctx, refresh_patient(ctx, patient)))


def refreshed_as_seen(ctx: Context, done: Refreshed) -> Refreshed:
    """A patient's state after a write, with the alerts it raised as the acting staff member may see them."""
    return replace(done, raised=tuple(as_seen(ctx, a) for a in done.raised))


def get_entry(ctx: Context, entry_id: int | str) -> Entry:
    try:
        entry = ctx.store.entries.get(int(entry_id))
    except (ValueError, OverflowError):  # not a number, or beyond any id SQLite can hold
        entry = None
    if entry is None:
        raise NotFound(f"no entry '{entry_id}': see 'caseload entries PATIENT'")
    return entry


def _current(entry: Entry) -> None:
    if entry.voided_reason is not None:
        raise Refused(f"entry {entry.id} is void ({entry.voided_reason}): log a new entry instead")
    if entry.superseded_by is not None:
        raise Refused(f"entry {entry.id} was corrected by entry {entry.superseded_by}: amend that one")


def amend_entry(ctx: Context, entry_id: int | str, value: str, reason: str) -> Logged:
    """A new entry that supersedes the old one; the old row stays, marked as corrected."""
    ctx.require("entry.amend")
    old = get_entry(ctx, entry_id)
    _current(old)
    why = _reason(reason, "correction")
    parsed = ParsedEntry(old.kind, old.day, parse_value(old.kind, value), value.strip(), old.time, old.flags, old.note)
    with ctx.store.atomic(ctx.today):
        patient = get_patient(ctx, old.patient_id)
        check_loggable(ctx, patient, parsed, supersedes=old.id)
        entry = ctx.store.entries.add(ctx.actor, patient.id, parsed, supersedes=old.id, amend_reason=why)
        return Logged(entry, refreshed_as_seen(ctx, refresh_patient(ctx, patient)))


def void_entry(ctx: Context, entry_id: int | str, reason: str) -> Logged:
    ctx.require("entry.void")
    old = get_entry(ctx, entry_id)
    _current(old)
    why = _reason(reason, "void")
    with ctx.store.atomic(ctx.today):
        patient = get_patient(ctx, old.patient_id)
        entry = ctx.store.entries.void(ctx.actor, old, why)
        return Logged(entry, refreshed_as_seen(ctx, refresh_patient(ctx, patient)))


def patient_entries(ctx: Context, patient_id: str) -> list[Entry]:
    ctx.require("patient.show")
    return ctx.store.entries.for_patient(get_patient(ctx, patient_id).id)
