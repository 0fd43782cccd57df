"""The weekly summary for supervisors: computing it once, and exporting it with its audit row.

De-identified exports show each patient as a keyed pseudonym: HMAC-SHA256 of the patient id
under the store's own secret, so it is the same for a patient in every week's export of that
store and cannot be reversed without the secret. Staff ids stay as they are.
"""

from __future__ import annotations

import hashlib
import hmac
from collections.abc import Callable
from contextlib import AbstractContextManager
from datetime import date, timedelta
from pathlib import Path

from caseload.core.parse import InputError, one_line
from caseload.core.pregnancy import HCG_POSITIVE_IU_L, POSITIVE
from caseload.application.week.clinical_events import cycles_into_week
from caseload.application.week.pseudonyms import deidentified
from caseload.application.week.figures import WeeklySummary
from caseload.application.week.compile import WeekData, charting_from, compute
from caseload.application.week.iso_weeks import DAYS, Week, iso_week
from caseload.application.week.period import Period, covered
from caseload.application.context import Context
from caseload.application.errors import Refused
from caseload.application.staff import DEFAULT_TIMEZONE
from caseload.store.summary_queries import ReportQueries, Span

FORMATS = ("xlsx", "html", "csv", "json")
FOLDER_FORMATS = frozenset({"csv"})  # written as a folder of files
Renderer = Callable[[WeeklySummary, str, Path, Path, bool], AbstractContextManager[Callable[[], None]]]
"""Renders a summary in a format for a target path (given the store's path and `force`), privately
and aside; the context it opens gives the function that publishes the files, called in the
transaction of the audit row. Given by the front end from caseload.exports."""

PSEUDONYM_PREFIX = "px-"
PSEUDONYM_HEX_DIGITS = 10


def pseudonym(secret: str, patient_id: str) -> str:
    digest = hmac.new(secret.encode("utf-8"), patient_id.encode("utf-8"), hashlib.sha256).hexdigest()
    return PSEUDONYM_PREFIX + digest[:PSEUDONYM_HEX_DIGITS]


def last_complete_week(today: date) -> str:
    """The ISO week before the one `today` is in: the default summary, so no week in progress is
    taken for a whole one."""
    year, number, _ = (today - timedelta(days=DAYS)).isocalendar()
    return f"{year}-W{number:02d}"


def _week(ctx: Context, text: str) -> Week:
    week = iso_week(text, ctx.store.meta("timezone") or DEFAULT_TIMEZONE)
    if week.first_day > ctx.today:
        raise InputError(
            f"week {week.label} starts on {week.first_day.isoformat()}, after today ({ctx.today.isoformat()}): "
            "choose a week that has begun"
        )
    return week


def _week_data(ctx: Context, q: ReportQueries, period: Period) -> WeekData:
    """What the store holds for the days `period` covers: entries dated, and rows written, up to
    its last day only."""
    span = Span(period.start, period.end)
    positives = q.hcg_positives(period.first_day, period.last_day, POSITIVE, HCG_POSITIVE_IU_L)
    temperature_days = q.temperature_days(period.first_day, period.last_day)
    bleeds = q.charting_bleeds(charting_from(period, ctx.protocol), period.last_day)
    cycles = cycles_into_week(bleeds, temperature_days, period, ctx.protocol)
    return WeekData(
        staff=tuple(ctx.store.staff.all()),
        patients={p.id: p for p in ctx.store.patients.all()},
        at_start=q.patient_versions(period.start),
        at_end=q.patient_versions(period.end),
        alert_history=tuple(q.alert_history(span)),
        unresolved_at_start=tuple(q.unresolved_alerts(period.start)),
        entries_logged=tuple(q.entries_logged(span, period.day_starts)),
        changes=tuple(q.changes(span)),
        temperature_days=temperature_days,
        cycles=cycles,
        temperatures=q.temperatures_from({pid: spans[0].start for pid, spans in cycles.items()}, period.last_day),
        hcg_positives=tuple(positives),
        hcg_entries={p.patient_id: ctx.store.entries.for_patient(p.patient_id) for p in positives},
    )


def compute_summary(ctx: Context, week: str) -> WeeklySummary:
    """The summary of one ISO week ('2026-W48'), with patient ids and names (supervisors and admins)."""
    ctx.require("summary.export")
    period = covered(_week(ctx, week), ctx.today)
    with ctx.store.summary_queries().snapshot() as q:
        data = _week_data(ctx, q, period)
    return compute(period, data, ctx.protocol, ctx.today)


def _format(fmt: str) -> str:
    word = fmt.strip().lower()
    if word not in FORMATS:
        raise InputError(f"format '{one_line(fmt)}' not known: use one of {', '.join(FORMATS)}")
    return word


def _target(out: Path, fmt: str) -> Path:
    if not out.parent.is_dir():
        raise InputError(f"folder {out.parent} does not exist: create it first or choose another --out")
    if fmt in FOLDER_FORMATS and out.exists() and not out.is_dir():
        raise InputError(f"{out} is a file: {fmt} is written as a folder of files, give a folder path")
    if fmt not in FOLDER_FORMATS and out.is_dir():
        raise InputError(f"{out} is a folder: give a file path for {fmt}")
    return out


def pseudonym_secret(ctx: Context) -> str:
    """The store's key for pseudonyms and date offsets; refused when the store has none."""
    secret = ctx.store.meta("pseudonym_secret")
    if not secret:
        raise Refused("this store has no pseudonym secret, so it cannot de-identify: "
                      "it was not set up by 'caseload init'")
    return secret


def export_summary(
    ctx: Context, week: str, fmt: str, out: Path, deidentify: bool, render: Renderer, force: bool = False,
    recorded_on: date | None = None,
) -> Path:
    """Write one week's summary as xlsx, html, json (a file) or csv (a folder), and audit it. The
    summary is computed as of ctx.today; its audit row records `recorded_on` (default ctx.today), the
    date of record, when the export is a view of another day.

    `render` refuses the store, a backup and (without `force`) an existing file, renders into private
    temporary files, and publishes them in the transaction of the audit row: a refused or failed
    export leaves neither a file nor an audit row.
    """
    ctx.require("summary.export")
    fmt = _format(fmt)
    target = _target(Path(out), fmt)
    secret = pseudonym_secret(ctx) if deidentify else None
    summary = compute_summary(ctx, week)
    if secret is not None:
        summary = deidentified(summary, lambda pid: pseudonym(secret, pid))
    after = {"week": summary.week.label, "format": fmt, "deidentified": deidentify, "path": str(target),
             "as_of": ctx.today.isoformat()}
    with render(summary, fmt, target, ctx.store.path, force) as publish:
        with ctx.store.atomic(recorded_on or ctx.today):
            ctx.store.audit.record(ctx.actor, "summary.export", "summary", summary.week.label, after=after)
            publish()
    return target
