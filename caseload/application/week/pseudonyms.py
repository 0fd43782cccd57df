"""De-identifying a computed summary: patients become keyed pseudonyms and free text leaves.

A de-identified summary carries no free text at all: a correction's or a void's reason is
whatever staff typed, and no filter can be trusted to find every name, birth date, phone number
or address in it, so reasons are dropped whole. Staff ids stay: they are the clinic's own staff,
and a supervisor's review of workload needs them. The pseudonym function itself (a keyed hash) is
supplied by the caller, who holds the store's secret.

Dates are shown only as days of the week (Monday = 1) when rendered (see `exports.summary_tables`),
which is exact for a day the summary covers and nothing else: a day outside it would come out as a
count of days from the week's Monday (a due date as 255), which with the week's dates is the date
itself. So every date outside the days covered is left out here, with what would give it back: a
due date (and its method) always, as it lies months ahead; an alert raised before the week, and its
age; the day of an entry corrected or voided in the week but dated before it. The days covered are
the only days a de-identified summary names.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from datetime import date

from caseload.application.week.figures import TOTAL, OpenAlert, PatientRef, PositiveHcg, ReasonCount, WeeklySummary
from caseload.application.week.alert_counts import open_order
from caseload.application.week.clinical_events import count_events, event_order, pregnancy_order
from caseload.application.week.compile import gap_order
from caseload.application.week.period import Period


def deidentified(summary: WeeklySummary, pseudonym: Callable[[str], str]) -> WeeklySummary:
    """The same summary with every patient as a pseudonym, no free text and no date outside the
    days it covers."""
    period = Period(summary.week, summary.last_day)

    def ref(p: PatientRef) -> PatientRef:
        return PatientRef(pseudonym(p.id), None)

    def within(day: date | None) -> date | None:
        return day if day is not None and period.holds(day) else None

    def without_edd(p: PositiveHcg) -> PositiveHcg:
        edd = within(p.edd)
        return replace(p, patient=ref(p.patient), edd=edd, edd_method=p.edd_method if edd else None)

    def open_alert(o: OpenAlert) -> OpenAlert:
        raised_on = within(o.raised_on)
        return replace(o, patient=ref(o.patient), raised_on=raised_on, age_days=o.age_days if raised_on else None)

    c, q, a = summary.clinical, summary.quality, summary.alerts
    events = tuple(sorted((replace(e, patient=ref(e.patient)) for e in c.events), key=event_order))
    clinical = replace(
        c,
        counts=count_events(events),
        events=events,
        pregnancies=tuple(sorted((without_edd(p) for p in c.pregnancies), key=pregnancy_order)),
    )
    quality = replace(
        q,
        gaps=tuple(sorted((replace(g, patient=ref(g.patient)) for g in q.gaps), key=gap_order)),
        changes=tuple(replace(ch, patient=ref(ch.patient), day=within(ch.day), reason="") for ch in q.changes),
        reasons=(),
        reasons_total=ReasonCount(TOTAL, q.reasons_total.corrections, q.reasons_total.voids),
    )
    alerts = replace(
        a,
        open_at_end=tuple(sorted((open_alert(o) for o in a.open_at_end), key=open_order)),
        urgent_notes=tuple(replace(n, patient=ref(n.patient), note="") for n in a.urgent_notes),
    )
    return replace(summary, deidentified=True, alerts=alerts, clinical=clinical, quality=quality)
