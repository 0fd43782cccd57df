"""A hand-built clinic for the weekly summary, every timestamp set by hand.

The week under test is 2026-W43 (Monday 19 to Sunday 25 October 2026) in Europe/London, the week
the clocks go back (Sunday 25 October, 02:00 BST -> 01:00 GMT): it starts at 2026-10-18 23:00 UTC
and ends at 2026-10-26 00:00 UTC, 169 hours. 2026-W44 (26 October to 1 November) crosses a month end.

Rows are written through the store layer, not the services, so that no alert rule adds rows of
its own: alerts are raised, handled, escalated, reopened and auto-resolved with the alert table's
own methods, which write the audit rows the engine writes.

Who and what (ids, then what happens in W43; times are London wall-clock):
  P1 Aurelia Quennell  nurse1 natural  charting; temps every day; cycle from 5 Oct, lows 36.40 to 19 Oct,
                       highs 36.70 from 20 Oct: shift confirmed Thu 22 Oct. Positive hCG Sun 1 Nov (W44).
  P2 Bryony Tallisker  nurse1 timed    charting; temps Mon (logged 00:30, = Sunday in UTC), Tue, Sat, Sun;
                       Sat's 37.10 corrected to 36.71. A Sunday-18 temp logged Sun 23:30 (W42).
                       Paused Mon 26 Oct 00:30 GMT (W44).
  P3 Delphine Marchbank nurse2 insemination, not charting; LMP 21 Sep; serum hCG 120 Thu, 150 Sat; pregnant Fri.
  P4 Eulalia Fennimore nurse1 natural  charting; a Monday temp voided; discharged Tue.
  P5 Fenella Ruddock   nurse2 natural  charting; registered Wed; temps Thu to Sun (Sunday's logged 23:30 GMT).
  P6 Georgiana Blyth   nurse2 natural  charting; paused since 10 Oct; active again Thu.
  P7 Henrietta Cawley  nurse1 -> nurse2 Sat; natural, charting; shift confirmed 13 Oct (before the week);
                       temps every day but Thursday's, which was voided.
  P8 Isadora Penhallow no nurse; natural -> timed Sun 18 Oct 23:30 BST (W42); charting, no temps.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import UTC, date, datetime, timedelta
from zoneinfo import ZoneInfo

import pytest

from caseload.core.alerts import Candidate
from caseload.core.model import Actor, AlertState, Entry, Patient, PatientStatus, Plan, Role, Severity, Staff
from caseload.core.parse import parse_entry
from caseload.application.context import Context
from caseload.application.identity import os_account
from caseload.application.staff import init_store
from caseload.store import Store

LONDON = ZoneInfo("Europe/London")
TODAY = date(2026, 11, 10)
W43, W44 = "2026-W43", "2026-W44"
ACK, SNOOZE, RESOLVE = AlertState.ACKNOWLEDGED, AlertState.SNOOZED, AlertState.RESOLVED
PATIENTS = {
    "P1": ("Aurelia Quennell", date(1990, 3, 14), "nurse1", Plan.NATURAL, True),
    "P2": ("Bryony Tallisker", date(1988, 7, 2), "nurse1", Plan.TIMED, True),
    "P3": ("Delphine Marchbank", date(1985, 11, 23), "nurse2", Plan.INSEMINATION, False),
    "P4": ("Eulalia Fennimore", date(1993, 1, 30), "nurse1", Plan.NATURAL, True),
    "P5": ("Fenella Ruddock", date(1991, 5, 5), "nurse2", Plan.NATURAL, True),
    "P6": ("Georgiana Blyth", date(1989, 9, 9), "nurse2", Plan.NATURAL, True),
    "P7": ("Henrietta Cawley", date(1994, 12, 12), "nurse1", Plan.NATURAL, True),
    "P8": ("Isadora Penhallow", date(1987, 4, 4), None, Plan.NATURAL, True),
}


class Clock:
    """The store's clock, set by hand before each write."""

    def __init__(self) -> None:
        self.now = datetime(2026, 9, 1, 8, tzinfo=UTC)

    def __call__(self) -> datetime:
        return self.now


def local(text: str) -> datetime:
    """'2026-10-19 09:00' on the London wall clock, as a UTC instant."""
    return datetime.fromisoformat(text).replace(tzinfo=LONDON).astimezone(UTC)


