"""Records that travel: one patient's referral pack (HTML or PDF) and the HL7 FHIR R4 export.

Both are for nurses and up, audited (who, which patients, where), and written owner-only: the
bytes go to a hidden file beside the target, which is renamed into place in the transaction of
the audit row, so a refused or failed export leaves neither a file nor an audit row.

This module gathers what is written (`PackInput`, the FHIR `Chart`s with their `Options`); the
rendering and serialising are the exports', handed in by the front end as a callable
(`PackRenderer`, `BundleWriter`), as for the weekly summary.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from datetime import date, datetime, tzinfo
from pathlib import Path
from typing import IO
from zoneinfo import ZoneInfo

from caseload.core.analysis import Analysis
from caseload.core.model import Alert, Entry, Patient, Staff
from caseload.core.parse import InputError, one_line, parse_day
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.application import safe_file
from caseload.application.caseload_view import show_patient
from caseload.application.context import Context
from caseload.application.patients import get_patient
from caseload.application.recompute import analyse_patient
from caseload.application.staff import DEFAULT_TIMEZONE
from caseload.application.weekly_summary import PSEUDONYM_PREFIX, pseudonym, pseudonym_secret

PACK_FORMATS = {".pdf": "pdf", ".html": "html", ".htm": "html"}
FHIR_SUFFIX = ".json"  # a Bundle is written as JSON, never as FHIR's XML
PAPERS = ("a4", "letter")  # for the PDF
# De-identified dates move by up to half a year either way, never by zero days (common practice).
MAX_SHIFT_DAYS = 182


@dataclass(frozen=True)
class PackInput:
    """What one patient's referral pack is made from."""

    clinic: str
    today: date
    patient: Patient
    analysis: Analysis
    entries: Sequence[Entry]  # every stored entry, corrections and voids included
    alerts: Sequence[Alert]  # not resolved, most pressing first
    staff_names: Mapping[str, str]
    cycles: int  # how many recent cycles to chart
    prepared_by: str
    protocol: Protocol = DEFAULT_PROTOCOL


PackRenderer = Callable[[PackInput, str, str], bytes]
"""Renders a pack as 'pdf' or 'html' on a paper size: given by the front end from caseload.exports."""


@dataclass(frozen=True)
class Chart:
    """One patient's record to export: her stored entries (with their history) and her analysis."""

    patient: Patient
    entries: tuple[Entry, ...]
    analysis: Analysis


@dataclass(frozen=True)
class Masking:
    """De-identification: a keyed pseudonym and a keyed day offset for each patient id."""

    pseudonym: Callable[[str], str]
    shift_days: Callable[[str], int]


@dataclass(frozen=True)
class Options:
    zone: tzinfo  # the clinic's time zone, for times of day
    generated: datetime  # the Bundle's timestamp (aware)
    since: date | None = None  # entries and derived dates before this day are left out
    masking: Masking | None = None


BundleWriter = Callable[[Iterable[Chart], Mapping[str, Staff], Options, IO[bytes]], int]
"""Writes the charts as one FHIR R4 Bundle to a byte stream and returns how many resources it
holds: given by the front end from caseload.exports."""


def _publish(ctx: Context, target: Path, force: bool, fill: Callable[[IO[bytes]], None], audit: Callable[[], None],
             recorded_on: date | None) -> Path:
    """Let `fill` write owner-only beside `target` (checked already), then rename it into place in
    the transaction of the audit row (dated `recorded_on`, the date of record; ctx.today by default)."""

    def write(staged: Path) -> None:
        with open(staged, "wb") as f:
            fill(f)

    with safe_file.staged(target, write, force) as file:
        with ctx.store.atomic(recorded_on or ctx.today):
            audit()
            file.publish()
    return target


def _clinic(ctx: Context) -> str:
    return ctx.store.meta("clinic") or "Clinic name not set"


def _zone(ctx: Context) -> ZoneInfo:
    return ZoneInfo(ctx.store.meta("timezone") or DEFAULT_TIMEZONE)


