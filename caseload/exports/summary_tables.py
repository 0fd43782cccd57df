"""The summary as sections of tables: the one view that every format renders.

Cells keep their Python types (int, float, date, datetime, str, None); each renderer only
formats them. A table's total row comes from the summary, never from adding up in a renderer.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime

from caseload.application.week.figures import Change, PatientRef, WeeklySummary
from caseload.application.week.alert_counts import SEVERITIES
from caseload.application.week.figures import TOTAL
from caseload.presentation.days import iso_day
from caseload.presentation.glossary import alert_label
from caseload.presentation.safe_text import printable

TEXT, INT, FLOAT, SHARE, DATE, DATETIME = "text", "int", "float", "share", "date", "datetime"
ID = "id"  # a whole number that names a record (an entry id): shown as a label, never added up
WEEK_DAY = "day of the week, Monday = 1"


@dataclass(frozen=True)
class Column:
    id: str
    title: str
    kind: str = INT


@dataclass(frozen=True)
class Table:
    id: str
    title: str
    columns: tuple[Column, ...]
    rows: tuple[tuple, ...]
    total: tuple | None = None

    def records(self) -> list[dict]:
        return [dict(zip((c.id for c in self.columns), row)) for row in self.rows]


@dataclass(frozen=True)
class Section:
    id: str
    title: str
    tables: tuple[Table, ...]

    def table(self, table_id: str) -> Table:
        return next(t for t in self.tables if t.id == table_id)


@dataclass(frozen=True)
class Chart:
    """A bar chart of some value columns of one table, one bar group per row."""

    id: str
    title: str
    section: str
    table: str
    category: str  # column id of the bar labels
    values: tuple[str, ...]  # column ids of the series
    unit: str


CHARTS = (
    Chart("census-by-nurse", "Active patients by nurse", "census", "by_nurse", "nurse", ("at_start", "at_end"),
          "patients"),
    Chart("alerts-by-kind", "Alerts raised by kind", "alerts", "raised", "alert", ("total",), "alerts"),
    Chart("hours-to-acknowledge", "Hours from raised to first acknowledged", "alerts", "ack_time", "severity",
          ("median_hours", "p90_hours"), "hours"),
)


@dataclass(frozen=True)
class Bars:
    """A chart's numbers, read from its table."""

    chart: Chart
    series: tuple[str, ...]  # the value columns' titles
    kinds: tuple[str, ...]  # the value columns' kinds, for showing a value as its table does
    items: tuple[tuple[str, tuple[int | float | None, ...]], ...]  # (label, a value per series; None if blank)
    top: int | float  # the largest value, at least 1

    @property
    def empty(self) -> bool:
        """Nothing to draw: no rows, or every value 0. The chart then says NONE instead."""
        return not any(v for _, values in self.items for v in values)


NONE = "none this week"


def bars(chart: Chart, section: Section) -> Bars:
    table = section.table(chart.table)
    ids = [c.id for c in table.columns]
    label, picks = ids.index(chart.category), [ids.index(v) for v in chart.values]
    items = tuple((str(row[label]), tuple(row[i] for i in picks)) for row in table.rows)
    top = max([1, *(v or 0 for _, values in items for v in values)])
    return Bars(chart, tuple(table.columns[i].title for i in picks), tuple(table.columns[i].kind for i in picks),
                items, top)


def caption(summary: WeeklySummary) -> str:
    w = summary.week
    text = (f"{w.label}: Monday {iso_day(w.first_day)} to Sunday {iso_day(w.last_day)}, "
            f"{w.timezone} ({w.hours} hours). Prepared on {iso_day(summary.prepared_on)}.")
    if not summary.complete:
        text += f" WEEK IN PROGRESS: figures up to {iso_day(summary.prepared_on)} only; the week is not over."
    if summary.deidentified:
        text += (" De-identified: patients appear as keyed pseudonyms, without names, birth dates or free text;"
                 " dates are days of the week, Monday = 1.")
    return text


