"""Every `--json` shape of the scriptable interface, in one place: `show --json` (a patient record),
`list --json` (the morning list), `alerts --json` and `entries --json`. The keys are a contract:
extend them, never rename one.
"""

from __future__ import annotations

from datetime import date

from caseload.application.caseload_view import CaseloadLine, PatientRecord
from caseload.application.alert_handling import is_clinical
from caseload.core.analysis import Analysis
from caseload.core.cycles import Bleed
from caseload.core.follicles import Follicles
from caseload.core.model import Alert, Entry
from caseload.core.prediction import Prediction
from caseload.core.pregnancy import Pregnancy
from caseload.core.thermal import ThermalShift
from caseload.presentation.glossary import ALERT_CAUTION


def patient_record(record: PatientRecord) -> dict:
    """`show --json`."""
    p = record.patient
    return {
        "patient": p.id,
        "name": p.name,
        "born": p.born.isoformat(),
        "nurse": p.nurse_id,
        "status": p.status.value,
        "plan": p.plan.value,
        **analysis_json(record.analysis),
        "alerts": [alert_brief(a) for a in record.alerts],
    }


def caseload_line(line: CaseloadLine) -> dict:
    """One row of `list --json`."""
    s, top = line.snapshot, line.top_alert
    return {
        "patient": line.patient.id,
        "name": line.patient.name,
        "nurse": line.patient.nurse_id,
        "plan": line.patient.plan.value,
        "status": line.patient.status.value,
        "cycle_day": line.cycle_day,
        "phase": s.phase if s else None,
        "fertile_window": [d.isoformat() for d in s.fertile_window] if s and s.fertile_window else None,
        "shift_confirmed_on": s.shift_confirmed_on.isoformat() if s and s.shift_confirmed_on else None,
        "next_event": s.next_event if s else None,
        "next_event_day": s.next_event_day.isoformat() if s and s.next_event_day else None,
        "top_alert": None if top is None else alert_brief(top),
        "more_alerts": max(0, len(line.alerts) - 1),
        "days_since_entry": line.days_since_entry,
    }


def alert_brief(a: Alert) -> dict:
    """An alert inside a patient record or a list row."""
    return {"id": a.id, "kind": a.kind, "severity": a.severity.value, "state": a.state.value,
            "due": a.due.isoformat(), "message": a.message}


def alert(a: Alert) -> dict:
    """One alert of `alerts --json`."""
    return {
        "id": a.id,
        "patient": a.patient_id,
        "kind": a.kind,
        "severity": a.severity.value,
        "state": a.state.value,
        "raised_on": a.raised_on.isoformat(),
        "due": a.due.isoformat(),
        "message": a.message,
        "evidence": a.evidence,
        "rule": a.rule,
        "source": a.source,
        "clinical": is_clinical(a.kind),
        "handled_by": a.handled_by,
        "handled_at": a.handled_at.isoformat() if a.handled_at else None,
        "note": a.note,
        "snooze_until": a.snooze_until.isoformat() if a.snooze_until else None,
        "resolved_reason": a.resolved_reason,
        "key": a.key,
        "caution": ALERT_CAUTION,
    }


def entry(e: Entry) -> dict:
    """One entry of `entries --json`."""
    return {
        "id": e.id,
        "patient": e.patient_id,
        "day": e.day.isoformat(),
        "time": e.time,
        "kind": e.kind.value,
        "value": e.value.display(),
        "raw": e.raw,
        "number": e.value.number,
        "flags": list(e.flags),
        "note": e.note,
        "by": e.by,
        "at": e.at.isoformat() if e.at else None,
        "supersedes": e.supersedes,
        "superseded_by": e.superseded_by,
        "amend_reason": e.amend_reason,
        "voided_reason": e.voided_reason,
        "current": e.current,
    }


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
        "bleeds": [_bleed_json(b) for b in p.bleeds],
    }


def _bleed_json(b: Bleed) -> dict:
    return {"start": b.start.isoformat(), "end": b.end.isoformat(), "days": b.days, "heavy_days": b.heavy_days}


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
                "pregnancy": r.pregnancy,
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
        "intermenstrual": [_bleed_json(b) for b in a.intermenstrual],
        "pregnancy_episode": None
        if a.episode is None
        else {"start": a.episode.start.isoformat(), "end": _iso(a.episode.end), "ended_by": a.episode.ended_by},
        "hcg_discounted": [
            {
                "day": d.day.isoformat(),
                "trigger": d.trigger_day.isoformat(),
                "reason": f"positive urine hCG {(d.day - d.trigger_day).days} days after the trigger of "
                f"{d.trigger_day.isoformat()}: taken as the injected hCG, not a pregnancy (common practice)",
            }
            for d in a.hcg_discounted
        ],
    }
