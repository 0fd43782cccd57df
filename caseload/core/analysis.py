"""One patient's cycle picture as of a day: every computation of the core tied together.

`analyse` is pure: the same patient, observations, day and protocol always give the same
`Analysis`. Entries dated after `today` are ignored, so any review can be replayed as of a date.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from caseload.core import cycles as cy
from caseload.core.figo import Classification, age_on, classify
from caseload.core.follicles import Follicles, follicles
from caseload.core.markers import Markers, dating_conflict, fertile_until, lh_positive, luteal_length, markers
from caseload.core.model import Kind, Observation, Patient, PatientStatus
from caseload.core.prediction import (
    Evidence,
    Prediction,
    cycle_predictive,
    luteal_predictive,
    predict,
    watch_horizon,
)
from caseload.core.pregnancy import HcgTrend, HcgValue, Pregnancy, hcg_trend, pregnancy, serum_values
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


def _record(span: cy.CycleSpan, group: list[Observation], today: date, protocol: Protocol) -> CycleRecord:
    temps = [o for o in group if o.kind == Kind.TEMP]
    signs = [o for o in group if o.kind == Kind.LH or o.kind == Kind.MUCUS]
    readings, left_out = valid_readings(temps, protocol), excluded_readings(temps, protocol)
    shift = thermal_shift(readings, span.start, span.end or today, protocol, left_out)
    found = markers(signs, shift, protocol, retrospective=not span.is_open)
    luteal = luteal_length(found.ovulation, span.next_start)
    return CycleRecord(
        start=span.start,
        end=span.end,
        length=span.length,
        is_open=span.is_open,
        bleed_days=span.bleed.days,
        bleed_end=span.bleed.end,
        shift=shift,
        markers=found,
        luteal_length=luteal,
        dating_conflict=dating_conflict(luteal, found, protocol),
    )


def analyse(
    patient: Patient, observations: list[Observation], today: date, protocol: Protocol = DEFAULT_PROTOCOL
) -> Analysis:
    """Everything the core can say about one patient as of `today`."""
    seen = sorted((o for o in observations if o.day <= today), key=lambda o: o.day)
    spans = cy.cycle_spans(cy.menstrual_bleeds(seen, protocol))
    groups = cy.group_by_cycle(seen, spans)
    records = tuple(_record(span, group, today, protocol) for span, group in zip(spans, groups))
    current = records[-1] if records else None
    current_obs = groups[-1] if groups else seen
    complete = [r for r in records if not r.is_open][-protocol.stats_cycles :]
    stats = cycle_stats([r.length for r in complete], [r.bleed_days for r in complete])
    age = age_on(patient.born, today)

    pregnant = pregnancy(
        current_obs,
        current.start if current else None,
        current.markers.ovulation if current else None,
        patient.status == PatientStatus.PREGNANT,
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
        cycle_day=(today - current.start).days + 1 if current else None,
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
        last_entry_day=seen[-1].day if seen else None,
        age_years=age,
    )


def _forecast(
    current: CycleRecord, current_obs: list[Observation], complete: list[CycleRecord], today: date, protocol: Protocol
) -> Prediction:
    # A "cycle" past the amenorrhoea threshold is an absence of bleeding, not a pattern to learn from
    # (and a mistyped year would otherwise stretch the forecast grid over decades).
    lengths = [r.length for r in complete if r.length < protocol.amenorrhoea_days]
    luteals = [r.luteal_length for r in complete if r.luteal_length is not None and r.dating_conflict is None]
    cycle = cycle_predictive(lengths, protocol)
    luteal = luteal_predictive(luteals, protocol)

    def cycle_day(day: date | None) -> int | None:
        return None if day is None else (day - current.start).days + 1

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
    if today > forecast.next_period_range[1]:
        return NextEvent("pregnancy test", today)
    events = [NextEvent("period", forecast.next_period)]
    if forecast.fertile_window is not None and phase in (BLEEDING, PRE_WINDOW):
        events.append(NextEvent("window start", forecast.fertile_window[0]))
    if scans is not None and not scans.trigger_reached and scans.trigger_day is not None:
        events.append(NextEvent("trigger size", scans.trigger_day))
    coming = [e for e in events if e.day >= today]
    return min(coming, key=lambda e: e.day) if coming else None


def _iso(day: date | None) -> str | None:
    return None if day is None else day.isoformat()


def _span(pair: tuple[date, date] | None) -> list[str] | None:
    return None if pair is None else [pair[0].isoformat(), pair[1].isoformat()]


def _shift_json(shift: ThermalShift) -> dict:
    cp = shift.change_point
    return {
        "confirmed": shift.confirmed,
        "confirmed_on": _iso(shift.confirmed_on),
        "first_high": _iso(shift.first_high),
        "coverline": shift.coverline,
        "change_point": None
        if cp is None
        else {
            "split_on": cp.split_on.isoformat(),
            "low_mean": cp.low_mean,
            "high_mean": cp.high_mean,
            "difference": cp.difference,
            "strength": cp.strength,
            "passes": cp.passes,
        },
        "agreement": shift.agreement,
        "readings": shift.readings,
        "coverage": shift.coverage,
        "days_above_coverline": shift.days_above_coverline,
        "excluded_readings": [{"day": e.day.isoformat(), "celsius": e.celsius, "reason": e.reason} for e in shift.excluded],
    }


def _prediction_json(p: Prediction) -> dict:
    return {
        "ovulation": _iso(p.ovulation),
        "ovulation_range": _span(p.ovulation_range),
        "fertile_window": _span(p.fertile_window),
        "next_period": p.next_period.isoformat(),
        "next_period_range": _span(p.next_period_range),
        "daily": [
            {"day": d.day.isoformat(), "p_fertile": d.p_fertile, "p_fertile_percent": round(100 * d.p_fertile, 1)}
            for d in p.daily
        ],
        "calendar_rule": None if p.calendar_rule is None else list(p.calendar_rule),
        "expected_ovulation": p.expected_ovulation.isoformat(),
        "expected_ovulation_range": _span(p.expected_ovulation_range),
        "evidence": p.evidence,
        "reason": p.reason,
    }


def _pregnancy_json(p: Pregnancy) -> dict:
    trend = p.hcg_trend
    return {
        "edd": _iso(p.edd),
        "edd_method": p.edd_method,
        "gestational_age_days": p.gestational_age_days,
        "gestational_age": p.gestational_age,
        "hcg_rise_48h": None if trend is None else trend.rise_48h,
        "hcg_doubling_days": None if trend is None else trend.doubling_days,
        "positive_test": _iso(p.positive_test),
    }


def _follicles_json(f: Follicles) -> dict:
    return {
        "lead_mm": f.lead_mm,
        "mature_count": f.mature_count,
        "growth_mm_per_day": f.growth_mm_per_day,
        "trigger_day": _iso(f.trigger_day),
        "trigger_reached": f.trigger_reached,
        "endometrium_mm": f.endometrium_mm,
        "last_scan": f.scans[-1].day.isoformat(),
        "possible_cysts": list(f.possible_cysts),
    }


def analysis_json(a: Analysis) -> dict:
    """The analysis keys of the `show --json` contract (the caller adds `patient` and `alerts`)."""
    s, c = a.stats, a.classification
    current = a.current
    return {
        "today": a.today.isoformat(),
        "cycle_day": a.cycle_day,
        "cycle_start": _iso(a.cycle_start),
        "cycles": [
            {
                "start": r.start.isoformat(),
                "length": r.length,
                "bleed_days": r.bleed_days,
                "ovulation": _iso(r.markers.ovulation),
                "ovulation_method": r.markers.ovulation_method,
                "luteal_length": r.luteal_length,
                "dating_conflict": r.dating_conflict,
                "open": r.is_open,
            }
            for r in a.cycles
        ],
        "stats": {
            "count": s.count,
            "mean": s.mean,
            "sd": s.sd,
            "median": s.median,
            "shortest": s.shortest,
            "longest": s.longest,
            "variation": s.variation,
        },
        "classification": {"frequency": c.frequency, "regularity": c.regularity, "duration": c.duration},
        "prediction": None if a.prediction is None else _prediction_json(a.prediction),
        "thermal_shift": None if current is None else _shift_json(current.shift),
        "pregnancy": None if a.pregnancy is None else _pregnancy_json(a.pregnancy),
        "markers": None
        if current is None
        else {
            "lh_surge": _iso(current.markers.lh_surge),
            "mucus_peak": _iso(current.markers.mucus_peak),
            "ovulation": _iso(current.markers.ovulation),
            "ovulation_method": current.markers.ovulation_method,
            "conflict": current.markers.conflict,
        },
        "follicles": None if a.follicles is None else _follicles_json(a.follicles),
        "phase": a.phase,
        "next_event": None
        if a.next_event is None
        else {"label": a.next_event.label, "day": a.next_event.day.isoformat()},
    }
