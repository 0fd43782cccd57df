"""One patient's cycle picture as of a day: every computation of the core tied together.

`analyse` is pure: the same patient, observations, day and protocol always give the same
`Analysis`. Entries dated after `today` are ignored, so any review can be replayed as of a date.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, timedelta

from caseload.core import cycles as cy
from caseload.core.figo import Classification, age_on, classify
from caseload.core.follicles import Follicles, follicles
from caseload.core.markers import (
    Markers,
    dating_conflict,
    days_after_ovulation,
    fertile_until,
    lh_positive,
    luteal_length,
    markers,
)
from caseload.core.model import Kind, Observation, Patient, PatientStatus
from caseload.core.prediction import (
    Evidence,
    Prediction,
    cycle_predictive,
    luteal_predictive,
    predict,
    watch_horizon,
)
from caseload.core.pregnancy import (
    Discounted,
    Episode,
    HcgTrend,
    HcgValue,
    Pregnancy,
    episodes,
    hcg_trend,
    pregnancy,
    serum_values,
)
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.core.stats import CycleStats, cycle_stats
from caseload.core.thermal import ThermalShift, excluded_readings, thermal_shift, valid_readings

# The caseload list's phase words.
BLEEDING = "bleeding"
PRE_WINDOW = "pre-window"
WINDOW = "window"
LUTEAL = "luteal"  # ovulation is past: a confirmed shift, or a dated marker behind today
PREGNANT = "pregnant"
UNKNOWN = "unknown"
PHASES = (BLEEDING, PRE_WINDOW, WINDOW, LUTEAL, PREGNANT, UNKNOWN)


@dataclass(frozen=True)
class CycleRecord:
    """One cycle, complete or (the last one) open, with what its observations show."""

    start: date
    end: date | None  # last day; None while open
    length: int | None  # None while open
    is_open: bool
    bleed_days: int
    bleed_end: date
    shift: ThermalShift
    markers: Markers
    luteal_length: int | None  # complete cycles with a dated ovulation only
    pregnancy: bool = False  # a pregnancy began in it: not a cycle for statistics or prediction
    dating_conflict: str | None = None  # why the dated luteal length is not believed (shown, not learnt)


@dataclass(frozen=True)
class NextEvent:
    label: str  # "window start", "period", "trigger size", "pregnancy test"
    day: date


@dataclass(frozen=True)
class Analysis:
    patient_id: str
    today: date
    cycle_start: date | None  # day 1 of the current cycle
    cycle_day: int | None
    cycles: tuple[CycleRecord, ...]  # oldest first; the open one last
    current: CycleRecord | None  # the open cycle (also the last of `cycles`)
    stats: CycleStats  # over the last `stats_cycles` complete cycles
    classification: Classification
    prediction: Prediction | None  # None without a cycle start, or when pregnant
    pregnancy: Pregnancy | None
    follicles: Follicles | None  # scans of the current cycle
    hcg: tuple[HcgValue, ...]  # serum values of the current cycle
    hcg_trend: HcgTrend | None
    phase: str  # one of PHASES
    next_event: NextEvent | None
    last_bleed_day: date | None  # last day of the latest menstrual bleed
    last_entry_day: date | None  # of any kind
    age_years: int
    intermenstrual: tuple[cy.Bleed, ...] = ()  # bleeds between periods, flagged or too soon to start a cycle
    episode: Episode | None = None  # the latest pregnancy while no period has followed it
    pregnancy_bleeds: tuple[cy.Bleed, ...] = ()  # bleeds during `episode`
    hcg_discounted: tuple[Discounted, ...] = ()  # positive urine tests taken as a trigger's hCG
    episodes: tuple[Episode, ...] = ()  # every pregnancy of the chart, oldest first


def _record(
    span: cy.CycleSpan, group: list[Observation], today: date, protocol: Protocol, found: tuple[Episode, ...]
) -> CycleRecord:
    temps = [o for o in group if o.kind == Kind.TEMP]
    signs = [o for o in group if o.kind == Kind.LH or o.kind == Kind.MUCUS]
    readings, left_out = valid_readings(temps, protocol), excluded_readings(temps, protocol)
    shift = thermal_shift(readings, span.start, span.end or today, protocol, left_out)
    marks = markers(signs, shift, protocol, retrospective=not span.is_open)
    luteal = luteal_length(marks, span.next_start)
    return CycleRecord(
        start=span.start,
        end=span.end,
        length=span.length,
        is_open=span.is_open,
        bleed_days=span.bleed.days,
        bleed_end=span.bleed.end,
        shift=shift,
        markers=marks,
        luteal_length=luteal,
        pregnancy=any(span.start <= e.start and (span.next_start is None or e.start < span.next_start) for e in found),
        dating_conflict=dating_conflict(luteal, marks, protocol),
    )


def analyse(
    patient: Patient, observations: list[Observation], today: date, protocol: Protocol = DEFAULT_PROTOCOL
) -> Analysis:
    """Everything the core can say about one patient as of `today`."""
    seen = sorted((o for o in observations if o.day <= today), key=lambda o: o.day)
    found, discounted = episodes(seen, patient.status, patient.status_since, protocol)
    bleeding = cy.sort_bleeding(seen, protocol, no_new_cycles(found, protocol))
    spans = cy.cycle_spans(list(bleeding.menstrual))
    groups = cy.group_by_cycle(seen, spans)
    records = cycle_records(spans, groups, today, protocol, found)
    return assemble(
        patient, Chart(records, groups[-1] if groups else seen, bleeding, found, discounted),
        seen[-1].day if seen else None, today, protocol,
    )


def no_new_cycles(found: tuple[Episode, ...], protocol: Protocol) -> tuple[tuple[date, date | None], ...]:
    """The days in which a bleed starts no cycle: each pregnancy, with the lochia after it."""
    lochia = timedelta(days=protocol.lochia_days)
    return tuple((e.start, e.end and e.end + lochia) for e in found)


def cycle_records(
    spans: list[cy.CycleSpan], groups: list[list[Observation]], today: date, protocol: Protocol, found: tuple[Episode, ...]
) -> tuple[CycleRecord, ...]:
    """One record per cycle span, from the observations of that cycle."""
    return tuple(_record(span, group, today, protocol, found) for span, group in zip(spans, groups))


@dataclass(frozen=True)
class Chart:
    """What `assemble` reads of a chart: every cycle's record, the open cycle's observations (all of
    them when no cycle has begun) and what spans the whole chart (bleeds between periods or in
    pregnancy, the pregnancies and the positive tests discounted as a trigger's)."""

    records: tuple[CycleRecord, ...]
    current_obs: list[Observation]
    bleeding: cy.Bleeding
    found: tuple[Episode, ...]
    discounted: tuple[Discounted, ...]


def assemble(patient: Patient, chart: Chart, last_entry: date | None, today: date, protocol: Protocol) -> Analysis:
    """The analysis from a chart's cycles: shared by the whole-chart path (`analyse`) and the one
    that resumes from kept completed cycles (`closed_cycles.resume`)."""
    records, current_obs, bleeding, found = chart.records, chart.current_obs, chart.bleeding, chart.found
    last = records[-1] if records else None
    # The latest pregnancy counts until a period follows it: cycles restart with that period.
    episode = found[-1] if found and (last is None or last.start <= found[-1].start) else None
    ended = episode is not None and episode.end is not None
    current = None if ended else last
    complete = [r for r in records if not r.is_open and not r.pregnancy][-protocol.stats_cycles :]
    stats = cycle_stats([r.length for r in complete], [r.bleed_days for r in complete])
    age = age_on(patient.born, today)
    during = () if episode is None else tuple(
        b for b in bleeding.in_pregnancy if episode.start <= b.start and (episode.end is None or b.start <= episode.end)
    )
    pregnant = pregnancy(
        current_obs,
        last.start if last else None,
        last.markers.ovulation if last else None,
        episode,
        patient.status == PatientStatus.PREGNANT and patient.status_since is None,
        usual_cycle(stats, age, protocol),
        during,
        today,
        protocol,
    )
    last_bleed = current.bleed_end if current else None
    days_dry = None if last_bleed is None else (today - last_bleed).days
    classification = classify(stats, days_dry, pregnant is not None, age, protocol)
    forecast = None
    if current is not None and pregnant is None:
        forecast = _forecast(current, current_obs, complete, today, protocol)
    scans = follicles(current_obs, protocol)
    hcg = serum_values(current_obs)
    phase = _phase(current, forecast, pregnant, today, protocol)
    return Analysis(
        patient_id=patient.id,
        today=today,
        cycle_start=current.start if current else None,
        cycle_day=cy.cycle_day(current.start, today) if current else None,
        cycles=records,
        current=current,
        stats=stats,
        classification=classification,
        prediction=forecast,
        pregnancy=pregnant,
        follicles=scans,
        hcg=hcg,
        hcg_trend=pregnant.hcg_trend if pregnant else hcg_trend(hcg, today, protocol),
        phase=phase,
        next_event=_next_event(phase, forecast, scans, today),
        last_bleed_day=last_bleed,
        last_entry_day=last_entry,
        age_years=age,
        intermenstrual=bleeding.intermenstrual,
        episode=episode,
        pregnancy_bleeds=during,
        hcg_discounted=chart.discounted,
        episodes=found,
    )


def usual_cycle(stats: CycleStats, age: int, protocol: Protocol) -> int | None:
    """The usual cycle length (the median) when cycles classify as regular (FIGO 2018), else None."""
    if classify(stats, None, False, age, protocol).regularity != "regular":
        return None
    return math.floor(stats.median + 0.5)


def _forecast(
    current: CycleRecord, current_obs: list[Observation], complete: list[CycleRecord], today: date, protocol: Protocol
) -> Prediction:
    # A "cycle" past the amenorrhoea threshold is an absence of bleeding, not a pattern to learn from
    # (and a mistyped year would otherwise stretch the forecast grid over decades).
    lengths = [r.length for r in complete if r.length < protocol.amenorrhoea_days]
    # The model counts from the day after the estimated ovulation day, whatever dated it; a length
    # that says the dating is wrong is shown, not learnt.
    luteals = [
        days_after_ovulation(r.markers.ovulation, r.end + timedelta(days=1)) for r in complete if r.dating_conflict is None
    ]
    luteals = [days for days in luteals if days is not None]
    cycle = cycle_predictive(lengths, protocol)
    luteal = luteal_predictive(luteals, protocol)

    def cycle_day(day: date | None) -> int | None:
        return None if day is None else cy.cycle_day(current.start, day)

    shift = current.shift
    readings = [cycle_day(r.day) for r in valid_readings(current_obs, protocol)]
    negatives = tuple(cycle_day(o.day) for o in current_obs if o.kind == Kind.LH and not lh_positive(o, protocol))
    evidence = Evidence(
        cycle_day=cycle_day(today),
        first_high=cycle_day(shift.first_high) if shift.confirmed else None,
        lh_surge=cycle_day(current.markers.lh_surge),
        horizon=watch_horizon(readings, protocol),
        rise_start=None if shift.confirmed else cycle_day(shift.rise_start),
        lh_negatives=negatives,
        shift_rise=cycle_day(shift.rise_start) if shift.confirmed else None,
    )
    return predict(current.start, evidence, cycle, luteal, lengths, today, protocol)


def _phase(
    current: CycleRecord | None,
    forecast: Prediction | None,
    pregnant: Pregnancy | None,
    today: date,
    protocol: Protocol,
) -> str:
    if pregnant is not None:
        return PREGNANT
    if current is None:
        return UNKNOWN
    if (today - current.bleed_end).days <= 1:
        return BLEEDING
    ovulation, until = current.markers.ovulation, fertile_until(current.markers, protocol)
    if current.shift.confirmed:
        return LUTEAL
    if until is not None and today <= until:
        return WINDOW  # the fertile time the LH surge or mucus peak shows has not ended
    if ovulation is not None and ovulation < today:
        return LUTEAL
    if current.markers.lh_surge is not None:
        return WINDOW
    if forecast is None or forecast.fertile_window is None:
        return UNKNOWN
    start, end = forecast.fertile_window
    today_p = forecast.daily[0].p_fertile if forecast.daily else 0.0
    if start <= today <= end or today_p >= protocol.window_open_p:
        return WINDOW
    return PRE_WINDOW if today < start else UNKNOWN


def _next_event(phase: str, forecast: Prediction | None, scans: Follicles | None, today: date) -> NextEvent | None:
    """The earliest coming event worth planning for."""
    if phase == PREGNANT or forecast is None:
        return None
    if today > forecast.next_period_range[1] and phase != BLEEDING:  # a bleed that runs on is no missed period
        return NextEvent("pregnancy test", today)
    events = [NextEvent("period", forecast.next_period)]
    if forecast.fertile_window is not None and phase in (BLEEDING, PRE_WINDOW):
        events.append(NextEvent("window start", forecast.fertile_window[0]))
    if scans is not None and not scans.trigger_reached and scans.trigger_day is not None:
        events.append(NextEvent("trigger size", scans.trigger_day))
    coming = [e for e in events if e.day >= today]
    return min(coming, key=lambda e: e.day) if coming else None
