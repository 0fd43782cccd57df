"""Keeping a patient's stored alerts in step with the alert rules."""

from __future__ import annotations

from caseload.core.analysis import Analysis
from caseload.core.model import Alert, Entry, Patient
from caseload.services.context import Context


def sync_alerts(ctx: Context, patient: Patient, analysis: Analysis, entries: list[Entry]) -> tuple[list[Alert], int]:
    """Raise new alerts, escalate worse ones, auto-resolve ended ones; returns (raised, resolved count)."""
    return [], 0
