"""Build the invented demo caseload from the seed files shipped in the package, dated relative to the day it is built.

The demo is the invented clinic's history, replayed in time order: staff join when the clinic
opens, patients are registered on their own days by their nurse, the phone line logs each day's
readings when the patient calls, nurses log treatment and corrections, status changes happen on
their days, and over the last weeks the alert rules run twice a week at midday while staff
acknowledge, snooze and resolve what they raise, with notes. Every audit row carries the invented
moment it describes. All times come from the seed and a checksum of it, so a build is deterministic.
"""

from __future__ import annotations

import csv
import heapq
import json
import zlib
from collections.abc import Callable
from dataclasses import dataclass, replace
from datetime import UTC, date, datetime, time, timedelta
from importlib import resources
from pathlib import Path
from zoneinfo import ZoneInfo

from caseload.core.alerts import is_clinical
from caseload.core.alerts.lifecycle import ALLOWED_FROM, effective
from caseload.core.model import Actor, Alert, AlertState, Kind, Patient, PatientStatus, Plan, Role, Staff
from caseload.core.parse import ParsedEntry, parse_entry
from caseload.application.context import Context
from caseload.application.patients import with_status
from caseload.application.recompute import refresh_all, refresh_patient
from caseload.application.protocol import load_protocol
from caseload.application.errors import Refused
from caseload.application.identity import running_service
from caseload.store import Store, StoreError
from caseload.store.bulk_load import NewEntry, prepare_entries
from caseload.store.db import utc_now

SEED_DIR = resources.files("caseload") / "seed_data"
REPLAY_WEEKS = 9  # the alert rules run over the weeks before the build day's week: 8 summaries and a lead-in
REFRESH_DAYS = (0, 3)  # the nurses run the alert rules on Monday and Thursday,
REFRESH_AT = time(13, 0)  # after the morning's calls
HISTORY_ENDS = time(7, 30)  # on the build day the history stops here, with a last refresh
PHONE_CALLS = (time(8, 0), 240)  # the phone line's morning: opens, and minutes of calls
NURSE_DAY = (time(9, 30), 420)
CLOSES = time(17, 30)
NURSE_KINDS = frozenset({Kind.MED, Kind.SCAN, Kind.TRIGGER, Kind.INSEMINATION})
# Minutes from an alert's raising to its acknowledgement, by severity: (least, spread).
ACK_DELAY = {"urgent": (10, 35), "today": (40, 200), "soon": (90, 300), "info": (120, 360)}
ACK_NOTES = {
    "window-approaching": "called her: timing plan for the coming days agreed",
    "window-open": "called her: fertile window confirmed, plan for the next two days agreed",
    "no-thermal-shift": "asked her to keep charting and to test LH daily; review on day 30",
    "monophasic-cycle": "discussed an anovulatory cycle with her; day-21 progesterone booked next cycle",
    "irregular-cycles": "referred to the gynaecology clinic for irregular cycles; letter sent",
    "short-luteal-phase": "luteal phase reviewed with her; progesterone check booked next cycle",
    "prolonged-bleeding": "phoned her: bleeding reviewed against the protocol, seen by the doctor today",
    "period-overdue": "asked her to do a urine pregnancy test and call back",
    "sustained-high-temps": "asked her to do a urine pregnancy test and call back",
    "amenorrhoea": "appointment booked with the doctor for amenorrhoea",
    "hcg-rise-low": "doctor informed; repeat serum hCG and scan booked per protocol",
    "multiple-follicles": "doctor informed; trigger withheld, advised to avoid intercourse this cycle",
    "fever": "phoned her: illness noted, readings this week set aside; to see her GP if it persists",
    "logging-gap": "left her a voicemail to resume logging",
    "intermenstrual-bleeding": "phoned her: mid-cycle bleeding reviewed; smear history checked, seen by the doctor",
    "bleeding-in-pregnancy": "phoned her: bleeding reviewed per protocol; early pregnancy unit scan booked",
}
RESOLVE_NOTES = {
    "window-approaching": "window passed; plan followed",
    "window-open": "window passed; plan followed",
    "no-thermal-shift": "rise seen later in the cycle",
    "monophasic-cycle": "reviewed at clinic; next cycle monitored",
    "irregular-cycles": "seen in gynaecology clinic; plan in her notes",
    "short-luteal-phase": "reviewed at clinic; progesterone check booked",
    "prolonged-bleeding": "bleeding settled",
    "period-overdue": "test negative; period started",
    "sustained-high-temps": "test result logged and reviewed",
    "amenorrhoea": "seen by the doctor; plan in her notes",
    "hcg-rise-low": "repeat results reviewed by the doctor",
    "multiple-follicles": "cycle cancelled as planned; reviewed by the doctor",
    "fever": "recovered; charting as usual",
    "logging-gap": "logging again",
    "intermenstrual-bleeding": "examined at clinic; plan in her notes",
    "bleeding-in-pregnancy": "scan reviewed by the doctor; plan in her notes",
}
SNOOZE_NOTE = "she is away for a few days; to be called when back"
SNOOZE_ONE_IN = 3  # about one in three "soon" alerts is first snoozed
SNOOZE_DAYS = 3
RESOLVE_AFTER_DAYS = (1, 4)  # an acknowledged alert is resolved this many days later (least, spread)


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


