"""What every alert rule shares: the kinds, the candidate a rule returns, and who a rule applies to.

A rule looks at one patient's `Facts` and returns `Candidate`s. A candidate either raises an alert
(`raisable`) or only says that the condition behind an already raised alert still holds, so that
it is not auto-resolved: the finding of an older cycle, or a window that opened earlier this cycle.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from datetime import date
from enum import StrEnum

from caseload.core.analysis import Analysis
from caseload.core.model import Alert, Observation, Patient, PatientStatus, Plan, Severity
from caseload.core.settings import Protocol

CAUTION = "Supports, does not replace, clinical judgement and the clinic's protocols."


class AlertKind(StrEnum):
    """The alert kinds of the JSON contract."""

    WINDOW_APPROACHING = "window-approaching"
    WINDOW_OPEN = "window-open"
    NO_THERMAL_SHIFT = "no-thermal-shift"
    MONOPHASIC_CYCLE = "monophasic-cycle"
    IRREGULAR_CYCLES = "irregular-cycles"
    SHORT_LUTEAL_PHASE = "short-luteal-phase"
    PROLONGED_BLEEDING = "prolonged-bleeding"
    PERIOD_OVERDUE = "period-overdue"
    SUSTAINED_HIGH_TEMPS = "sustained-high-temps"
    AMENORRHOEA = "amenorrhoea"
    HCG_RISE_LOW = "hcg-rise-low"
    MULTIPLE_FOLLICLES = "multiple-follicles"
    LOGGING_GAP = "logging-gap"
    FEVER = "fever"
    INTERMENSTRUAL_BLEEDING = "intermenstrual-bleeding"
    BLEEDING_IN_PREGNANCY = "bleeding-in-pregnancy"


ALERT_KINDS: tuple[str, ...] = tuple(k.value for k in AlertKind)
# Routine alerts any staff member may handle, without a note; every other kind is clinical:
# nurses and up handle it, and say what was done.
ROUTINE_KINDS: frozenset[str] = frozenset({AlertKind.LOGGING_GAP.value})
CLINICAL_KINDS: frozenset[str] = frozenset(ALERT_KINDS) - ROUTINE_KINDS


# Within one severity, the kinds in order of clinical risk (common practice): what may harm her
# now (bleeding in pregnancy, hCG not rising, over-response, fever, heavy or long bleeding) first,
# then a missed period and the findings of her chart, and the timing of her fertile window and a
# gap in her charting last. The morning list, its rows and the alert queue all sort by it.
RISK_ORDER: tuple[AlertKind, ...] = (
    AlertKind.BLEEDING_IN_PREGNANCY,
    AlertKind.HCG_RISE_LOW,
    AlertKind.MULTIPLE_FOLLICLES,
    AlertKind.FEVER,
    AlertKind.PROLONGED_BLEEDING,
    AlertKind.PERIOD_OVERDUE,
    AlertKind.SUSTAINED_HIGH_TEMPS,
    AlertKind.INTERMENSTRUAL_BLEEDING,
    AlertKind.AMENORRHOEA,
    AlertKind.SHORT_LUTEAL_PHASE,
    AlertKind.MONOPHASIC_CYCLE,
    AlertKind.IRREGULAR_CYCLES,
    AlertKind.NO_THERMAL_SHIFT,
    AlertKind.WINDOW_OPEN,
    AlertKind.WINDOW_APPROACHING,
    AlertKind.LOGGING_GAP,
)
_RISK_RANK: dict[str, int] = {kind.value: rank for rank, kind in enumerate(RISK_ORDER)}


def risk_rank(kind: str) -> int:
    """0 for the kind of most clinical risk; an unknown kind ranks first, the safer reading."""
    return _RISK_RANK.get(kind, -1)


def triage_key(alert: Alert) -> tuple:
    """The order alerts are looked at in: severity, then clinical risk, then the day due."""
    return (alert.severity.rank, risk_rank(alert.kind), alert.due, alert.id)


def is_clinical(kind: str) -> bool:
    """True for a clinical kind; an unknown kind is treated as clinical, the safer reading."""
    return kind not in ROUTINE_KINDS


# Every plan of the service times something to ovulation (intercourse, scans and trigger, the
# insemination), so window alerts apply to all four; a plan added later must opt in here.
TIMING_PLANS: frozenset[Plan] = frozenset(Plan)


@dataclass(frozen=True)
class Facts:
    """What a rule may look at: one patient as of `today`."""

    patient: Patient
    analysis: Analysis
    # The chart's observations; after an analysis resumed from kept cycles, the open cycle's and
    # what completed cycles keep for the rules (`closed_cycles.rule_observations`).
    observations: list[Observation]
    today: date
    protocol: Protocol

    def candidate(
        self,
        kind: AlertKind,
        anchor: str,
        severity: Severity,
        message: str,
        evidence: dict,
        rule: str,
        source: str,
        due: date | None = None,
        raisable: bool = True,
    ) -> Candidate:
        return Candidate(
            patient_id=self.patient.id,
            kind=kind.value,
            key=f"{self.patient.id}:{kind.value}:{anchor}",
            severity=severity,
            due=due or self.today,
            message=message,
            evidence={**evidence, "protocol_version": self.protocol.version},
            rule=rule,
            source=source,
            raisable=raisable,
            protocol_version=self.protocol.version,
        )


@dataclass(frozen=True)
class Candidate:
    """An alert as a rule sees it today. The key names the patient, the kind and the episode (the
    cycle, the bleed, the hCG pair, the scan, the gap, the reading day, the run of abnormal cycles):
    one alert per episode at a time, raised again only when the condition comes back after an
    automatic resolution or the evidence worsens after a person resolved it."""

    patient_id: str
    kind: str
    key: str
    severity: Severity
    due: date
    message: str
    evidence: dict  # the dates and numbers that triggered it, JSON-ready
    rule: str
    source: str
    raisable: bool = True
    caution: str = CAUTION
    protocol_version: int | None = None  # the stored protocol version whose settings found it


@dataclass(frozen=True)
class Scope:
    """Which patients a kind makes sense for."""

    statuses: frozenset[PatientStatus]  # when no pregnancy is known
    when_pregnant: bool  # still applies once pregnant (recorded, or a positive hCG this cycle)
    needs_temps: bool = False
    timing: bool = False  # only for plans that time something to ovulation


MONITORED = frozenset({PatientStatus.ACTIVE})  # rules that read meaning into what is not logged
CHARTING = frozenset({PatientStatus.ACTIVE, PatientStatus.PAUSED})  # rules on what was logged


def pregnancy_known(patient: Patient, analysis: Analysis) -> bool:
    return patient.status is PatientStatus.PREGNANT or analysis.pregnancy is not None


def skip_reason(scope: Scope, patient: Patient, analysis: Analysis) -> str | None:
    """Why a kind does not apply to this patient, or None when it does."""
    if patient.status is PatientStatus.DISCHARGED:
        return "patient discharged"
    if pregnancy_known(patient, analysis):
        if scope.when_pregnant:
            return None
        test = analysis.pregnancy.positive_test if analysis.pregnancy else None
        return f"pregnant (positive hCG on {test.isoformat()})" if test else "patient recorded pregnant"
    if patient.status not in scope.statuses:
        return f"patient {patient.status.value}"
    if scope.needs_temps and not patient.charting_temps:
        return "patient not charting temperatures"
    if scope.timing and patient.plan not in TIMING_PLANS:
        return f"plan {patient.plan.value} times nothing to ovulation"
    return None


DEFAULTS = {f.name: f.default for f in fields(Protocol)}


def source_of(protocol: Protocol, names: tuple[str, ...], base: str) -> str:
    """The rule's published source, with the clinic's overrides of its settings named first."""
    changed = [
        f"{n} = {getattr(protocol, n):g} (default {DEFAULTS[n]:g})" for n in names if getattr(protocol, n) != DEFAULTS[n]
    ]
    return f"clinic protocol: {', '.join(changed)}; defaults from {base}" if changed else base


def iso(day: date | None) -> str | None:
    return None if day is None else day.isoformat()


