"""Registering patients and changing their plan, status or nurse."""

from __future__ import annotations

import re
from dataclasses import replace
from datetime import date

from caseload.core.model import Patient, PatientStatus, Plan, Role
from caseload.core.parse import one_line, parse_birth_date, parse_choice, parse_id, parse_name
from caseload.application.context import Context
from caseload.application.recompute import refresh_patient
from caseload.application.errors import NotFound, Refused
from caseload.application.staff import get_staff


def get_patient(ctx: Context, patient_id: str) -> Patient:
    """The patient an id names, typed in any letter case (a clerk hears "p 103", not its case). Where
    an older store holds ids that differ only in case, the id typed exactly still names its own
    patient, and one typed otherwise is refused rather than guessed."""
    typed = patient_id.strip()
    found = ctx.store.patients.any_case(typed)
    exact = [p for p in found if p.id == typed]
    if exact or len(found) == 1:
        return (exact or found)[0]
    if found:
        raise Refused(f"patient id '{one_line(typed)}' could be {' or '.join(p.id for p in found)}, registered"
                      " before ids were unique whatever their case: type the id exactly as registered")
    raise NotFound(f"no patient '{patient_id}': see 'caseload list'")


NUMBERED_ID = re.compile(r"^(?P<prefix>[A-Za-z]*)(?P<number>\d+)$")
FIRST_ID = "P0001"


def proposed_id(taken: list[str]) -> str:
    """The id to offer for the next registration: the highest numbered id (letters then digits, as
    P0042) plus one, with its prefix and at least its width; P0001 on an empty caseload."""
    numbered = [m for m in map(NUMBERED_ID.match, taken) if m]
    if not numbered:
        return FIRST_ID
    top = max(numbered, key=lambda m: (int(m["number"]), m["prefix"]))
    # Higher than every numbered id, so it is free whatever their prefixes or letter case.
    return f"{top['prefix']}{int(top['number']) + 1:0{len(top['number'])}d}"


def next_patient_id(ctx: Context) -> str:
    return proposed_id([p.id for p in ctx.store.patients.all()])


def _nurse(ctx: Context, nurse_id: str | None) -> str | None:
    if not nurse_id:
        return None
    nurse = get_staff(ctx.store, nurse_id)
    if nurse.role is not Role.NURSE or not nurse.active:
        raise Refused(f"{nurse.id} is not an active nurse: a patient's nurse must be one")
    return nurse.id


def _refuse_taken(ctx: Context, patient_id: str) -> None:
    """Ids are unique whatever their letter case, so that no call is logged to another patient whose
    id differs only in case; the id is not changed to fit, the clerk chooses."""
    taken = [p.id for p in ctx.store.patients.any_case(patient_id)]
    if patient_id in taken:
        raise Refused(f"patient id {patient_id} is taken: choose another")
    if taken:
        raise Refused(f"patient id {patient_id} is taken as {taken[0]}: ids are unique whatever their letter case;"
                      " choose another")


def add_patient(
    ctx: Context,
    patient_id: str,
    name: str,
    born: str,
    nurse: str | None = None,
    plan: str = "natural",
    charting_temps: bool = True,
) -> Patient:
    ctx.require("patient.add")
    patient = Patient(
        id=parse_id(patient_id, "patient"),
        name=parse_name(name),
        born=parse_birth_date(born, ctx.today),
        nurse_id=_nurse(ctx, nurse),
        status=PatientStatus.ACTIVE,
        plan=parse_choice(plan, Plan, "plan"),
        created=ctx.today,
        charting_temps=charting_temps,
    )
    _refuse_taken(ctx, patient.id)
    with ctx.store.atomic(ctx.today):
        return ctx.store.patients.add(ctx.actor, patient)


def with_status(patient: Patient, status: PatientStatus, day: date) -> Patient:
    """The patient in `status`; a change of status is dated `day`, the day a pregnancy begins or
    ends by the nurse's decision."""
    if status is patient.status:
        return patient
    return replace(patient, status=status, status_since=day)


def update_patient(
    ctx: Context,
    patient_id: str,
    plan: str | None = None,
    status: str | None = None,
    nurse: str | None = None,
    charting_temps: bool | None = None,
) -> Patient:
    ctx.require("patient.update")
    before = get_patient(ctx, patient_id)
    after = before
    if plan is not None:
        after = replace(after, plan=parse_choice(plan, Plan, "plan"))
    if status is not None:
        after = with_status(after, parse_choice(status, PatientStatus, "status"), ctx.today)
    if nurse is not None:
        after = replace(after, nurse_id=_nurse(ctx, nurse))
    if charting_temps is not None:
        after = replace(after, charting_temps=charting_temps)
    with ctx.store.atomic(ctx.today):
        ctx.store.patients.update(ctx.actor, before, after)
        refresh_patient(ctx, after)
    return after
