"""Who may handle which alert, as the interface offers it (the alert service checks again)."""

from __future__ import annotations

from caseload.core.model import Alert
from caseload.application.alert_handling import is_clinical
from caseload.tui.gate import StoreGate


def may_handle(gate: StoreGate, alert: Alert) -> bool:
    """Clinical alerts need a clinical role; routine ones anyone may handle."""
    return gate.may("alert.handle" if is_clinical(alert.kind) else "alert.handle-routine")


def note_required(alert: Alert) -> bool:
    return is_clinical(alert.kind)
