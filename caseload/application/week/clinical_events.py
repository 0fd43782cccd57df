"""The clinical events of the weekly summary: alerts raised for the week's findings, thermal
shifts confirmed, and positive hCG results with their due dates.

Two things need the core. A shift confirmed in the week is replayed with the three-over-six
rule over the cycles that reach into the week, for the patients with a temperature in it: one
cycle's readings each, not their history. The due date of a positive hCG comes from the core's
pregnancy computation (Naegele's rule, or ovulation + 266 days), for those few patients only.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from datetime import date

from caseload.core.analysis import analyse
from caseload.core.cycles import CycleSpan, cycle_spans, group_by_cycle, menstrual_bleeds
from caseload.core.model import Entry, Observation, Patient, observations
from caseload.core.settings import Protocol
from caseload.core.thermal import three_over_six, valid_readings
from caseload.application.week.alert_counts import RAISE
from caseload.application.week.figures import (
    Clinical, ClinicalEvent, EventCount, NurseOutcomes, PatientRef, PositiveHcg,
)
from caseload.application.week.period import Period
from caseload.store.summary_queries import AlertEvent, HcgPositive

SHIFT_CONFIRMED, HCG_POSITIVE = "shift-confirmed", "hcg-positive"
# (event, description, the alert kinds whose raising counts as the event)
CLINICAL_EVENTS: tuple[tuple[str, str, tuple[str, ...]], ...] = (
    ("entered-window", "Entered a predicted fertile window (window-approaching or window-open raised)",
     ("window-approaching", "window-open")),
    (SHIFT_CONFIRMED, "Thermal shift confirmed (three-over-six rule)", ()),
    ("no-thermal-shift", "No thermal shift flagged", ("no-thermal-shift",)),
    ("monophasic-cycle", "Monophasic cycle flagged", ("monophasic-cycle",)),
    ("irregular-cycles", "Referred for irregular cycles", ("irregular-cycles",)),
    ("short-luteal-phase", "Short luteal phase", ("short-luteal-phase",)),
    (HCG_POSITIVE, "Positive hCG result", ()),
    ("hcg-rise-low", "Suboptimal hCG rise", ("hcg-rise-low",)),
)
EVENT_ALERT_KINDS = frozenset(k for _, _, kinds in CLINICAL_EVENTS for k in kinds)


def cycles_into_week(bleeds: Mapping[str, Sequence[Observation]], temperature_days: Mapping[str, Sequence[date]],
                     period: Period, protocol: Protocol) -> dict[str, list[CycleSpan]]:
    """Each patient's cycles, as of the period's last day, that reach into it.

    Only patients with a temperature in the week can have a shift confirmed in it, so only they
    are kept; their readings are then needed from the first such cycle's day 1, not from further back.
    """
    found = {}
    for pid in temperature_days:
        seen = [b for b in bleeds.get(pid, ()) if b.day <= period.last_day]
        spans = [s for s in cycle_spans(menstrual_bleeds(seen, protocol)) if s.end is None or s.end >= period.first_day]
        if spans:
            found[pid] = spans
    return found


def confirmed_shift(cycles: Sequence[CycleSpan], temperatures: Sequence[Observation], period: Period,
                    protocol: Protocol) -> date | None:
    """The day in the period a thermal shift was confirmed by the three-over-six rule, if one was."""
    for span, group in zip(cycles, group_by_cycle(list(temperatures), list(cycles))):
        readings = valid_readings(group, protocol)
        confirmed = three_over_six(readings, protocol).confirmed_at
        if confirmed is not None and period.holds(readings[confirmed].day):
            return readings[confirmed].day
    return None


def event_order(e: ClinicalEvent) -> tuple:
    return (e.day, e.event, e.patient.id)


def pregnancy_order(p: PositiveHcg) -> tuple:
    return (p.tested_on, p.patient.id)


def count_events(events: Sequence[ClinicalEvent]) -> tuple[EventCount, ...]:
    counts = []
    for event, description, kinds in CLINICAL_EVENTS:
        names = set(kinds) or {event}
        counts.append(EventCount(event, description, len({e.patient.id for e in events if e.event in names})))
    return tuple(counts)


def _raised_events(period: Period, in_week: Sequence[AlertEvent],
                   ref: Callable[[str], PatientRef]) -> list[ClinicalEvent]:
    """The first raising in the week of each (patient, kind) the events count, on its local day."""
    first: dict[tuple[str, str], date] = {}
    for e in in_week:
        if e.action == RAISE and e.kind in EVENT_ALERT_KINDS:
            day = period.local_day(e.at)
            first[(e.patient_id, e.kind)] = min(day, first.get((e.patient_id, e.kind), day))
    return [ClinicalEvent(ref(pid), kind, day) for (pid, kind), day in first.items()]


def _positive_hcg(positive: HcgPositive, patient: Patient, entries: Sequence[Entry], protocol: Protocol,
                  ref: Callable[[str], PatientRef]) -> PositiveHcg:
    # As of the test day, so that the cycle the test belongs to dates the pregnancy.
    found = analyse(patient, observations(list(entries)), positive.day, protocol).pregnancy
    return PositiveHcg(ref(patient.id), positive.day, found.edd if found else None, found.edd_method if found else None)


def clinical(
    period: Period,
    in_week: Sequence[AlertEvent],
    cycles: Mapping[str, Sequence[CycleSpan]],
    temperatures: Mapping[str, Sequence[Observation]],
    positives: Sequence[HcgPositive],
    records: Mapping[str, tuple[Patient, Sequence[Entry]]],
    protocol: Protocol,
    ref: Callable[[str], PatientRef],
    outcomes: tuple[tuple[NurseOutcomes, ...], NurseOutcomes],
) -> Clinical:
    events = _raised_events(period, in_week, ref)
    for pid, readings in temperatures.items():
        confirmed = confirmed_shift(cycles[pid], readings, period, protocol)
        if confirmed is not None:
            events.append(ClinicalEvent(ref(pid), SHIFT_CONFIRMED, confirmed))
    pregnancies = [_positive_hcg(p, *records[p.patient_id], protocol, ref) for p in positives]
    events += [ClinicalEvent(p.patient, HCG_POSITIVE, p.tested_on) for p in pregnancies]
    return Clinical(
        counts=count_events(events),
        events=tuple(sorted(events, key=event_order)),
        pregnancies=tuple(sorted(pregnancies, key=pregnancy_order)),
        outcomes=outcomes[0],
        outcomes_total=outcomes[1],
    )
