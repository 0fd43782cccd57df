"""De-identifying a computed summary: patients become keyed pseudonyms and free text leaves.

A de-identified summary carries no free text at all: a correction's or a void's reason is
whatever staff typed, and no filter can be trusted to find every name, birth date, phone number
or address in it, so reasons are dropped whole. Staff ids stay: they are the clinic's own staff,
and a supervisor's review of workload needs them. Dates become days of the week when rendered
(see `exports.summary_tables`). The pseudonym function itself (a keyed hash) is supplied by the
caller, who holds the store's secret.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace

from caseload.application.week.figures import TOTAL, PatientRef, ReasonCount, WeeklySummary
from caseload.application.week.clinical_events import count_events, event_order, pregnancy_order
from caseload.application.week.compile import gap_order


def deidentified(summary: WeeklySummary, pseudonym: Callable[[str], str]) -> WeeklySummary:
    """The same summary with every patient as a pseudonym and no free text."""

    def ref(p: PatientRef) -> PatientRef:
        return PatientRef(pseudonym(p.id), None)

    c, q, a = summary.clinical, summary.quality, summary.alerts
    events = tuple(sorted((replace(e, patient=ref(e.patient)) for e in c.events), key=event_order))
    clinical = replace(
        c,
        counts=count_events(events),
        events=events,
        pregnancies=tuple(sorted((replace(p, patient=ref(p.patient)) for p in c.pregnancies), key=pregnancy_order)),
    )
    quality = replace(
        q,
        gaps=tuple(sorted((replace(g, patient=ref(g.patient)) for g in q.gaps), key=gap_order)),
        changes=tuple(replace(ch, patient=ref(ch.patient), reason="") for ch in q.changes),
        reasons=(),
        reasons_total=ReasonCount(TOTAL, q.reasons_total.corrections, q.reasons_total.voids),
    )
    alerts = replace(
        a,
        open_at_end=tuple(replace(o, patient=ref(o.patient)) for o in a.open_at_end),
        urgent_notes=tuple(replace(n, patient=ref(n.patient), note="") for n in a.urgent_notes),
    )
    return replace(summary, deidentified=True, alerts=alerts, clinical=clinical, quality=quality)
