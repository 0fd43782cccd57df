"""What every use case needs: the store, who is acting, the day it is and the clinic protocol; and
who may do what, checked by every use case whatever a front end shows or hides."""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date

from caseload.core.model import Actor, Role
from caseload.core.settings import DEFAULT_PROTOCOL, Protocol
from caseload.application.errors import Refused
from caseload.store import Store

PHONE, NURSE, SUPERVISOR, ADMIN = Role.PHONE, Role.NURSE, Role.SUPERVISOR, Role.ADMIN
EVERYONE = frozenset(Role)
CLINICAL = frozenset({NURSE, SUPERVISOR, ADMIN})

# action -> roles allowed. Phone staff log entries and register callers; nurses also correct
# entries, handle clinical alerts and change plans; supervisors also export and see every list;
# admins also manage staff, settings and backups.
MATRIX: dict[str, frozenset[Role]] = {
    "caseload.view": EVERYONE,
    "patient.show": EVERYONE,
    "patient.add": EVERYONE,
    "patient.update": CLINICAL,
    "entry.log": EVERYONE,
    "entry.amend": CLINICAL,
    "entry.void": CLINICAL,
    "entry.import": CLINICAL,
    "alert.view": EVERYONE,
    "alert.refresh": EVERYONE,
    "alert.handle": CLINICAL,
    "alert.handle-routine": EVERYONE,
    "summary.export": frozenset({SUPERVISOR, ADMIN}),
    "referral.pack": CLINICAL,
    "fhir.export": CLINICAL,
    "protocol.view": EVERYONE,
    "protocol.set": frozenset({ADMIN}),
    "staff.add": frozenset({ADMIN}),
    "staff.update": frozenset({ADMIN}),
    "store.backup": frozenset({ADMIN}),
    "store.restore": frozenset({ADMIN}),
    "store.check": frozenset({SUPERVISOR, ADMIN}),
}


# What each action is, in the words a refusal uses.
DOING: dict[str, str] = {
    "caseload.view": "view the caseload",
    "patient.show": "open a patient record",
    "patient.add": "register a patient",
    "patient.update": "change a patient's plan, status or nurse",
    "entry.log": "log entries",
    "entry.amend": "correct entries",
    "entry.void": "void entries",
    "entry.import": "import entries from CSV",
    "alert.view": "view alerts",
    "alert.refresh": "refresh alerts",
    "alert.handle": "handle clinical alerts",
    "alert.handle-routine": "handle alerts",
    "summary.export": "export the weekly summary",
    "referral.pack": "make a referral pack",
    "fhir.export": "export records as FHIR",
    "protocol.view": "view the clinic protocol",
    "protocol.set": "change the clinic protocol",
    "staff.add": "add staff",
    "staff.update": "change staff records",
    "store.backup": "back up the store",
    "store.restore": "restore the store",
    "store.check": "check the store",
}


def allowed(actor: Actor, action: str) -> bool:
    return actor.staff.active and actor.role in MATRIX[action]


def require(actor: Actor, action: str) -> None:
    if action not in MATRIX:
        raise KeyError(f"unknown action {action}")
    if not actor.staff.active:
        raise Refused(f"staff member {actor.id} is inactive and can do nothing: ask an admin")
    if actor.role not in MATRIX[action]:
        roles = " or ".join(r.value for r in Role if r in MATRIX[action])
        raise Refused(f"{actor.role.value} staff may not {DOING[action]}: it needs {roles}")


@dataclass
class Context:
    store: Store
    actor: Actor
    today: date
    protocol: Protocol = field(default=DEFAULT_PROTOCOL)

    def require(self, action: str) -> None:
        require(self.actor, action)
