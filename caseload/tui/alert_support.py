"""The alert service, when this installation has it, and who may handle which alert."""

from __future__ import annotations

import importlib
from types import ModuleType

from caseload.core.model import Alert
from caseload.tui.gate import StoreGate

VERBS = ("acknowledge", "snooze", "resolve")


def alerts_service() -> ModuleType | None:
    try:
        return importlib.import_module("caseload.services.alerts")
    except ModuleNotFoundError:
        return None


def may_handle(gate: StoreGate, alert: Alert) -> bool:
    """Clinical alerts need a clinical role; routine ones anyone may handle (the service checks again)."""
    service = alerts_service()
    if service is None:
        return False
    return gate.may("alert.handle" if service.is_clinical(alert.kind) else "alert.handle-routine")


def note_required(alert: Alert) -> bool:
    service = alerts_service()
    return service is not None and service.is_clinical(alert.kind)
