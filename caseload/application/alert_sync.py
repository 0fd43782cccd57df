"""Keeping a patient's stored alerts in step with the alert rules: plan from the stored alerts,
then write the plan inside the caller's write."""

from __future__ import annotations

from caseload.core.alerts import Facts, evaluate
from caseload.core.alerts.lifecycle import SyncPlan, plan_sync
from caseload.core.analysis import Analysis
from caseload.core.model import Alert, Observation, Patient
from caseload.application.context import Context


def plan_alerts(ctx: Context, patient: Patient, analysis: Analysis, seen: list[Observation]) -> SyncPlan:
    """What today's rules change in the patient's stored alerts; reads, writes nothing.
    `seen` are the observations `analysis` was computed from."""
    candidates = evaluate(patient, analysis, seen, ctx.today, ctx.protocol)
    existing = ctx.store.alerts.for_patient(patient.id)
    return plan_sync(existing, candidates, Facts(patient, analysis, seen, ctx.today, ctx.protocol))


def apply_plan(ctx: Context, plan: SyncPlan) -> list[Alert]:
    """Inside the caller's write: auto-resolve ended alerts, reopen snoozes whose day has come,
    escalate worse ones, raise new ones (and ones whose condition came back); returns the raised
    or escalated alerts."""
    table, actor = ctx.store.alerts, ctx.actor
    for alert, reason in plan.resolutions:
        table.auto_resolve(actor, alert, reason)
    for alert in plan.reopens:
        table.reopen(actor, alert)
    raised = [table.escalate(actor, alert, c) for alert, c in plan.escalations]
    return raised + [table.raise_alert(actor, c, ctx.today) for c in plan.raises]


def sync_alerts(
    ctx: Context, patient: Patient, analysis: Analysis, seen: list[Observation]
) -> tuple[list[Alert], int]:
    """Plan and write in one go; returns (raised or escalated, auto-resolved count)."""
    plan = plan_alerts(ctx, patient, analysis, seen)
    return apply_plan(ctx, plan), len(plan.resolutions)
