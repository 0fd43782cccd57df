"""Build the invented demo caseload from the seed files shipped in the package, dated relative to the day it is built."""

from __future__ import annotations

import csv
import json
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta
from importlib import resources
from pathlib import Path
from zoneinfo import ZoneInfo

from caseload.core.model import Actor, Patient, PatientStatus, Plan, Role, Staff
from caseload.core.parse import parse_entry
from caseload.application.context import Context
from caseload.application.recompute import refresh_all
from caseload.application.protocol import load_protocol
from caseload.store import Store
from caseload.store.bulk_load import NewEntry

SEED_DIR = resources.files("caseload") / "seed_data"


@dataclass(frozen=True)
class Demo:
    store: Store
    clinic: str
    staff: list[Staff]
    patients: int
    entries: int
    admin: Actor


def _clinic() -> dict:
    return json.loads((SEED_DIR / "clinic.json").read_text(encoding="utf-8"))


def clinic_timezone() -> str:
    return _clinic()["timezone"]


def _rows(name: str) -> list[dict]:
    with (SEED_DIR / name).open(newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


def _logged_at(day: date, at: str | None, zone: ZoneInfo) -> datetime:
    clock = time.fromisoformat(at) if at else time(9, 30)
    return datetime.combine(day, clock, zone)


def build_demo(path: Path, today: date, account: str) -> Demo:
    """A fresh demo store at `path`; the OS account that builds it maps to the demo's admin."""
    clinic = _clinic()
    zone = ZoneInfo(clinic["timezone"])
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    store = Store(path)
    staff = [
        Staff(r["id"], r["name"], Role(r["role"]), True, account if r["id"] == clinic["demo_admin"] else None)
        for r in _rows("staff.csv")
    ]
    by_id = {s.id: Actor(s, account) for s in staff}
    admin = by_id[clinic["demo_admin"]]
    patients = [
        Patient(
            id=r["id"],
            name=r["name"],
            born=today + timedelta(days=int(r["born_offset"])),
            nurse_id=r["nurse"] or None,
            status=PatientStatus(r["status"]),
            plan=Plan(r["plan"]),
            created=today + timedelta(days=int(r["created_offset"])),
            charting_temps=r["charting_temps"] == "1",
        )
        for r in _rows("patients.csv")
    ]
    entry_rows = _rows("entries.csv")

    with store.atomic(today):
        store.set_meta("timezone", clinic["timezone"])
        store.set_meta("clinic", clinic["name"])
        store.set_meta("pseudonym_secret", "demo-" + clinic["name"])
    store.bulk.staff(admin, staff)
    store.bulk.patients(admin, patients)
    items, voids = _entries(entry_rows, by_id, today, zone, store.bulk.next_entry_id())
    store.bulk.entries(items)
    for actor, entry_id, reason, at in voids:
        with store.clock_at(at), store.atomic(at.astimezone(zone).date()):
            store.entries.void(actor, store.entries.get(entry_id), reason)
    ctx = Context(store, admin, today, load_protocol(store))
    refresh_all(ctx)
    return Demo(store, clinic["name"], staff, len(patients), len(items), admin)


def _entries(rows: list[dict], by_id: dict[str, Actor], today: date, zone: ZoneInfo, first_id: int):
    """The seed rows as entries with ids and logging times, and the voids to record after them."""
    items: list[NewEntry] = []
    voids: list[tuple[Actor, int, str, datetime]] = []
    last: dict[tuple[str, str, str], int] = {}
    for entry_id, r in enumerate(rows, start=first_id):
        day = today + timedelta(days=int(r["day_offset"]))
        parsed = parse_entry(r["kind"], r["value"], today, on=day.isoformat(), at=r["time"] or None,
                             flags=r["flags"].replace(";", ","), note=r["note"])
        actor, at = by_id[r["by"]], _logged_at(day, r["time"], zone)
        key = (r["patient"], r["day_offset"], r["kind"])
        corrects = last[key] if r["amend_reason"] else None
        items.append(NewEntry(entry_id, actor, r["patient"], parsed, at, corrects, r["amend_reason"] or None))
        last[key] = entry_id
        if r["void_reason"]:
            voids.append((actor, entry_id, r["void_reason"], at + timedelta(minutes=20)))
    return items, voids