class Clinic:
    def __init__(self, store: Store, clock: Clock):
        self.store, self.clock = store, clock
        self.admin = init_store(store, "admin1", "Ada Admin", os_account())
        self.actors = {"admin1": self.admin}
        for sid, role in (("phone1", Role.PHONE), ("nurse1", Role.NURSE), ("nurse2", Role.NURSE),
                          ("super1", Role.SUPERVISOR)):
            member = Staff(sid, f"Staff {sid}", role)
            store.transact(lambda m=member: store.staff.add(self.admin, m))
            self.actors[sid] = Actor(member, "tester")
        self.alerts: dict[str, int] = {}
        self.entry_ids: dict[str, int] = {}  # entries the expected tables name by id

    def context(self, staff: str = "super1", today: date = TODAY) -> Context:
        return Context(self.store, self.actors[staff], today)

    def _at(self, when: str) -> None:
        self.clock.now = local(when)

    def add_patient(self, when: str, by: str, pid: str) -> None:
        name, born, nurse, plan, charting = PATIENTS[pid]
        self._at(when)
        patient = Patient(pid, name, born, nurse, PatientStatus.ACTIVE, plan, self.clock.now.date(), charting)
        self.store.transact(lambda: self.store.patients.add(self.actors[by], patient))

    def update_patient(self, when: str, by: str, pid: str, **changes) -> None:
        self._at(when)
        before = self.store.patients.get(pid)
        self.store.transact(lambda: self.store.patients.update(self.actors[by], before, replace(before, **changes)))

    def log(self, when: str, by: str, pid: str, kind: str, value: str, day: str) -> Entry:
        self._at(when)
        parsed = parse_entry(kind, value, local(when).astimezone(LONDON).date(), on=day)
        return self.store.transact(lambda: self.store.entries.add(self.actors[by], pid, parsed))

    def amend(self, when: str, by: str, old: Entry, value: str, reason: str) -> Entry:
        self._at(when)
        parsed = parse_entry(old.kind.value, value, old.day, on=old.day.isoformat())
        actor = self.actors[by]
        return self.store.transact(
            lambda: self.store.entries.add(actor, old.patient_id, parsed, supersedes=old.id, amend_reason=reason))

    def void(self, when: str, by: str, entry: Entry, reason: str) -> None:
        self._at(when)
        self.store.transact(lambda: self.store.entries.void(self.actors[by], entry, reason))

    def temps(self, pid: str, first: str, last: str, celsius: str, at: str = "07:30", by: str = "phone1") -> None:
        day, end = date.fromisoformat(first), date.fromisoformat(last)
        while day <= end:
            self.log(f"{day.isoformat()} {at}", by, pid, "temp", celsius, day.isoformat())
            day += timedelta(days=1)

    def _candidate(self, pid: str, kind: str, severity: str, due: str, key: str) -> Candidate:
        return Candidate(pid, kind, key, Severity(severity), date.fromisoformat(due), f"{kind} for {pid}",
                         {"test": True}, "hand-built", "test fixture")

    def raise_alert(self, name: str, when: str, pid: str, kind: str, severity: str, due: str,
                    by: str = "phone1") -> None:
        """What the engine writes when a rule first finds something."""
        self._at(when)
        candidate = self._candidate(pid, kind, severity, due, f"{pid}:{kind}:{name}")
        raised_on = self.clock.now.astimezone(LONDON).date()
        self.alerts[name] = self.store.transact(
            lambda: self.store.alerts.raise_alert(self.actors[by], candidate, raised_on)).id

    def handle(self, name: str, when: str, by: str, state: AlertState, until: str | None = None) -> None:
        self._at(when)
        alert = self.store.alerts.get(self.alerts[name])
        snooze = date.fromisoformat(until) if until else None
        self.store.transact(lambda: self.store.alerts.handle(self.actors[by], alert, state, "seen", snooze))

    def engine(self, name: str, when: str, action: str, severity: str | None = None, by: str = "phone1") -> None:
        """The engine's own transitions, recorded against the staff member whose write triggered them."""
        self._at(when)
        table, actor, alert = self.store.alerts, self.actors[by], self.store.alerts.get(self.alerts[name])
        if action == "escalate":
            candidate = self._candidate(alert.patient_id, alert.kind, severity, alert.due.isoformat(), alert.key)
            self.store.transact(lambda: table.escalate(actor, alert, candidate))
        elif action == "reopen":
            self.store.transact(lambda: table.reopen(actor, alert))
        else:
            self.store.transact(lambda: table.auto_resolve(actor, alert, "condition ended"))


