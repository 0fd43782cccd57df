"""Records that travel: one patient's referral pack (HTML or PDF) and the HL7 FHIR R4 export.

Both are for nurses and up, audited (who, which patients, where), and written owner-only: the
bytes go to a hidden file beside the target, which is renamed into place in the transaction of
the audit row, so a refused or failed export leaves neither a file nor an audit row.
"""

from __future__ import annotations

import json
import os
import tempfile
from collections.abc import Callable
from datetime import date
from pathlib import Path
from zoneinfo import ZoneInfo

from caseload.core.parse import InputError, one_line
from caseload.exports import fhir, pack
from caseload.application.caseload_view import show_patient
from caseload.application.context import Context
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


def _publish(ctx: Context, target: Path, data: bytes, audit: Callable[[], None]) -> Path:
    """Write `data` owner-only beside `target` and rename it into place together with the audit row."""
    handle, staged = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".partial", dir=target.parent)
    try:
        with os.fdopen(handle, "wb") as f:
            f.write(data)
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

    return _publish(ctx, target, data, audit)


def shift_days(secret: str, patient_id: str) -> int:
    """A patient's keyed date offset: the same for her in every export of this store, never zero."""
    keyed = int(pseudonym(secret, "date-shift/" + patient_id).removeprefix(PSEUDONYM_PREFIX), 16)
    offset = keyed % (2 * MAX_SHIFT_DAYS)
    return offset - MAX_SHIFT_DAYS if offset < MAX_SHIFT_DAYS else offset - MAX_SHIFT_DAYS + 1


def fhir_bundle(ctx: Context, patient_id: str | None, since: date | None = None, deidentify: bool = False) -> dict:
    """The FHIR R4 Bundle of one patient, or of every patient when `patient_id` is None."""
    ctx.require("fhir.export")
    if patient_id is None:
        patients = {p.id: p for p in ctx.store.patients.all()}
        found = dict(ctx.store.entries.by_patient())
        chosen = [(p, found.get(p.id, [])) for p in patients.values()]
    else:
        p = show_patient(ctx, patient_id).patient
        chosen = [(p, ctx.store.entries.for_patient(p.id))]
    masking = None
    if deidentify:
        secret = _secret(ctx)
        masking = fhir.Masking(lambda pid: pseudonym(secret, pid), lambda pid: shift_days(secret, pid))
    charts = [fhir.Chart(p, tuple(entries), analyse_patient(ctx, p, entries)) for p, entries in chosen]
    options = fhir.Options(zone=_zone(ctx), generated=ctx.store.db.clock(), since=since, masking=masking)
    return fhir.bundle(charts, {s.id: s for s in ctx.store.staff.all()}, options)


def export_fhir(ctx: Context, patient_id: str | None, out: Path, since: date | None = None,
                deidentify: bool = False, force: bool = False) -> tuple[Path, int]:
    """Write the Bundle as JSON and audit it; returns the path and how many resources it holds."""
    ctx.require("fhir.export")
    out = Path(out)
    target = _target(out, force)
    bundle = fhir_bundle(ctx, patient_id, since, deidentify)
    data = json.dumps(bundle, indent=1, ensure_ascii=False).encode("utf-8")
    patients = [e["resource"]["id"] for e in bundle["entry"] if e["resource"]["resourceType"] == "Patient"]

    def audit() -> None:
        after = {"patients": "all" if patient_id is None else patients, "since": since and since.isoformat(),
                 "deidentified": deidentify, "resources": len(bundle["entry"]), "path": str(target)}
        ctx.store.db.audit(ctx.actor, "fhir.export", "patient", patient_id or "*", after=after)

    return _publish(ctx, target, data, audit), len(bundle["entry"])
