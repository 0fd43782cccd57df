"""Registering patients and changing their plan, status or nurse."""

from __future__ import annotations

from dataclasses import replace

from caseload.core.model import Patient, PatientStatus, Plan, Role
from caseload.core.parse import parse_birth_date, parse_choice, parse_id, parse_name
from caseload.application.context import Context
from caseload.application.recompute import refresh_patient
from caseload.application.errors import NotFound, Refused
from caseload.application.staff import get_staff


def get_patient(ctx: Context, patient_id: str) -> Patient:
    patient = ctx.store.patients.get(patient_id.strip())
    if patient is None:
        raise NotFound(f"no patient '{patient_id}': see 'caseload list'")
    return patient


def _nurse(ctx: Context, nurse_id: str | None) -> str | None:
    if not nurse_id:
        return None
    nurse = get_staff(ctx.store, nurse_id)
    if nurse.role is not Role.NURSE or not nurse.active:
        raise Refused(f"{nurse.id} is not an active nurse: a patient's nurse must be one")
    return nurse.id


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
    if ctx.store.patients.get(patient.id):
        raise Refused(f"patient id {patient.id} is taken: choose another")
    with ctx.store.atomic(ctx.today):
        return ctx.store.patients.add(ctx.actor, patient)


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
        after = replace(after, status=parse_choice(status, PatientStatus, "status"))
        if after.status is not before.status:
            # The day a pregnancy begins or ends by the nurse's decision.
            after = replace(after, status_since=ctx.today)
    if nurse is not None:
        after = replace(after, nurse_id=_nurse(ctx, nurse))
    if charting_temps is not None:
        after = replace(after, charting_temps=charting_temps)
    with ctx.store.atomic(ctx.today):
        ctx.store.patients.update(ctx.actor, before, after)
        refresh_patient(ctx, after)
    return after