def make_pack(ctx: Context, patient_id: str, out: Path, cycles: int, paper: str, force: bool,
              render: PackRenderer, recorded_on: date | None = None) -> Path:
    """Write one patient's referral pack as PDF or HTML (by the file's suffix) with `render`, and
    audit it. The pack is of the record as of ctx.today; the audit row records `recorded_on`."""
    ctx.require("referral.pack")
    out = Path(out)
    fmt = PACK_FORMATS.get(out.suffix.lower())
    if fmt is None:
        raise InputError(f"--out '{one_line(out.name)}' must end in .pdf or .html")
    if cycles < 1:
        raise InputError(f"--cycles {cycles} not accepted: give 1 or more")
    if paper not in PAPERS:
        raise InputError(f"--paper '{one_line(paper)}' not known: use {' or '.join(PAPERS)}")
    safe_file.check_target(out, ctx.store.path, force)
    record = show_patient(ctx, patient_id)
    content = PackInput(
        clinic=_clinic(ctx), today=ctx.today, patient=record.patient, analysis=record.analysis,
        entries=record.entries, alerts=record.alerts, staff_names={s.id: s.name for s in ctx.store.staff.all()},
        cycles=cycles, prepared_by=ctx.actor.staff.name, protocol=ctx.protocol,
    )
    data = render(content, fmt, paper)

    def audit() -> None:
        after = {"format": fmt, "cycles": cycles, "paper": paper if fmt == "pdf" else None, "path": str(out),
                 "as_of": ctx.today.isoformat()}
        ctx.store.audit.record(ctx.actor, "referral.pack", "patient", record.patient.id, after=after)

    return _publish(ctx, out, force, lambda f: f.write(data), audit, recorded_on)


def shift_days(secret: str, patient_id: str) -> int:
    """A patient's keyed date offset: the same for her in every export of this store, never zero."""
    keyed = int(pseudonym(secret, "date-shift/" + patient_id).removeprefix(PSEUDONYM_PREFIX), 16)
    offset = keyed % (2 * MAX_SHIFT_DAYS)
    return offset - MAX_SHIFT_DAYS if offset < MAX_SHIFT_DAYS else offset - MAX_SHIFT_DAYS + 1


def _charts(ctx: Context, patient_id: str | None) -> Iterator[Chart]:
    """One patient's chart, or every patient's one at a time: the caseload is never all in memory."""
    if patient_id is not None:
        p = get_patient(ctx, patient_id)
        entries = ctx.store.entries.for_patient(p.id)
        yield Chart(p, tuple(entries), analyse_patient(ctx, p, entries))
        return
    unseen = {p.id: p for p in ctx.store.patients.all()}
    for pid, entries in ctx.store.entries.by_patient():
        p = unseen.pop(pid)
        yield Chart(p, tuple(entries), analyse_patient(ctx, p, entries))
    for p in unseen.values():
        yield Chart(p, (), analyse_patient(ctx, p, []))


def _options(ctx: Context, since: date | None, deidentify: bool) -> Options:
    masking = None
    if deidentify:
        secret = pseudonym_secret(ctx)
        masking = Masking(lambda pid: pseudonym(secret, pid), lambda pid: shift_days(secret, pid))
    return Options(zone=_zone(ctx), generated=ctx.store.db.clock(), since=since, masking=masking)


def stream_bundle(ctx: Context, patient_id: str | None, stream: IO[bytes], since: date | None, deidentify: bool,
                  write: BundleWriter) -> int:
    """Write the FHIR R4 Bundle of one patient (or of all, when `patient_id` is None) to `stream`
    with `write`, patient by patient; returns how many resources it holds."""
    ctx.require("fhir.export")
    options = _options(ctx, since, deidentify)
    return write(_charts(ctx, patient_id), {s.id: s for s in ctx.store.staff.all()}, options, stream)


def export_fhir(ctx: Context, patient_id: str | None, out: Path, since: str | None, deidentify: bool, force: bool,
                write: BundleWriter, recorded_on: date | None = None) -> tuple[Path, int]:
    """Write the Bundle to a file owner-only and audit it; returns the path and how many resources
    it holds. `since` is a day as typed ('2026-11-01', 'today', ...)."""
    ctx.require("fhir.export")
    day = parse_day(since, ctx.today) if since else None
    target = Path(out)
    if target.suffix.lower() != FHIR_SUFFIX:  # as the pack's suffix, checked before the file itself
        raise InputError("FHIR bundles are written as JSON: give a file name ending in .json")
    safe_file.check_target(target, ctx.store.path, force)
    if patient_id is not None:
        patient_id = get_patient(ctx, patient_id).id
    count = 0

    def fill(stream: IO[bytes]) -> None:
        nonlocal count
        count = stream_bundle(ctx, patient_id, stream, day, deidentify, write)

    def audit() -> None:
        after = {"since": day and day.isoformat(), "deidentified": deidentify, "resources": count,
                 "path": str(target), "as_of": ctx.today.isoformat()}
        ctx.store.audit.record(ctx.actor, "fhir.export", "patient", patient_id or "*", after=after)

    return _publish(ctx, target, force, fill, audit, recorded_on), count