def _patient_columns(deid: bool) -> tuple[Column, ...]:
    return (Column("patient", "Patient", TEXT),) + (() if deid else (Column("name", "Name", TEXT),))


def _patient(ref: PatientRef, deid: bool) -> tuple:
    return (ref.id,) if deid else (ref.id, ref.name)


def _census(s: WeeklySummary) -> Section:
    c = s.census
    counts = (Column("at_start", "At week start"), Column("at_end", "At week end"))
    active = (*counts, Column("registered", "Registered this week"))
    return Section("census", "Census", (
        Table("statuses", "Patients by status", (Column("status", "Status", TEXT), *counts),
              tuple((r.status, r.at_start, r.at_end) for r in c.statuses),
              (TOTAL, c.statuses_total.at_start, c.statuses_total.at_end)),
        Table("moves", "Status at week start and at week end",
              (Column("from_status", "At week start", TEXT), Column("to_status", "At week end", TEXT),
               Column("patients", "Patients")),
              tuple((m.from_status, m.to_status, m.patients) for m in c.moves),
              (TOTAL, "", sum(m.patients for m in c.moves))),
        Table("movement", "Movement over the week", (Column("measure", "Measure", TEXT), Column("patients", "Patients")),
              tuple((m.measure, m.patients) for m in c.movement)),
        Table("by_plan", "Active patients by plan", (Column("plan", "Plan", TEXT), *active),
              tuple((r.group, r.at_start, r.at_end, r.registered) for r in c.by_plan),
              (TOTAL, c.active_total.at_start, c.active_total.at_end, c.active_total.registered)),
        Table("by_nurse", "Active patients by nurse", (Column("nurse", "Nurse", TEXT), *active),
              tuple((r.group, r.at_start, r.at_end, r.registered) for r in c.by_nurse),
              (TOTAL, c.active_total.at_start, c.active_total.at_end, c.active_total.registered)),
    ))


ALERT_COLUMN = Column("alert", "Alert", TEXT)  # the kind in the trade's words, beside its identifier


def _alerts(s: WeeklySummary) -> Section:
    a, deid = s.alerts, s.deidentified
    people = _patient_columns(deid)
    by_severity = tuple(Column(sev, sev.capitalize()) for sev in SEVERITIES)
    hours = (Column("acknowledged", "Acknowledged"), Column("median_hours", "Median hours", FLOAT),
             Column("p90_hours", "90th percentile hours", FLOAT))
    return Section("alerts", "Alerts", (
        Table("raised", "Alerts raised by kind and severity",
              (Column("kind", "Kind", TEXT), ALERT_COLUMN, *by_severity, Column("total", "Total")),
              tuple((r.kind, alert_label(r.kind), *r.by_severity, r.total) for r in a.raised),
              (TOTAL, "", *a.raised_total.by_severity, a.raised_total.total)),
        Table("actions", "Alert transitions in the week", (Column("event", "Event", TEXT), Column("count", "Count")),
              tuple((r.event, r.count) for r in a.actions)),
        Table("ack_time", "Hours from raised to first acknowledged, by severity then",
              (Column("severity", "Severity", TEXT), *hours),
              tuple((r.severity, r.acknowledged, r.median_hours, r.p90_hours) for r in a.ack_times),
              (a.ack_all.severity, a.ack_all.acknowledged, a.ack_all.median_hours, a.ack_all.p90_hours)),
        Table("week_end", "Alerts not resolved at week end",
              (Column("severity", "Severity", TEXT), Column("open", "Open"), Column("past_due", "Open, past due"),
               Column("acknowledged", "Acknowledged"), Column("snoozed", "Snoozed")),
              tuple((r.severity, r.open, r.past_due, r.acknowledged, r.snoozed) for r in a.week_end),
              (TOTAL, a.week_end_total.open, a.week_end_total.past_due, a.week_end_total.acknowledged,
               a.week_end_total.snoozed)),
        Table("open_at_end", "Urgent and today alerts not resolved at week end, by nurse",
              (Column("nurse", "Nurse", TEXT), *people, Column("kind", "Kind", TEXT), ALERT_COLUMN,
               Column("severity", "Severity", TEXT), Column("state", "State", TEXT),
               Column("raised_on", "Raised on", DATE), Column("age_days", "Age (days)")),
              tuple((o.nurse, *_patient(o.patient, deid), o.kind, alert_label(o.kind), o.severity, o.state, o.raised_on, o.age_days)
                    for o in a.open_at_end)),
        Table("urgent_notes", "Notes on urgent alerts acknowledged or resolved",
              (*people, Column("kind", "Kind", TEXT), ALERT_COLUMN, Column("action", "Action", TEXT), Column("by", "By", TEXT),
               Column("at", "When", DATETIME), Column("note", "Note", TEXT)),
              tuple((*_patient(n.patient, deid), n.kind, alert_label(n.kind), n.action, n.by_staff, n.at, n.note) for n in a.urgent_notes)),
    ))


