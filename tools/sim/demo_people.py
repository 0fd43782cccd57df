"""The invented clinic and its staff for the demo caseload. Every name here is made up."""

from __future__ import annotations

from caseload.core.model import Role, Staff

CLINIC_NAME = "Wrenfield Fertility Service"
CLINIC_TIMEZONE = "Europe/London"
DEMO_ADMIN = "lars"

STAFF: tuple[Staff, ...] = (
    Staff("ines", "Inês Carvalho", Role.NURSE),
    Staff("tomasz", "Tomasz Wróbel", Role.NURSE),
    Staff("amara", "Amara Okafor", Role.NURSE),
    Staff("ruth", "Ruth Abernethy", Role.PHONE),
    Staff("kofi", "Kofi Mensah", Role.PHONE),
    Staff("hana", "Hana Sato", Role.SUPERVISOR),
    Staff(DEMO_ADMIN, "Lars Eriksen", Role.ADMIN),
)
NURSES = tuple(s.id for s in STAFF if s.role is Role.NURSE)
PHONE_LINE = tuple(s.id for s in STAFF if s.role is Role.PHONE)
