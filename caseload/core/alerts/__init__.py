"""The alert rules: one small pure function per kind, and who each kind applies to.

`evaluate` runs every rule that makes sense for the patient and returns the candidates; the
lifecycle (`caseload.core.alerts.lifecycle`) compares them with the stored alerts.
"""

from __future__ import annotations

from collections.abc import Callable
from datetime import date

from caseload.core.alerts.base import (
    ALERT_KINDS,
    CAUTION,
    CHARTING,
    CLINICAL_KINDS,
    MONITORED,
    ROUTINE_KINDS,
    AlertKind,
    Candidate,
    Facts,
    Scope,
    is_clinical,
    risk_rank,
    skip_reason,
    triage_key,
)
from caseload.core.alerts.cycle import (
    amenorrhoea,
    intermenstrual_bleeding,
    irregular_cycles,
    period_overdue,
    prolonged_bleeding,
    short_luteal_phase,
)
from caseload.core.alerts.readings import fever, logging_gap
from caseload.core.alerts.thermal_alerts import monophasic_cycle, no_thermal_shift, sustained_high_temps
from caseload.core.alerts.treatment import bleeding_in_pregnancy, hcg_rise_low, multiple_follicles
from caseload.core.alerts.window import window_approaching, window_open
from caseload.core.analysis import Analysis
from caseload.core.model import Observation, Patient
from caseload.core.settings import Protocol

Rule = Callable[[Facts], list[Candidate]]
K = AlertKind

# kind -> (who it applies to, the rule). Rules that read meaning into what is not logged (a window
# to come, no shift, no period, no entries) need a monitored (active) patient; rules on what was
# logged also run while paused. Discharged patients get nothing.
RULES: dict[AlertKind, tuple[Scope, Rule]] = {
    K.WINDOW_APPROACHING: (Scope(MONITORED, when_pregnant=False, timing=True), window_approaching),
    K.WINDOW_OPEN: (Scope(MONITORED, when_pregnant=False, timing=True), window_open),
    K.NO_THERMAL_SHIFT: (Scope(MONITORED, when_pregnant=False, needs_temps=True), no_thermal_shift),
    K.MONOPHASIC_CYCLE: (Scope(CHARTING, when_pregnant=False, needs_temps=True), monophasic_cycle),
    K.IRREGULAR_CYCLES: (Scope(CHARTING, when_pregnant=False), irregular_cycles),
    K.SHORT_LUTEAL_PHASE: (Scope(CHARTING, when_pregnant=False), short_luteal_phase),
    K.PROLONGED_BLEEDING: (Scope(CHARTING, when_pregnant=True), prolonged_bleeding),
    K.PERIOD_OVERDUE: (Scope(MONITORED, when_pregnant=False), period_overdue),
    K.SUSTAINED_HIGH_TEMPS: (Scope(CHARTING, when_pregnant=False, needs_temps=True), sustained_high_temps),
    K.AMENORRHOEA: (Scope(MONITORED, when_pregnant=False), amenorrhoea),
    K.HCG_RISE_LOW: (Scope(CHARTING, when_pregnant=True), hcg_rise_low),
    K.MULTIPLE_FOLLICLES: (Scope(CHARTING, when_pregnant=False), multiple_follicles),
    K.LOGGING_GAP: (Scope(MONITORED, when_pregnant=False), logging_gap),
    K.FEVER: (Scope(CHARTING, when_pregnant=True), fever),
    K.INTERMENSTRUAL_BLEEDING: (Scope(CHARTING, when_pregnant=False), intermenstrual_bleeding),
    K.BLEEDING_IN_PREGNANCY: (Scope(CHARTING, when_pregnant=True), bleeding_in_pregnancy),
}


def scope_of(kind: str) -> Scope:
    return RULES[AlertKind(kind)][0]


def evaluate(
    patient: Patient, analysis: Analysis, observations: list[Observation], today: date, protocol: Protocol
) -> list[Candidate]:
    """Every candidate of every rule that applies to this patient, one per key."""
    facts = Facts(patient, analysis, observations, today, protocol)
    found: dict[str, Candidate] = {}
    for scope, rule in RULES.values():
        if skip_reason(scope, patient, analysis) is None:
            for candidate in rule(facts):
                found[candidate.key] = candidate
    return list(found.values())


__all__ = [
    "ALERT_KINDS", "CAUTION", "CLINICAL_KINDS", "ROUTINE_KINDS", "RULES", "AlertKind", "Candidate", "Facts",
    "evaluate", "is_clinical", "risk_rank", "scope_of", "triage_key",
]  # fmt: skip
