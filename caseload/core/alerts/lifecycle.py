"""An alert's life: open -> acknowledged -> resolved, snoozed until a day, auto-resolved when the
condition ends, escalated when the evidence worsens. Pure: it decides, the services write.

A key names the episode an alert is about (the cycle, the bleed, the hCG pair, the scan, the gap,
the reading day, the run of abnormal cycles), and at most one alert per key is unresolved. An alert
the rules resolved is raised again, as a new row, when its condition comes back (a new episode has
a new key; the same episode comes back after a correction); one a person resolved stays resolved
for its episode unless the evidence worsens. A candidate that is only held (not raisable) keeps an
alert alive but never raises or escalates one.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace
from datetime import date, timedelta

from caseload.core.alerts import AlertKind, Candidate, Facts, scope_of
from caseload.core.alerts.base import skip_reason
from caseload.core.alerts.window import open_threshold, p_today
from caseload.core.model import Alert, AlertState, Severity
from caseload.core.parse import InputError, one_line

OPEN, ACKNOWLEDGED = AlertState.OPEN, AlertState.ACKNOWLEDGED
SNOOZED, RESOLVED = AlertState.SNOOZED, AlertState.RESOLVED
# Staff actions: the target state and the states it may be reached from.
ALLOWED_FROM: dict[AlertState, frozenset[AlertState]] = {
    ACKNOWLEDGED: frozenset({OPEN, SNOOZED}),
    SNOOZED: frozenset({OPEN, ACKNOWLEDGED, SNOOZED}),
    RESOLVED: frozenset({OPEN, ACKNOWLEDGED, SNOOZED}),
}
# How far off an alert may be snoozed, by its severity: an urgent one until the next serial hCG at
# most (48 h apart, Barnhart 2004), one for today a week, the others a month or a quarter (common
# practice). Further off is a resolve in disguise, or a mistyped year.
SNOOZE_DAYS_MAX: dict[Severity, int] = {Severity.URGENT: 2, Severity.TODAY: 7, Severity.SOON: 30, Severity.INFO: 90}
# Kinds whose rule looks only at the current cycle: a new day 1 ends them.
CURRENT_CYCLE_KINDS = frozenset(
    {
        AlertKind.WINDOW_APPROACHING, AlertKind.WINDOW_OPEN, AlertKind.NO_THERMAL_SHIFT, AlertKind.PERIOD_OVERDUE,
        AlertKind.SUSTAINED_HIGH_TEMPS, AlertKind.AMENORRHOEA, AlertKind.LOGGING_GAP, AlertKind.HCG_RISE_LOW,
        AlertKind.MULTIPLE_FOLLICLES, AlertKind.BLEEDING_IN_PREGNANCY,
    }
)  # fmt: skip
# Kinds whose alert hands over to the next kind's as the cycle moves on: the window approaching
# becomes the window open. Such a resolution is a hand-over, not an alert leaving the lists.
HANDS_OVER_TO = {AlertKind.WINDOW_APPROACHING: AlertKind.WINDOW_OPEN}


@dataclass(frozen=True)
class SyncPlan:
    """What a refresh changes for one patient."""

    raises: tuple[Candidate, ...]
    escalations: tuple[tuple[Alert, Candidate], ...]
    reopens: tuple[Alert, ...]  # snoozed until a day that has come
    resolutions: tuple[tuple[Alert, str], ...]  # with the reason, "auto: ..."

    @property
    def vanishing(self) -> int:
        """Auto-resolutions not replaced by a new alert of the same kind (an episode re-keyed, a
        cycle's alert handing over to the next) or of the kind it hands over to (`HANDS_OVER_TO`):
        the alerts that leave the lists."""
        replaced = {c.kind for c in self.raises}
        return sum(
            1 for alert, _ in self.resolutions
            if alert.kind not in replaced and HANDS_OVER_TO.get(alert.kind) not in replaced
        )  # fmt: skip

    @property
    def empty(self) -> bool:
        return not (self.raises or self.escalations or self.reopens or self.resolutions)


def effective(alert: Alert, today: date) -> Alert:
    """The alert as the lists show it: snoozed until a day that has come counts as open."""
    if alert.state is SNOOZED and alert.snooze_until is not None and alert.snooze_until <= today:
        return replace(alert, state=OPEN)
    return alert


def plan_sync(existing: list[Alert], candidates: list[Candidate], facts: Facts) -> SyncPlan:
    """Compare the patient's stored alerts (all of them, resolved ones too) with today's candidates."""
    latest = {a.key: a for a in sorted(existing, key=lambda a: a.id)}
    found = {c.key: c for c in candidates}
    raises = tuple(c for c in candidates if c.raisable and raised_again(latest.get(c.key), c))
    escalations, reopens, resolutions = [], [], []
    for alert in existing:
        if alert.state is RESOLVED:
            continue
        candidate = found.get(alert.key)
        if candidate is None:
            resolutions.append((alert, "auto: " + ended_reason(alert, facts)))
        elif candidate.raisable and candidate.severity.rank < alert.severity.rank:
            escalations.append((alert, candidate))
        elif effective(alert, facts.today) is not alert:
            reopens.append(alert)
    return SyncPlan(raises, tuple(escalations), tuple(reopens), tuple(resolutions))


def auto_resolved(alert: Alert) -> bool:
    """Resolved by the rules (the condition ended), not by a person."""
    return alert.state is RESOLVED and (alert.resolved_reason or "").startswith("auto: ")


def raised_again(previous: Alert | None, candidate: Candidate) -> bool:
    """Whether a raisable candidate raises a new alert, given the key's latest stored alert: none
    yet; the condition came back after the rules resolved it; or worse than when a person resolved it."""
    if previous is None:
        return True
    if previous.state is not RESOLVED:
        return False
    return auto_resolved(previous) or candidate.severity.rank < previous.severity.rank


def ended_reason(alert: Alert, facts: Facts) -> str:
    """Why the condition behind an alert no longer holds, in a few words."""
    analysis = facts.analysis
    skipped = skip_reason(scope_of(alert.kind), facts.patient, analysis)
    if skipped:
        return skipped
    kind, current = AlertKind(alert.kind), analysis.current
    start = alert.evidence.get("cycle_start")
    if kind in CURRENT_CYCLE_KINDS and start and (current is None or current.start.isoformat() != start):
        if current is not None and current.start.isoformat() > start:
            return f"a period started on {current.start.isoformat()}"
        return "the cycle's day 1 changed after a correction"
    last = analysis.last_entry_day
    if kind is AlertKind.LOGGING_GAP and last is not None and last.isoformat() >= alert.evidence["gap_start"]:
        return f"an entry was logged for {last.isoformat()}"
    windows = (AlertKind.WINDOW_APPROACHING, AlertKind.WINDOW_OPEN)
    if kind in (*windows, AlertKind.NO_THERMAL_SHIFT) and current is not None and current.shift.confirmed:
        return f"thermal shift confirmed on {current.shift.confirmed_on.isoformat()}"
    if kind is AlertKind.NO_THERMAL_SHIFT and current is not None and current.shift.agreement == "uncertain":
        split = current.shift.change_point.split_on.isoformat()
        return f"the change-point estimate now sees a rise from {split} (shift uncertain)"
    if kind is AlertKind.WINDOW_APPROACHING and current is not None and current.markers.lh_surge is not None:
        return f"LH surge logged on {current.markers.lh_surge.isoformat()}: the window is open"
    if kind in windows and analysis.prediction is not None:
        chance = p_today(analysis.prediction)
        opened = kind is AlertKind.WINDOW_APPROACHING and chance >= open_threshold(analysis.prediction, facts.protocol)
        return f"the window {'opened' if opened else 'has passed'} (P(fertile) today {chance:.0%})"
    if kind is AlertKind.IRREGULAR_CYCLES:
        c = analysis.classification
        if c.frequency in ("frequent", "infrequent") or c.regularity == "irregular":
            return "the finding goes on in the alert keyed on the first cycle of its run"
        return f"cycles now classify as frequency {c.frequency}, regularity {c.regularity} (FIGO 2018)"
    return "the entries behind it were corrected or voided"


def parse_future_day(text: str, today: date, severity: Severity) -> date:
    """The day an alert of `severity` is snoozed until: YYYY-MM-DD, 'tomorrow' or '+N' (days ahead),
    after today and at most its SNOOZE_DAYS_MAX away."""
    t = (text or "").strip().lower()
    day = None
    if t == "tomorrow":
        day = today + timedelta(days=1)
    elif re.fullmatch(r"\+\d{1,3}", t):
        day = today + timedelta(days=int(t[1:]))
    elif re.fullmatch(r"\d{4}-\d{2}-\d{2}", t):
        try:
            day = date.fromisoformat(t)
        except ValueError:
            day = None
    if day is None:
        raise InputError(f"day '{one_line(text or '')}' not understood: use YYYY-MM-DD, tomorrow or +N (days ahead)")
    if day <= today:
        raise InputError(f"{day.isoformat()} is not after today ({today.isoformat()}): give a later day")
    most, away = SNOOZE_DAYS_MAX[severity], (day - today).days
    if away > most:
        raise InputError(f"{day.isoformat()} is {away} days away: an alert of severity {severity.value} is snoozed at "
                         f"most {most} days; acknowledge or resolve it instead")
    return day