def _clinical(s: WeeklySummary) -> Section:
    c, deid = s.clinical, s.deidentified
    people = _patient_columns(deid)
    return Section("clinical", "Clinical events", (
        Table("counts", "Patients with each clinical event",
              (Column("event", "Event", TEXT), Column("description", "Description", TEXT), Column("patients", "Patients")),
              tuple((r.event, r.description, r.patients) for r in c.counts)),
        Table("events", "Clinical events by patient",
              (*people, Column("event", "Event", TEXT), Column("day", "Day", DATE)),
              tuple((*_patient(e.patient, deid), e.event, e.day) for e in c.events)),
        Table("pregnancies", "Positive hCG results with due dates",
              (*people, Column("tested_on", "Positive on", DATE), Column("edd", "Due date", DATE),
               Column("edd_method", "Dated by", TEXT)),
              tuple((*_patient(p.patient, deid), p.tested_on, p.edd, p.edd_method) for p in c.pregnancies)),
        Table("by_nurse", "Referrals made and pregnancies confirmed, by nurse",
              (Column("nurse", "Nurse", TEXT), Column("referrals", "Referrals (irregular cycles acted on)"),
               Column("pregnancies", "Pregnancies confirmed")),
              tuple((r.nurse, r.referrals, r.pregnancies) for r in c.outcomes),
              (TOTAL, c.outcomes_total.referrals, c.outcomes_total.pregnancies)),
    ))


def _quality(s: WeeklySummary) -> Section:
    q, deid = s.quality, s.deidentified
    people = _patient_columns(deid)
    t = q.coverage_total
    return Section("quality", "Data quality", (
        Table("coverage", "Daily temperatures of patients charting all week",
              (Column("nurse", "Nurse", TEXT), Column("patients", "Patients"), Column("expected", "Expected"),
               Column("logged", "Logged"), Column("share", "Share logged", SHARE)),
              tuple((r.nurse, r.patients, r.expected, r.logged, r.share) for r in q.coverage),
              (TOTAL, t.patients, t.expected, t.logged, t.share)),
        Table("gaps", f"Logging gaps: {q.gap_days} days or more in a row without a temperature",
              (*people, Column("nurse", "Nurse", TEXT), Column("days_logged", "Days logged"),
               Column("longest_gap", "Longest gap (days)")),
              tuple((*_patient(g.patient, deid), g.nurse, g.days_logged, g.longest_gap) for g in q.gaps)),
        _changes(q.changes, deid),
        *(() if deid else (Table("reasons", "Reasons given", (Column("reason", "Reason", TEXT),
                                                              Column("corrections", "Corrections"),
                                                              Column("voids", "Voids")),
                                 tuple((r.reason, r.corrections, r.voids) for r in q.reasons),
                                 (TOTAL, q.reasons_total.corrections, q.reasons_total.voids)),)),
    ))


