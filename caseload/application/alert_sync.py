"""Keeping a patient's stored alerts in step with the alert rules, inside the caller's write."""

from __future__ import annotations

from caseload.core.alerts import Facts, evaluate
from caseload.core.alerts.lifecycle import plan_sync
from caseload.core.analysis import Analysis
from caseload.core.model import Alert, Observation, Patient
from caseload.application.context import Context


def sync_alerts(
    ctx: Context, patient: Patient, analysis: Analysis, seen: list[Observation]
) -> tuple[list[Alert], int]:
    """Raise new alerts, escalate worse ones, reopen snoozes whose day has come, auto-resolve ended
    ones; returns (raised or escalated, auto-resolved count). Writes nothing when nothing changed.
    `seen` are the observations `analysis` was computed from."""
    candidates = evaluate(patient, analysis, seen, ctx.today, ctx.protocol)
    existing = ctx.store.alerts.for_patient(patient.id)
    plan = plan_sync(existing, candidates, Facts(patient, analysis, seen, ctx.today, ctx.protocol))
    if plan.empty:
        return [], 0
    table, actor = ctx.store.alerts, ctx.actor
    for alert, reason in plan.resolutions:
        table.auto_resolve(actor, alert, reason)
    for alert in plan.reopens:
        table.reopen(actor, alert)
    raised = [table.escalate(actor, alert, c) for alert, c in plan.escalations]
    raised += [table.raise_alert(actor, c, ctx.today) for c in plan.raises]
    return raised, len(plan.resolutions)