def _spread(text: str, spread: int) -> int:
    """A stable number in [0, spread) for `text`: the demo's times vary, but the same on every build."""
    return zlib.crc32(text.encode("utf-8")) % spread


def _moment(day: date, start: time, minutes: int, zone: ZoneInfo) -> datetime:
    return datetime.combine(day, start, zone) + timedelta(minutes=minutes)


@dataclass(frozen=True)
class _Logged:
    """A seed entry with the moment it was logged and the seed row it corrects, if any."""

    row: int
    actor: Actor
    patient_id: str
    parsed: ParsedEntry
    at: datetime
    corrects: int | None
    amend_reason: str | None
    void: tuple[str, datetime] | None


def _logged_entries(rows: list[dict], by_id: dict[str, Actor], today: date, zone: ZoneInfo,
                    cutoff: datetime) -> list[_Logged]:
    """Each seed row logged when it plausibly was: the phone line logs a patient's day during her
    morning call, nurses log treatment during their day, a correction the day after the slip."""
    found: list[_Logged] = []
    last: dict[tuple[str, str, str], int] = {}
    for i, r in enumerate(rows):
        day = today + timedelta(days=int(r["day_offset"]))
        parsed = parse_entry(r["kind"], r["value"], today, on=day.isoformat(), at=r["time"] or None,
                             flags=r["flags"].replace(";", ","), note=r["note"])
        actor = by_id[r["by"]]
        key = (r["patient"], r["day_offset"], r["kind"])
        if r["amend_reason"]:
            start, spread = NURSE_DAY
            at = _moment(day + timedelta(days=1), start, _spread(f"amend {key}", spread), zone)
        elif actor.role is Role.NURSE or parsed.kind in NURSE_KINDS:
            start, spread = NURSE_DAY
            at = _moment(day, start, _spread(f"{key} {r['value']}", spread), zone)
        else:
            start, spread = PHONE_CALLS
            at = _moment(day, start, _spread(f"{r['patient']} {r['day_offset']}", spread), zone)
        if parsed.time:  # a reading is logged after it was taken: a few minutes to an hour later
            taken = datetime.combine(day, time.fromisoformat(parsed.time), zone)
            at = max(at, taken + timedelta(minutes=5 + _spread(f"after {key}", 55)))
        at = min(at, cutoff - timedelta(minutes=5))
        void = (r["void_reason"], at + timedelta(minutes=20)) if r["void_reason"] else None
        corrects = last[key] if r["amend_reason"] else None
        found.append(_Logged(i, actor, r["patient"], parsed, at, corrects, r["amend_reason"] or None, void))
        last[key] = i
    return found


