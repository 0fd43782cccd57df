"""A small caseload built through the services, dated against a fixed day, for the interface tests."""

from __future__ import annotations

from dataclasses import replace
from datetime import date, timedelta
from pathlib import Path

from caseload.core.model import Actor
from caseload.core.parse import parse_entry
from caseload.application.context import Context
from caseload.application.recompute import refresh_all, refresh_patient
from caseload.application.patients import add_patient, update_patient
from caseload.application.staff import add_staff, init_store
from caseload.store import Store

TODAY = date(2026, 12, 1)
ACCOUNTS = {"ada": "ada-os", "nell": "nell-os", "nora": "nora-os", "phil": "phil-os", "sue": "sue-os"}
# Markup and an escape character in a name: kept by a store written before names holding control
# characters were refused (see `keep_odd_name`), and shown inert.
ODD_NAME = "Mara [bold]Holm\x1b[31m"
FLOWS = ("moderate", "heavy", "moderate", "light", "light")
CYCLE = 28
OVULATION_DAY = 14
LONG_DAYS = 106  # cycle day today of the long cycle `add_long_cycle` adds
FLAGGED_DAY, FEVER_DAY = 60, 80


def cycle_rows(start: date, until: date, last_entry: date | None = None) -> list[tuple[str, str, date]]:
    """(kind, value, day) for a textbook 28-day cycle from `start` up to `until` (inclusive)."""
    rows = []
    day = start
    while day <= min(until, last_entry or until):
        cd = (day - start).days + 1
        if cd <= len(FLOWS):
            rows.append(("bleed", FLOWS[cd - 1], day))
        low = 36.40 + (0.04 if cd % 3 == 0 else 0.0)
        rows.append(("temp", f"{low + (0.40 if cd > OVULATION_DAY else 0.0):.2f}", day))
        day += timedelta(days=1)
    return rows


def history(current_start: date, cycles: int) -> list[tuple[str, str, date]]:
    rows = []
    for n in range(cycles, 0, -1):
        start = current_start - timedelta(days=CYCLE * n)
        rows += cycle_rows(start, start + timedelta(days=CYCLE - 1))
    return rows


def build(path: Path) -> Store:
    store = Store(path)
    admin = init_store(store, "ada", "Ada Admin", ACCOUNTS["ada"])
    ctx = Context(store, admin, TODAY)
    add_staff(ctx, "nell", "Nell Nurse", "nurse", ACCOUNTS["nell"])
    add_staff(ctx, "nora", "Nora Nurse", "nurse", ACCOUNTS["nora"])
    add_staff(ctx, "phil", "Phil Phone", "phone", ACCOUNTS["phil"])
    add_staff(ctx, "sue", "Sue Supervisor", "supervisor", ACCOUNTS["sue"])
    add_staff(ctx, "pat", "Pat Newcomer", "phone")  # no OS account yet: waits at sign-in for an admin to map it
    nurse = Context(store, Actor(store.staff.get("nell"), ACCOUNTS["nell"]), TODAY)
    plan = {
        "P0001": ("Pia Test", "nell", "natural", history(TODAY - timedelta(days=17), 4) + cycle_rows(TODAY - timedelta(days=17), TODAY)),
        "P0002": ("Rosa Lind", "nell", "timed", history(TODAY - timedelta(days=9), 3) + cycle_rows(TODAY - timedelta(days=9), TODAY)),
        "P0003": (ODD_NAME, "nora", "natural", cycle_rows(TODAY - timedelta(days=4), TODAY)),
        "P0004": ("Noor Haddad", "nora", "insemination",
                  cycle_rows(TODAY - timedelta(days=19), TODAY, last_entry=TODAY - timedelta(days=5))),
        "P0005": ("Dana Gone", "nora", "natural", []),
    }
    for pid, (name, nurse_id, plan_word, rows) in plan.items():
        if name == ODD_NAME:
            keep_odd_name(nurse, pid, nurse_id, plan_word)
        else:
            add_patient(nurse, pid, name, "1992-05-17", nurse=nurse_id, plan=plan_word)
        store.transact(lambda rows=rows, pid=pid: [
            store.entries.add(nurse.actor, pid, parse_entry(kind, value, TODAY, on=day.isoformat()))
            for kind, value, day in rows
        ])
    # A fever reading yesterday on P0002 replaces that day's ordinary one.
    store.transact(lambda: store.entries.add(
        nurse.actor, "P0002", parse_entry("temp", "38.3", TODAY, on=(TODAY - timedelta(days=1)).isoformat()),
        supersedes=store.entries.current_on("P0002", TODAY - timedelta(days=1), parse_entry("temp", "36.5", TODAY).kind)[0].id,
        amend_reason="reading phoned in again",
    ))
    update_patient(nurse, "P0005", status="discharged")
    refresh_all(ctx)
    return store


def keep_odd_name(ctx: Context, patient_id: str, nurse_id: str, plan: str) -> None:
    """Registers the patient as a clerk can (the name without its escape), then gives her ODD_NAME in
    the store, as a store written before the name rule holds it."""
    patient = add_patient(ctx, patient_id, ODD_NAME.replace("\x1b", ""), "1992-05-17", nurse=nurse_id, plan=plan)
    with ctx.store.atomic(ctx.today):
        ctx.store.patients.update(ctx.actor, patient, replace(patient, name=ODD_NAME))


def add_long_cycle(ctx) -> None:
    """P0006: a 29-day cycle, then one on day 106 today with no rise, a reading flagged as
    disturbed on day 60 and a fever on day 80."""
    add_patient(ctx, "P0006", "Lena Long", "1990-03-02", nurse="nell", plan="natural")
    start = TODAY - timedelta(days=LONG_DAYS - 1)
    rows: list[tuple[str, str, date, tuple[str, ...]]] = []
    for first, length in ((start - timedelta(days=29), 29), (start, LONG_DAYS)):
        for cd in range(1, length + 1):
            day = first + timedelta(days=cd - 1)
            if cd <= 4:
                rows.append(("bleed", ("heavy", "moderate", "light", "light")[cd - 1], day, ()))
            celsius = 36.35 + 0.05 * (cd % 4)
            flags = ("illness",) if first == start and cd == FLAGGED_DAY else ()
            if first == start and cd == FEVER_DAY:
                celsius = 38.4
            rows.append(("temp", f"{celsius + (0.3 if flags else 0):.2f}", day, flags))
            if cd % 2 == 0:
                rows.append(("mucus", "sticky", day, ()))
    store = ctx.store
    store.transact(lambda: [
        store.entries.add(ctx.actor, "P0006", parse_entry(kind, value, TODAY, on=day.isoformat(), flags=flags))
        for kind, value, day, flags in rows
    ])
    with store.atomic(ctx.today):
        refresh_patient(ctx, store.patients.get("P0006"))