def build(store: Store, clock: Clock) -> Clinic:
    """The whole hand-made history, written in time order."""
    c = Clinic(store, clock)
    for pid in ("P1", "P2", "P3", "P4", "P6", "P7", "P8"):
        c.add_patient("2026-09-01 10:00", "admin1", pid)
    c.log("2026-09-21 09:00", "phone1", "P3", "bleed", "light", "2026-09-21")
    c.log("2026-09-25 08:00", "phone1", "P7", "bleed", "moderate", "2026-09-25")
    c.temps("P7", "2026-09-28", "2026-10-10", "36.30", at="07:45")
    c.raise_alert("A10", "2026-09-30 10:00", "P8", "amenorrhoea", "soon", "2026-10-07")
    c.raise_alert("A11", "2026-10-01 10:00", "P2", "prolonged-bleeding", "today", "2026-10-01")
    c.handle("A11", "2026-10-02 10:00", "nurse1", ACK)
    c.raise_alert("A12", "2026-10-03 10:00", "P1", "fever", "today", "2026-10-03")
    c.log("2026-10-05 08:00", "phone1", "P1", "bleed", "light", "2026-10-05")
    c.handle("A12", "2026-10-05 10:00", "nurse1", SNOOZE, until="2026-10-20")
    c.log("2026-10-06 08:00", "phone1", "P1", "bleed", "moderate", "2026-10-06")
    c.log("2026-10-07 08:00", "phone1", "P1", "bleed", "light", "2026-10-07")
    c.update_patient("2026-10-10 12:00", "nurse2", "P6", status=PatientStatus.PAUSED)
    c.temps("P7", "2026-10-11", "2026-10-18", "36.60", at="07:45")  # first high 11 Oct, confirmed 13 Oct
    c.temps("P1", "2026-10-08", "2026-10-18", "36.40")
    c.raise_alert("A9", "2026-10-18 23:30", "P7", "fever", "today", "2026-10-19")  # Sunday 22:30 UTC: W42
    c.update_patient("2026-10-18 23:30", "nurse1", "P8", plan=Plan.TIMED)  # W42
    p2_sunday = c.log("2026-10-18 23:30", "phone1", "P2", "temp", "36.50", "2026-10-18")  # W42
    assert p2_sunday.at == datetime(2026, 10, 18, 22, 30, tzinfo=UTC)

    # --- 2026-W43: Monday 19 October
    p2_monday = c.log("2026-10-19 00:30", "phone1", "P2", "temp", "36.50", "2026-10-19")
    assert p2_monday.at == datetime(2026, 10, 18, 23, 30, tzinfo=UTC)  # a Sunday in UTC
    c.handle("A9", "2026-10-19 08:00", "nurse1", RESOLVE)
    c.temps("P1", "2026-10-19", "2026-10-19", "36.40")
    c.temps("P7", "2026-10-19", "2026-10-19", "36.60", at="07:45")
    p4_monday = c.log("2026-10-19 08:00", "phone1", "P4", "temp", "36.55", "2026-10-19")
    c.void("2026-10-19 09:00", "nurse1", p4_monday, "logged for Bryony Tallisker by mistake")
    c.entry_ids["P4 void"] = p4_monday.id
    c.raise_alert("A1", "2026-10-19 09:00", "P1", "window-open", "today", "2026-10-19")
    c.raise_alert("A5", "2026-10-19 10:00", "P7", "short-luteal-phase", "soon", "2026-10-26")
    c.handle("A1", "2026-10-19 11:30", "nurse1", ACK)
    c.raise_alert("A15", "2026-10-19 13:00", "P2", "window-approaching", "soon", "2026-10-21")
    c.handle("A15", "2026-10-19 13:30", "nurse1", ACK)
    # Tuesday 20
    c.temps("P1", "2026-10-20", "2026-10-20", "36.70")
    c.temps("P2", "2026-10-20", "2026-10-20", "36.50")
    c.temps("P7", "2026-10-20", "2026-10-20", "36.60", at="07:45")
    c.engine("A12", "2026-10-20 09:00", "reopen")
    c.raise_alert("A2", "2026-10-20 10:00", "P2", "irregular-cycles", "soon", "2026-10-27")
    c.update_patient("2026-10-20 11:00", "nurse1", "P4", status=PatientStatus.DISCHARGED)
    c.handle("A5", "2026-10-20 12:00", "nurse1", ACK)
    c.handle("A12", "2026-10-20 13:00", "nurse1", RESOLVE)
    # Wednesday 21
    c.temps("P1", "2026-10-21", "2026-10-21", "36.70")
    c.temps("P7", "2026-10-21", "2026-10-21", "36.60", at="07:45")
    c.add_patient("2026-10-21 10:00", "phone1", "P5")
    c.handle("A2", "2026-10-21 10:00", "nurse2", SNOOZE, until="2026-10-28")
    c.raise_alert("A6", "2026-10-21 11:00", "P7", "no-thermal-shift", "soon", "2026-10-22")
    # Thursday 22
    c.temps("P1", "2026-10-22", "2026-10-22", "36.70")
    p7_thursday = c.log("2026-10-22 07:45", "phone1", "P7", "temp", "36.95", "2026-10-22")
    c.temps("P5", "2026-10-22", "2026-10-22", "36.45", at="08:00")
    c.void("2026-10-22 10:00", "nurse1", p7_thursday, "reading taken after getting up")
    c.entry_ids["P7 void"] = p7_thursday.id
    c.raise_alert("A8", "2026-10-22 10:00", "P8", "monophasic-cycle", "soon", "2026-10-29")
    c.raise_alert("A14", "2026-10-22 10:00", "P5", "window-approaching", "soon", "2026-10-24")
    c.engine("A1", "2026-10-22 11:00", "auto-resolve")
    c.engine("A6", "2026-10-22 11:00", "escalate", severity="today")
    c.update_patient("2026-10-22 12:00", "nurse2", "P6", status=PatientStatus.ACTIVE)
    c.handle("A14", "2026-10-22 14:00", "nurse2", ACK)
    c.log("2026-10-22 14:00", "nurse2", "P3", "hcg", "120", "2026-10-22")
    # Friday 23
    c.temps("P1", "2026-10-23", "2026-10-23", "36.70")
    c.temps("P7", "2026-10-23", "2026-10-23", "36.60", at="07:45")
    c.temps("P5", "2026-10-23", "2026-10-23", "36.45", at="08:00")
    c.raise_alert("A4", "2026-10-23 09:00", "P6", "window-approaching", "soon", "2026-10-24")
    c.update_patient("2026-10-23 11:00", "nurse2", "P3", status=PatientStatus.PREGNANT)
    c.raise_alert("A16", "2026-10-23 10:00", "P7", "sustained-high-temps", "today", "2026-10-23")
    c.handle("A5", "2026-10-23 13:00", "nurse1", RESOLVE)
    c.handle("A16", "2026-10-23 15:00", "nurse2", SNOOZE, until="2026-10-25")  # its day comes within the week
    c.log("2026-10-23 16:00", "super1", "P8", "note", "called twice, no answer", "2026-10-23")
    # Saturday 24
    c.temps("P1", "2026-10-24", "2026-10-24", "36.70")
    p2_saturday = c.log("2026-10-24 07:30", "phone1", "P2", "temp", "37.10", "2026-10-24")
    c.temps("P7", "2026-10-24", "2026-10-24", "36.60", at="07:45")
    c.temps("P5", "2026-10-24", "2026-10-24", "36.45", at="08:00")
    c.log("2026-10-24 09:00", "nurse2", "P3", "hcg", "150", "2026-10-24")
    c.raise_alert("A3", "2026-10-24 11:00", "P3", "hcg-rise-low", "urgent", "2026-10-24")
    corrected = c.amend("2026-10-24 11:00", "nurse1", p2_saturday, "36.71", "typo: 37.10 for 36.71")
    c.entry_ids["P2 correction"] = corrected.id
    c.handle("A3", "2026-10-24 12:00", "nurse2", ACK)
    c.update_patient("2026-10-24 15:00", "nurse1", "P7", nurse_id="nurse2")
    c.raise_alert("A7", "2026-10-24 20:00", "P8", "logging-gap", "info", "2026-10-25")
    c.handle("A6", "2026-10-24 20:00", "super1", ACK)
    # Sunday 25: the clocks go back at 02:00 BST
    c.temps("P1", "2026-10-25", "2026-10-25", "36.70")
    c.temps("P2", "2026-10-25", "2026-10-25", "36.50")
    c.temps("P7", "2026-10-25", "2026-10-25", "36.60", at="07:45")
    c.handle("A7", "2026-10-25 09:00", "nurse1", ACK)
    late = c.log("2026-10-25 23:30", "phone1", "P5", "temp", "36.45", "2026-10-25")
    assert late.at == datetime(2026, 10, 25, 23, 30, tzinfo=UTC)

    # --- 2026-W44, Monday 26 October 00:30 GMT: after the week
    c.raise_alert("A13", "2026-10-26 00:30", "P1", "period-overdue", "today", "2026-10-26")
    c.log("2026-10-26 00:30", "phone1", "P2", "temp", "36.50", "2026-10-26")
    c.update_patient("2026-10-26 00:30", "nurse1", "P2", status=PatientStatus.PAUSED)
    c.log("2026-11-01 09:00", "nurse1", "P1", "hcg", "positive", "2026-11-01")
    return c


@pytest.fixture(scope="module")
def clinic(tmp_path_factory) -> Clinic:
    clock = Clock()
    store = Store(tmp_path_factory.mktemp("clinic") / "clinic.db", clock=clock)
    built = build(store, clock)
    yield built
    store.close()


@pytest.fixture
def fresh_clinic(tmp_path) -> Clinic:
    """A clinic of its own, for tests that write (exports add audit rows)."""
    clock = Clock()
    store = Store(tmp_path / "clinic.db", clock=clock)
    built = build(store, clock)
    yield built
    store.close()
