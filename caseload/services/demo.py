"""Build the invented demo caseload from seed_data/, dated relative to the day it is built."""

from __future__ import annotations

import csv
import json
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

from caseload.core.model import Actor, Patient, PatientStatus, Plan, Role, Staff
from caseload.core.parse import parse_entry
from caseload.services.context import Context
from caseload.services.derived import refresh_all
from caseload.services.protocol import load_protocol
from caseload.store import Store
from caseload.store.db import utc_now

SEED_DIR = Path(__file__).resolve().parents[2] / "seed_data"


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
    with open(SEED_DIR / name, newline="", encoding="utf-8") as f:
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

    def load() -> int:
        store.db.set_meta("timezone", clinic["timezone"])
        store.db.set_meta("clinic", clinic["name"])
        store.db.set_meta("pseudonym_secret", "demo-" + clinic["name"])
        for s in staff:
            store.staff.add(admin, s)
        for p in patients:
            store.patients.add(admin, p)
        last: dict[tuple[str, str, str], int] = {}
        for r in entry_rows:
            day = today + timedelta(days=int(r["day_offset"]))
            parsed = parse_entry(r["kind"], r["value"], today, on=day.isoformat(), at=r["time"] or None,
                                 flags=r["flags"].replace(";", ","), note=r["note"])
            actor = by_id[r["by"]]
            store.db.clock = lambda d=day, t=r["time"]: _logged_at(d, t, zone)
            key = (r["patient"], r["day_offset"], r["kind"])
            if r["amend_reason"]:
                entry = store.entries.add(actor, r["patient"], parsed, supersedes=last[key], amend_reason=r["amend_reason"])
            else:
                entry = store.entries.add(actor, r["patient"], parsed)
            last[key] = entry.id
            if r["void_reason"]:
                store.entries.void(actor, entry, r["void_reason"])
        return len(entry_rows)

    try:
        count = store.transact(load)
    finally:
        store.db.clock = utc_now
    ctx = Context(store, admin, today, load_protocol(store))
    refresh_all(ctx)
    return Demo(store, clinic["name"], staff, len(patients), count, admin)