class _Replay:
    """The clinic's history as a queue of timed events, run in time order in one transaction."""

    def __init__(self, store: Store, ctx: Context, zone: ZoneInfo, expected: dict[str, set[str]],
                 by_id: dict[str, Actor]):
        self.store, self.ctx, self.zone = store, ctx, zone
        self.expected, self.by_id = expected, by_id
        self.patients: dict[str, Patient] = {}  # registered so far, as they stand
        self.queue: list[tuple[datetime, int, Callable[[], None]]] = []
        self.seq = 0
        self.pending: list[NewEntry] = []
        self.next_id = store.bulk.next_entry_id()
        self.ids: dict[int, int] = {}  # seed row -> entry id
        self.planned: set[tuple] = set()  # (alert, state, last handled) of the alerts already planned for
        self.clerks = [a for a in by_id.values() if a.role is Role.PHONE]

    def at(self, moment: datetime, action: Callable[[], None]) -> None:
        heapq.heappush(self.queue, (moment.astimezone(UTC), self.seq, action))
        self.seq += 1

    def run(self, until: datetime) -> None:
        while self.queue and self.queue[0][0] < until:
            moment, _, action = heapq.heappop(self.queue)
            self.store.db.clock = lambda moment=moment: moment
            self.store.db.day_of_record = moment.astimezone(self.zone).date()  # each row as of its invented day
            action()
        self.flush()

    # --- entries

    def log(self, item: _Logged) -> None:
        entry_id = self.next_id
        self.next_id += 1
        self.ids[item.row] = entry_id
        supersedes = None if item.corrects is None else self.ids[item.corrects]
        self.pending.append(NewEntry(entry_id, item.actor, item.patient_id, item.parsed, item.at, supersedes,
                                     item.amend_reason))

    def flush(self) -> None:
        """Entries are written in batches, before any other write, so the audit trail stays in time order."""
        if self.pending:
            self.store.bulk.write_prepared(prepare_entries(self.pending))
            self.pending = []

    def void(self, item: _Logged) -> None:
        self.flush()
        entry_id = self.ids[item.row]
        self.store.entries.void(item.actor, self.store.entries.get(entry_id), item.void[0])

    # --- patients

    def register(self, nurse: Actor, patient: Patient) -> None:
        self.flush()
        self.store.patients.add(nurse, patient)
        self.patients[patient.id] = patient

    def move(self, nurse: Actor, patient_id: str, status: PatientStatus) -> None:
        self.flush()
        before = self.patients[patient_id]
        self.patients[patient_id] = with_status(before, status, self.store.db.day_of_record)
        self.store.patients.update(nurse, before, self.patients[patient_id])

    # --- alerts

    def refresh(self, day: date) -> None:
        """The refresh as of `day`, then staff plan their handling of what is open."""
        self.flush()
        ctx = replace(self.ctx, today=day)
        for patient in self.patients.values():
            refresh_patient(ctx, patient)
        now = self.store.db.clock()
        for alert in self.store.alerts.unresolved():
            self._plan(effective(alert, day), now)

    def _handler(self, alert: Alert) -> Actor:
        if is_clinical(alert.kind):
            return self.by_id[self.patients[alert.patient_id].nurse_id]
        return self.clerks[_spread(alert.key, len(self.clerks))]

    def _plan(self, alert: Alert, now: datetime) -> None:
        """What staff will do with an alert: acknowledge it, or snooze it for a few days (a routine one
        always, a few others once); later resolve one whose kind she is not still showing on the build day."""
        version = (alert.id, alert.state.value, alert.handled_at)
        if version in self.planned:
            return
        self.planned.add(version)
        if alert.state is AlertState.OPEN:
            least, spread = ACK_DELAY[alert.severity.value]
            when = self._working(now + timedelta(minutes=least + _spread(alert.key, spread)))
            snooze = not is_clinical(alert.kind) or (
                alert.handled_at is None and alert.severity.value == "soon" and _spread(alert.key, SNOOZE_ONE_IN) == 0)
            target = AlertState.SNOOZED if snooze else AlertState.ACKNOWLEDGED
            self.at(when, lambda: self._handle(alert.id, target))
        elif alert.state is AlertState.ACKNOWLEDGED and alert.kind not in self.expected[alert.patient_id]:
            least, spread = RESOLVE_AFTER_DAYS
            day = now.astimezone(self.zone).date() + timedelta(days=least + _spread(alert.key, spread))
            when = self._working(_moment(day, NURSE_DAY[0], _spread(f"resolve {alert.key}", NURSE_DAY[1]), self.zone))
            self.at(when, lambda: self._handle(alert.id, AlertState.RESOLVED))

    def _working(self, moment: datetime) -> datetime:
        """The moment, or the next morning's start if it falls after closing."""
        local = moment.astimezone(self.zone)
        if local.time() <= CLOSES:
            return moment
        return _moment(local.date() + timedelta(days=1), NURSE_DAY[0], local.minute, self.zone)

    def _handle(self, alert_id: int, target: AlertState) -> None:
        self.flush()
        day = self.store.db.clock().astimezone(self.zone).date()
        alert = self.store.alerts.get(alert_id)
        if effective(alert, day).state not in ALLOWED_FROM[target]:
            return  # resolved or escalated since: the next refresh plans again
        notes = {AlertState.ACKNOWLEDGED: ACK_NOTES[alert.kind], AlertState.SNOOZED: SNOOZE_NOTE,
                 AlertState.RESOLVED: RESOLVE_NOTES[alert.kind]}
        until = day + timedelta(days=SNOOZE_DAYS) if target is AlertState.SNOOZED else None
        self.store.alerts.handle(self._handler(alert), alert, target, notes[target], until)


