"""Records that travel: one patient's referral pack (HTML or PDF) and the HL7 FHIR R4 export.

Both are for nurses and up, audited (who, which patients, where), and written owner-only: the
bytes go to a hidden file beside the target, which is renamed into place in the transaction of
the audit row, so a refused or failed export leaves neither a file nor an audit row.
"""

from __future__ import annotations

import io
import json
import os
import tempfile
from collections.abc import Callable, Iterator
from datetime import date
from pathlib import Path
from typing import IO
from zoneinfo import ZoneInfo

from caseload.core.parse import InputError, one_line
from caseload.exports import fhir, pack
from caseload.application.caseload_view import show_patient
from caseload.application.context import Context
from caseload.application.patients import get_patient
from caseload.application.recompute import analyse_patient
from caseload.application.errors import Refused
from caseload.application.weekly_summary import PSEUDONYM_PREFIX, _secret, pseudonym
from caseload.application.staff import DEFAULT_TIMEZONE

PACK_FORMATS = {".pdf": "pdf", ".html": "html", ".htm": "html"}
# De-identified dates move by up to half a year either way, never by zero days (common practice).
MAX_SHIFT_DAYS = 182


def _target(out: Path, force: bool) -> Path:
    if not out.parent.is_dir():
        raise InputError(f"folder {out.parent} does not exist: create it first or choose another --out")
    if out.is_dir():
        raise InputError(f"{out} is a folder: give a file path")
    if out.exists() and not force:
        raise Refused(f"{out} exists: choose another --out, or add --force to replace it")
    return out


def _publish(ctx: Context, target: Path, fill: Callable[[IO[bytes]], None], audit: Callable[[], None]) -> Path:
    """Let `fill` write owner-only beside `target`, then rename it into place with the audit row."""
    handle, staged = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".partial", dir=target.parent)
    try:
        with os.fdopen(handle, "wb") as f:
            fill(f)
        os.chmod(staged, 0o600)  # mkstemp already does; said again because the file holds patient data

        def record() -> None:
            audit()
            os.replace(staged, target)

        ctx.store.transact(record)
    finally:
        Path(staged).unlink(missing_ok=True)
    return target


def _clinic(ctx: Context) -> str:
    return ctx.store.db.meta("clinic") or "Clinic name not set"


def _zone(ctx: Context) -> ZoneInfo:
    return ZoneInfo(ctx.store.db.meta("timezone") or DEFAULT_TIMEZONE)


def make_pack(ctx: Context, patient_id: str, out: Path, cycles: int = 3, paper: str = "a4",
              force: bool = False) -> Path:
    """Write one patient's referral pack as PDF or HTML (by the file's suffix), and audit it."""
    ctx.require("referral.pack")
    out = Path(out)
    fmt = PACK_FORMATS.get(out.suffix.lower())
    if fmt is None:
        raise InputError(f"--out '{one_line(out.name)}' must end in .pdf or .html")
    if cycles < 1:
        raise InputError(f"--cycles {cycles} not accepted: give 1 or more")
    if paper not in pack.PAPERS:
        raise InputError(f"--paper '{one_line(paper)}' not known: use {' or '.join(pack.PAPERS)}")
    target = _target(out, force)
    record = show_patient(ctx, patient_id)
    staff = {s.id: s for s in ctx.store.staff.all()}
    content = pack.build(pack.PackInput(
        clinic=_clinic(ctx), today=ctx.today, patient=record.patient, analysis=record.analysis,
        entries=record.entries, alerts=record.alerts, staff_names={s.id: s.name for s in staff.values()},
        cycles=cycles, prepared_by=ctx.actor.staff.name,
    ))
    if fmt == "pdf":
        # Imported here: the PDF library takes about a second to load, which no other command should pay.
        from caseload.exports import pack_pdf

        data = pack_pdf.render(content, paper)
    else:
        data = pack.html(content).encode("utf-8")

    def audit() -> None:
        after = {"format": fmt, "cycles": cycles, "paper": paper if fmt == "pdf" else None, "path": str(target)}
        ctx.store.db.audit(ctx.actor, "referral.pack", "patient", record.patient.id, after=after)

    return _publish(ctx, target, lambda f: f.write(data), audit)