def _changes(changes: tuple[Change, ...], deid: bool) -> Table:
    """Corrections and voids; de-identified, without the entry ids (a way back to the patient) and
    without the reasons (free text)."""
    if deid:
        return Table("changes", "Corrections and voids",
                     (*_patient_columns(deid), Column("kind", "Kind", TEXT), Column("day", "Day", DATE),
                      Column("change", "Change", TEXT), Column("by", "By", TEXT), Column("at", "When", DATETIME)),
                     tuple((*_patient(c.patient, deid), c.kind, c.day, c.change, c.by_staff, c.at) for c in changes))
    return Table("changes", "Corrections and voids",
                 (Column("entry", "Entry", ID), *_patient_columns(deid), Column("kind", "Kind", TEXT),
                  Column("day", "Day", DATE), Column("change", "Change", TEXT), Column("reason", "Reason", TEXT),
                  Column("by", "By", TEXT), Column("at", "When", DATETIME)),
                 tuple((c.entry_id, *_patient(c.patient, deid), c.kind, c.day, c.change, c.reason, c.by_staff, c.at)
                       for c in changes))


def _workload(s: WeeklySummary) -> Section:
    w = s.workload
    roles = tuple(r.role for r in w.roles)
    loads = (Column("entries", "Entries logged"), Column("corrections", "Of which corrections"),
             Column("voids", "Voids"))
    handling = (Column("acknowledged", "Alerts acknowledged"), Column("snoozed", "Alerts snoozed"),
                Column("resolved", "Alerts resolved"), Column("handled", "Alerts handled"))
    st, rt, dt = w.staff_total, w.roles_total, w.days_total
    return Section("workload", "Workload", (
        Table("staff", "By staff member", (Column("staff", "Staff", TEXT), Column("role", "Role", TEXT), *loads, *handling),
              tuple((r.staff_id, r.role, r.entries, r.corrections, r.voids, r.acknowledged, r.snoozed, r.resolved,
                     r.handled) for r in w.staff),
              (TOTAL, "", st.entries, st.corrections, st.voids, st.acknowledged, st.snoozed, st.resolved, st.handled)),
        Table("roles", "By role", (Column("role", "Role", TEXT), *loads, handling[-1]),
              tuple((r.role, r.entries, r.corrections, r.voids, r.handled) for r in w.roles),
              (TOTAL, rt.entries, rt.corrections, rt.voids, rt.handled)),
        Table("days", "Entries logged by day and role (clinic time)",
              (Column("day", "Day", DATE), *(Column(r, r.capitalize()) for r in roles), Column("total", "Total")),
              tuple((d.day, *d.by_role, d.total) for d in w.days),
              (TOTAL, *dt.by_role, dt.total)),
    ))


def _week_day(value, first_day: date):
    """A date or time as its day counted from the week's Monday (Monday = 1); other cells as they are."""
    if isinstance(value, datetime):
        value = value.date()
    return (value - first_day).days + 1 if isinstance(value, date) else value


def _shown(table: Table, first_day: date | None) -> Table:
    """The table as every format shows it: text cells inert and, when `first_day` is given
    (de-identified), dates as days of the week."""
    dated = [first_day is not None and c.kind in (DATE, DATETIME) for c in table.columns]

    def row(values: tuple) -> tuple:
        return tuple(printable(v) if isinstance(v, str) else _week_day(v, first_day) if d else v
                     for v, d in zip(values, dated))

    columns = tuple(Column(c.id, f"{c.title} ({WEEK_DAY})", INT) if d else c for c, d in zip(table.columns, dated))
    return Table(table.id, table.title, columns, tuple(row(r) for r in table.rows),
                 None if table.total is None else row(table.total))


def sections(summary: WeeklySummary) -> tuple[Section, ...]:
    first_day = summary.week.first_day if summary.deidentified else None
    return tuple(
        Section(s.id, s.title, tuple(_shown(t, first_day) for t in s.tables))
        for s in (build(summary) for build in (_census, _alerts, _clinical, _quality, _workload))
    )