def is_demo_store(path: Path) -> bool:
    """Whether `path` holds a demo store that opens (one built by `build_demo`)."""
    if not path.exists():
        return False
    try:
        with Store(path, must_exist=True) as existing:  # a look that makes no store of an empty file
            return existing.meta("clinic") is not None
    except StoreError:
        return False


def _refuse_real_store(path: Path) -> None:
    """Only a demo store is rebuilt: any other file at `path` is kept (it may be a clinic's store)."""
    if path.exists() and not is_demo_store(path):
        raise Refused(f"{path} exists and is not a demo store: the demo never replaces it, give another --db")


def build_demo(path: Path, today: date, account: str) -> Demo:
    """A fresh demo store at `path`; the OS account that builds it maps to the demo's admin."""
    clinic = _clinic()
    zone = ZoneInfo(clinic["timezone"])
    if running_service() is not None:
        raise Refused("the demo is built in your own account: run 'caseload demo' without the clinic's wrapper")
    _refuse_real_store(path)
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    store = Store(path)
    staff = [
        Staff(r["id"], r["name"], Role(r["role"]), True, account if r["id"] == clinic["demo_admin"] else None)
        for r in _rows("staff.csv")
    ]
    by_id = {s.id: Actor(s, account) for s in staff}
    admin = by_id[clinic["demo_admin"]]
    rows = _rows("patients.csv")
    patients = {
        r["id"]: Patient(
            id=r["id"],
            name=r["name"],
            born=today + timedelta(days=int(r["born_offset"])),
            nurse_id=r["nurse"] or None,
            status=PatientStatus.ACTIVE,  # registered active; status_changes.csv moves her on
            plan=Plan(r["plan"]),
            created=today + timedelta(days=int(r["created_offset"])),
            charting_temps=r["charting_temps"] == "1",
        )
        for r in rows
    }
    expected = {r["id"]: set(filter(None, r["expected_alerts"].split(";"))) for r in rows}
    cutoff = datetime.combine(today, HISTORY_ENDS, zone)
    opened = min(p.created for p in patients.values()) - timedelta(days=14)

    store.db.clock = lambda: _moment(opened, NURSE_DAY[0], 0, zone)
    store.transact(lambda: _set_meta(store, clinic), opened)
    store.bulk.staff(admin, staff)
    ctx = Context(store, admin, today, load_protocol(store))
    replay = _Replay(store, ctx, zone, expected, by_id)
    for p in patients.values():
        nurse = by_id[p.nurse_id]
        when = _moment(p.created, NURSE_DAY[0], _spread(f"register {p.id}", NURSE_DAY[1]), zone)
        replay.at(when, lambda nurse=nurse, p=p: replay.register(nurse, p))
    items = _logged_entries(_rows("entries.csv"), by_id, today, zone, cutoff)
    for item in items:
        replay.at(item.at, lambda item=item: replay.log(item))
        if item.void:
            replay.at(item.void[1], lambda item=item: replay.void(item))
    for r in _rows("status_changes.csv"):
        day = today + timedelta(days=int(r["day_offset"]))
        when = datetime.combine(day, time.fromisoformat(r["time"]), zone)
        replay.at(when, lambda r=r: replay.move(by_id[r["by"]], r["patient"], PatientStatus(r["status"])))
    first = today - timedelta(days=today.weekday(), weeks=REPLAY_WEEKS)
    for n in range((today - first).days):
        day = first + timedelta(days=n)
        if day.weekday() in REFRESH_DAYS:
            replay.at(datetime.combine(day, REFRESH_AT, zone), lambda day=day: replay.refresh(day))
    try:
        store.transact(lambda: replay.run(cutoff))
        store.db.clock = lambda: cutoff.astimezone(UTC)
        refresh_all(ctx)
    finally:
        store.db.clock = utc_now
    return Demo(store, clinic["name"], staff, len(patients), len(items), admin)


def _set_meta(store: Store, clinic: dict) -> None:
    store.db.set_meta("timezone", clinic["timezone"])
    store.db.set_meta("clinic", clinic["name"])
    store.db.set_meta("pseudonym_secret", "demo-" + clinic["name"])