def shift_days(secret: str, patient_id: str) -> int:
    """A patient's keyed date offset: the same for her in every export of this store, never zero."""
    keyed = int(pseudonym(secret, "date-shift/" + patient_id).removeprefix(PSEUDONYM_PREFIX), 16)
    offset = keyed % (2 * MAX_SHIFT_DAYS)
    return offset - MAX_SHIFT_DAYS if offset < MAX_SHIFT_DAYS else offset - MAX_SHIFT_DAYS + 1


def _charts(ctx: Context, patient_id: str | None) -> Iterator[fhir.Chart]:
    """One patient's chart, or every patient's one at a time: the caseload is never all in memory."""
    if patient_id is not None:
        p = get_patient(ctx, patient_id)
        entries = ctx.store.entries.for_patient(p.id)
        yield fhir.Chart(p, tuple(entries), analyse_patient(ctx, p, entries))
        return
    unseen = {p.id: p for p in ctx.store.patients.all()}
    for pid, entries in ctx.store.entries.by_patient():
        p = unseen.pop(pid)
        yield fhir.Chart(p, tuple(entries), analyse_patient(ctx, p, entries))
    for p in unseen.values():
        yield fhir.Chart(p, (), analyse_patient(ctx, p, []))


def _options(ctx: Context, since: date | None, deidentify: bool) -> fhir.Options:
    masking = None
    if deidentify:
        secret = _secret(ctx)
        masking = fhir.Masking(lambda pid: pseudonym(secret, pid), lambda pid: shift_days(secret, pid))
    return fhir.Options(zone=_zone(ctx), generated=ctx.store.db.clock(), since=since, masking=masking)


def write_bundle(ctx: Context, patient_id: str | None, stream: IO[bytes], since: date | None = None,
                 deidentify: bool = False) -> int:
    """Write the FHIR R4 Bundle of one patient (or of all, when `patient_id` is None) as JSON, entry by
    entry; returns how many resources it holds."""
    ctx.require("fhir.export")
    options = _options(ctx, since, deidentify)
    start = json.dumps(fhir.bundle_start(options))
    stream.write((start[:-1] + ', "entry": [').encode("utf-8"))
    count, staff_ids = 0, set()

    def put(resource: dict) -> None:
        nonlocal count
        separator = ",\n" if count else "\n"
        stream.write((separator + json.dumps(fhir.bundle_entry(resource), ensure_ascii=False)).encode("utf-8"))
        count += 1

    for chart in _charts(ctx, patient_id):
        staff_ids |= fhir.people(chart, options)
        for resource in fhir.patient_resources(chart, options):
            put(resource)
    for resource in fhir.practitioners({s.id: s for s in ctx.store.staff.all()}, staff_ids, options):
        put(resource)
    stream.write(b"\n]}\n")
    return count


def fhir_bundle(ctx: Context, patient_id: str | None, since: date | None = None, deidentify: bool = False) -> dict:
    """The same Bundle read back as a dict."""
    buffer = io.BytesIO()
    write_bundle(ctx, patient_id, buffer, since, deidentify)
    return json.loads(buffer.getvalue())


def export_fhir(ctx: Context, patient_id: str | None, out: Path, since: date | None = None,
                deidentify: bool = False, force: bool = False) -> tuple[Path, int]:
    """Write the Bundle to a file owner-only and audit it; returns the path and how many resources it holds."""
    ctx.require("fhir.export")
    target = _target(Path(out), force)
    if patient_id is not None:
        patient_id = get_patient(ctx, patient_id).id
    count = 0

    def fill(stream: IO[bytes]) -> None:
        nonlocal count
        count = write_bundle(ctx, patient_id, stream, since, deidentify)

    def audit() -> None:
        after = {"since": since and since.isoformat(), "deidentified": deidentify, "resources": count,
                 "path": str(target)}
        ctx.store.db.audit(ctx.actor, "fhir.export", "patient", patient_id or "*", after=after)

    return _publish(ctx, target, fill, audit), count
